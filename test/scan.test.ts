// Two-parameter scans of the return map's fixed points (stability-region maps), their shards, and
// the `pronk scan` command. Every check value names its source beside it.
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { jsonText } from '../src/core/json-output.js';
import { pronk } from './pronk-cli.js';
import { apexReturnMap } from '../src/core/analysis/return-map.js';
import { axisValues, finishScan, parseAxisOption, scan, scanShard, type ScanCell, type ScanOptions } from '../src/core/analysis/scan.js';
import { InputError } from '../src/core/errors.js';
import { parseScenario } from '../src/core/scenario.js';
import { joinShards, type PartialResult } from '../src/core/shard.js';
import { closeWorkerPool, runBatchParallel } from '../src/worker/pool.js';
import { scenario } from './helpers.js';

afterAll(() => closeWorkerPool());

const axis = (path: string, lo: number, hi: number, n: number) => ({ path, lo, hi, n });

// Seyfarth, Geyer, Günther, Blickhan 2002 (J. Biomech. 35(5):649-655): human-like body, energy of 5 m/s at 1 m
const seyfarth = scenario();
const aroundSeyfarth: ScanOptions = {
  x: axis('policy.angle.attack_deg', 66, 70, 5),
  y: axis('body.leg_stiffness_N_per_m', 18000, 22000, 3),
  samples: 101,
};

describe('stability map, attack angle × leg stiffness (Seyfarth et al. 2002)', () => {
  let result: Awaited<ReturnType<typeof scan>>;
  const get = async () => (result ??= await scan(seyfarth, aroundSeyfarth));

  it('has stable cells around 68° and 20 kN/m, each the map’s own fixed point', async () => {
    const r = await get();
    expect(r.x.values).toEqual([66, 67, 68, 69, 70]);
    expect(r.y.values).toEqual([18000, 20000, 22000]);
    expect(r.cells).toHaveLength(15);
    const at = (x: number, y: number) => r.cells.find((c) => c.x === x && c.y === y)!;
    // row-major, y outer
    expect(r.cells[1 * 5 + 2]).toBe(at(68, 20000));
    const cell = at(68, 20000);
    // published: a stable fixed point at 68°, 20 kN/m (Seyfarth et al. 2002)
    expect(cell.class).toBe('stable');
    // the same analysis as `map`: identical to apexReturnMap's stable fixed point, bit for bit
    const map = await apexReturnMap(seyfarth, { samples: 101, iterations: 0 });
    const stable = map.fixed_points.find((f) => f.stable)!;
    expect(cell.stable_apex_height_m).toBe(stable.apex_height_m);
    expect(cell.stable_slope).toBe(stable.slope);
    // published: stable self-stabilizing running needs the angle tuned to the stiffness, so the
    // stable band is narrow: a neighbour of 68°/20 kN/m in the grid is stable too, not all are
    const counts = r.counts;
    expect(counts.stable).toBeGreaterThanOrEqual(2);
    expect(counts.stable).toBeLessThan(15);
    expect(counts.none + counts.unstable + counts.stable).toBe(15);
    expect(at(67, 20000).class === 'stable' || at(69, 20000).class === 'stable' || at(68, 18000).class === 'stable' || at(68, 22000).class === 'stable').toBe(true);
    // the energy is the scenario's in every cell (law: E = m g y0 + m v0^2 / 2)
    expect(r.energy_J).toBeCloseTo(80 * 9.81 + 0.5 * 80 * 25, 9);
  });

  it('shards 1/3, 2/3, 3/3 joined and finished equal the one-machine result exactly', async () => {
    const one = await get();
    const parts: { source: string; partial: PartialResult<ScanCell> }[] = [];
    for (const index of [3, 1, 2]) {
      const partial = await scanShard(seyfarth, aroundSeyfarth, { index, count: 3 });
      expect(partial.command).toBe('scan');
      expect(partial.shard).toMatchObject({ index, count: 3, total: 15 });
      // through JSON, as a file would carry it
      parts.push({ source: `shard${index}.json`, partial: JSON.parse(JSON.stringify(partial)) });
    }
    const joined = joinShards(parts);
    const merged = await finishScan(joined.scenario, joined.options, joined.rows);
    expect(JSON.stringify(merged)).toBe(JSON.stringify(one));
    expect(merged).toEqual(one);
  });

  it('two workers give the same result as the in-process engine', async () => {
    const parallel = await scan(seyfarth, aroundSeyfarth, { runBatch: (req) => runBatchParallel(req, { workers: 2, chunkRollouts: 97 }) });
    expect(JSON.stringify(parallel)).toBe(JSON.stringify(await get()));
  });
});

describe('Seyfarth, Geyer, Herr 2003 at the energy of 3 m/s (1 m apex)', () => {
  const at3 = scenario({ start: { apex_height_m: 1, forward_speed_m_per_s: 3 } });

  it('no fixed attack angle from 50° to 85° gives a stable fixed point', async () => {
    // published: no stable fixed point without swing-leg retraction at 3 m/s
    const r = await scan(at3, { x: axis('policy.angle.attack_deg', 50, 85, 36), y: axis('body.leg_stiffness_N_per_m', 20000, 20000, 1), samples: 101 });
    expect(r.cells).toHaveLength(36);
    expect(r.counts.stable).toBe(0);
    expect(r.counts.unstable).toBeGreaterThan(0); // the unstable branch exists at steep angles
  });

  it('retraction at 50 °/s does, for some attack at apex; at rate 0 none does', async () => {
    // published: swing-leg retraction (rates 0, 25, 50 °/s studied) stabilizes running at 3 m/s
    const retraction = scenario({ start: { apex_height_m: 1, forward_speed_m_per_s: 3 }, policy: { angle: { kind: 'retraction', attack_at_apex_deg: 65, rate_deg_per_s: 0 } } });
    const r = await scan(retraction, { x: axis('policy.angle.attack_at_apex_deg', 62, 74, 7), y: axis('policy.angle.rate_deg_per_s', 0, 50, 2), samples: 101 });
    const rate0 = r.cells.filter((c) => c.y === 0);
    const rate50 = r.cells.filter((c) => c.y === 50);
    expect(rate0.every((c) => c.class !== 'stable')).toBe(true);
    expect(rate50.some((c) => c.class === 'stable')).toBe(true);
    for (const c of rate50.filter((cell) => cell.class === 'stable')) expect(Math.abs(c.stable_slope!)).toBeLessThan(1);
  });
});

describe("every cell is the map of the scenario with that cell's values, at that cell's own start energy", () => {
  // The cell's scenario built here by hand (not by the scan's own grid code): the base input with
  // the two fields set, validated. The map of that scenario is the truth each cell must equal.
  const cellScenario = (base: Record<string, any>, xPath: string, x: number, yPath: string, y: number) => {
    const raw = structuredClone(base);
    for (const [path, value] of [[xPath, x], [yPath, y]] as const) {
      const keys = path.split('.');
      let node = raw;
      for (const key of keys.slice(0, -1)) node = node[key];
      node[keys[keys.length - 1]] = value;
    }
    return parseScenario(raw);
  };
  const base = JSON.parse(JSON.stringify(seyfarth)) as Record<string, any>;

  it.each([
    // the figure of Seyfarth, Geyer & Herr 2003: attack angle against forward speed
    { name: 'attack angle x forward speed', x: axis('policy.angle.attack_deg', 66, 70, 3), y: axis('start.forward_speed_m_per_s', 4, 6, 3) },
    { name: 'start apex height x mass', x: axis('start.apex_height_m', 0.98, 1.06, 2), y: axis('body.mass_kg', 70, 90, 2) },
    { name: 'gravity x leg stiffness', x: axis('body.gravity_m_per_s2', 9, 10.5, 2), y: axis('body.leg_stiffness_N_per_m', 18000, 22000, 2) },
  ])('$name', async ({ x, y }) => {
    const [xPath, yPath] = [x.path, y.path];
    const r = await scan(seyfarth, { x, y, samples: 51 });
    const energies = new Set<number>();
    for (const cell of r.cells) {
      const own = cellScenario(base, xPath, cell.x, yPath, cell.y);
      const { body, start } = own;
      // law: E = m g y0 + m v0^2 / 2 of the cell's own start
      const energy = body.mass_kg * body.gravity_m_per_s2 * start.apex_height_m + 0.5 * body.mass_kg * start.forward_speed_m_per_s ** 2;
      expect(cell.energy_J).toBeCloseTo(energy, 9);
      energies.add(cell.energy_J);
      const map = await apexReturnMap(own, { samples: 51, iterations: 0 });
      expect(map.energy_J).toBe(cell.energy_J);
      // the same fixed points, bit for bit, and so the same class; the slopes within their
      // error estimates (map refines the domain's top edge first, which may shorten its step)
      expect(cell.fixed_points.map((f) => f.apex_height_m)).toEqual(map.fixed_points.map((f) => f.apex_height_m));
      cell.fixed_points.forEach((f, i) => {
        const m = map.fixed_points[i];
        expect(Math.abs(f.slope! - m.slope)).toBeLessThanOrEqual(2 * (f.slope_error! + m.slope_error) + 1e-9);
        expect(f.stable).toBe(m.stable);
      });
      const stable = map.fixed_points.find((f) => f.stable);
      expect(cell.class).toBe(stable ? 'stable' : map.fixed_points.length ? 'unstable' : 'none');
      expect(cell.stable_apex_height_m).toBe(stable ? stable.apex_height_m : null);
      expect(cell.domain_empty).toBe(map.domain.empty);
    }
    // every axis here changes the start energy, so the cells do not share one
    expect(energies.size).toBeGreaterThan(1);
    expect(r.cell_energy_range_J).toEqual([Math.min(...energies), Math.max(...energies)]);
  });

  it('the rows of an angle x speed scan differ from each other (one energy per row)', async () => {
    const r = await scan(seyfarth, { x: axis('policy.angle.attack_deg', 66, 70, 3), y: axis('start.forward_speed_m_per_s', 4, 6, 3), samples: 51 });
    const row = (iy: number) => JSON.stringify(r.cells.slice(iy * 3, iy * 3 + 3).map((c) => c.fixed_points));
    expect(new Set([row(0), row(1), row(2)]).size).toBe(3);
  });
});

describe('bad scan input is an InputError naming the option', () => {
  const run = (options: Partial<ScanOptions> & Record<string, unknown>) => scan(seyfarth, { ...aroundSeyfarth, ...options } as ScanOptions).catch((e: unknown) => e);
  const expectIssue = (error: unknown, option: string, text: RegExp) => {
    expect(error).toBeInstanceOf(InputError);
    const issue = (error as InputError).issues[0];
    expect(issue.path).toBe(option);
    expect((error as InputError).message).toMatch(text);
  };

  it('empty grid, inverted range, malformed axis', () => {
    const bad = (text: string, why: RegExp) => {
      let error: unknown;
      try {
        parseAxisOption(text, '--x');
      } catch (e) {
        error = e;
      }
      expectIssue(error, '--x', why);
    };
    bad('policy.angle.attack_deg:60:80:0', /n must be an integer >= 1/);
    bad('policy.angle.attack_deg:80:60:5', /lo \(80\) is above hi \(60\)/);
    bad('policy.angle.attack_deg:60:80', /PATH:lo:hi:n/);
    bad('policy.angle.attack_deg:60:eighty:5', /finite numbers/);
    bad('policy.angle.attack_deg:60:60:3', /use n = 1/);
    expect(axisValues(parseAxisOption('a:1:2:3', '--x'))).toEqual([1, 1.5, 2]);
  });

  it('the same PATH on both axes is refused, naming --y', async () => {
    expectIssue(await run({ x: axis('policy.angle.attack_deg', 60, 70, 2), y: axis('policy.angle.attack_deg', 62, 64, 2) }), '--y', /a PATH other than --x's \(policy\.angle\.attack_deg\)/);
    // one field, two spellings
    const steps = scenario({ terrain: { kind: 'steps', ground_heights_m: [0, 0.01] } });
    const error = await scan(steps, { x: axis('terrain.ground_heights_m[1]', 0, 0.01, 2), y: axis('terrain.ground_heights_m.1', 0, 0.01, 2), samples: 11 }).catch((e: unknown) => e);
    expectIssue(error, '--y', /other than --x's/);
  });

  it('unknown path, non-numeric path, a cell whose scenario is invalid', async () => {
    expectIssue(await run({ x: axis('policy.angle.atack_deg', 60, 70, 2) }), '--x', /not in the scenario \(did you mean policy\.angle\.attack_deg\?\)/);
    expectIssue(await run({ y: axis('policy.angle.kind', 1, 2, 2) }), '--y', /holds "fixed"/);
    expectIssue(await run({ y: axis('body.__proto__', 1, 2, 2) }), '--y', /not in the scenario/);
    // attack angles above 90° are not angles of attack: the cell scenario fails validation
    expectIssue(await run({ x: axis('policy.angle.attack_deg', 88, 95, 2) }), '--x', /policy\.angle\.attack_deg = 95.*expected an angle in \(0, 90\]/);
    // at 90° the 1 m leg no longer fits under the 1 m start apex (a cross-field rule): still --x's value
    expectIssue(await run({ x: axis('policy.angle.attack_deg', 80, 100, 3) }), '--x', /policy\.angle\.attack_deg = 90.*start\.apex_height_m: expected > 1 m/);
  });
});

// ---------------------------------------------------------------------------------------------
// The command.

describe('pronk scan', () => {
  const directory = mkdtempSync(join(tmpdir(), 'pronk-scan-'));
  const file = join(directory, 'human.json');
  writeFileSync(file, JSON.stringify(seyfarth));
  const grid = ['--x', 'policy.angle.attack_deg:66:70:5', '--y', 'body.leg_stiffness_N_per_m:18000:22000:3', '--samples', '101', '--workers', '1'];

  it('--json gives the axes, row-major cells and counts; --shard writes partials that join to it', async () => {
    const run = await pronk(['scan', file, ...grid, '--json']);
    expect(run.code).toBe(0);
    const r = JSON.parse(run.stdout);
    expect(r.x).toEqual({ path: 'policy.angle.attack_deg', values: [66, 67, 68, 69, 70] });
    expect(r.y.path).toBe('body.leg_stiffness_N_per_m');
    expect(r.order).toMatch(/y outer/);
    expect(Object.keys(r.counts).sort()).toEqual(['none', 'stable', 'unstable']);
    expect(r.cells[7]).toMatchObject({ x: 68, y: 20000, class: 'stable' });
    const parts = [];
    for (const index of [1, 2, 3]) {
      const out = join(directory, `part${index}.json`);
      const shard = await pronk(['scan', file, ...grid, '--shard', `${index}/3`, '--out', out]);
      expect(shard.code).toBe(0);
      expect(shard.stdout).toBe('');
      parts.push({ source: out, partial: JSON.parse(readFileSync(out, 'utf8')) });
    }
    const joined = joinShards(parts);
    const merged = await finishScan(joined.scenario, joined.options, joined.rows);
    expect(jsonText('scan', merged)).toBe(run.stdout);
  });

  it('prints the stability map as characters', async () => {
    const run = await pronk(['scan', file, ...grid]);
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/Stability map \(# stable, o unstable only, \. no fixed point\)/);
    expect(run.stdout).toMatch(/ 20000 \|[#o.]{2}#[#o.]{2}\n/);
    expect(run.stdout).toContain('Caution:');
  });

  it('--help exits 0; bad input and usage exit 2 with one line naming the option', async () => {
    const help = await pronk(['scan', '--help']);
    expect(help.code).toBe(0);
    expect(help.stdout).toContain('Usage: pronk scan');
    for (const [args, text] of [
      [['--x', 'policy.angle.attack_deg:60:80:0', '--y', 'body.leg_stiffness_N_per_m:1:2:2'], /--x: expected PATH:lo:hi:n/],
      [['--x', 'policy.angle.attack_deg:80:60:3', '--y', 'body.leg_stiffness_N_per_m:1:2:2'], /--x: .*lo \(80\) is above hi \(60\)/],
      [['--x', 'policy.angle.attack_deg:60:80:3', '--y', 'body.stiffness:1:2:2'], /--y: .*not in the scenario/],
      [['--x', 'policy.angle.kind:60:80:3', '--y', 'body.leg_stiffness_N_per_m:1:2:2'], /--x: .*holds "fixed"/],
      [['--x', 'policy.angle.attack_deg:60:80:3'], /--y PATH:LO:HI:N is required/],
      [['--x', 'policy.angle.attack_deg:60:80:3', '--y', 'policy.angle.attack_deg:60:70:2'], /--y: expected a PATH other than --x's \(policy\.angle\.attack_deg\)/],
      [['--x', 'policy.angle.attack_deg:60:80:3', '--y', 'body.leg_stiffness_N_per_m:1:2:2', '--workers', '0'], /--workers/],
      [['--x', 'policy.angle.attack_deg:60:80:3', '--y', 'body.leg_stiffness_N_per_m:1:2:2', '--shard', '4/3'], /--shard/],
    ] as const) {
      const run = await pronk(['scan', file, ...args]);
      expect(run.code).toBe(2);
      expect(run.stderr).toMatch(text);
      expect(run.stderr.split('\n').filter(Boolean)).toHaveLength(1);
    }
  });
});
