// Input files — scenario, study, result and partial files — are refused above a documented size
// before they are read, and nesting beyond any of Pronk's files is refused before JSON.parse: a
// 50 MB file of "[" took 2.8 GB and 6 s to be refused, without a position.
import { closeSync, mkdtempSync, openSync, symlinkSync, writeFileSync, ftruncateSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { pronk } from './pronk-cli.js';
import { InputError } from '../src/core/errors.js';
import { MAX_INPUT_FILE_BYTES, MAX_PARTIAL_FILE_BYTES, checkInputSize, readInputFile } from '../src/core/input-file.js';
import { MAX_JSON_DEPTH, parseJson } from '../src/core/scenario.js';

const directory = mkdtempSync(join(tmpdir(), 'pronk-input-'));
const at = (name: string) => join(directory, name);

// A sparse file of `bytes` bytes: its size is on disk at once, its blocks never written.
function sparse(name: string, bytes: number): string {
  const fd = openSync(at(name), 'w');
  ftruncateSync(fd, bytes);
  closeSync(fd);
  return at(name);
}

describe('the size limit', () => {
  it('is 64 MiB, refused above it naming the size found and the limit', () => {
    expect(MAX_INPUT_FILE_BYTES).toBe(64 * 1024 * 1024);
    expect(() => checkInputSize(MAX_INPUT_FILE_BYTES, 'a.json', 'scenario file')).not.toThrow();
    expect(() => checkInputSize(MAX_INPUT_FILE_BYTES + 1, 'a.json', 'scenario file')).toThrow(
      'a.json: the scenario file is 64 MiB (67108865 bytes), over the 64 MiB (67108864 bytes) limit for input files',
    );
  });

  // every command that reads a file, with each kind of file it reads
  const cases: [string, (file: string) => string[]][] = [
    ['scenario file', (file) => ['simulate', file]],
    ['scenario file', (file) => ['basin', file, '--heights', '1:1.1:2', '--speeds', '4:5:2']],
    ['scenario file', (file) => ['deadbeat', file, '--ground=-0.01:0.01']],
    ['study file', (file) => ['optimize', file]],
    ['result or scenario file', (file) => ['export', file, '--format', 'json', '--out', at('policy.json')]],
  ];
  for (const [kind, args] of cases) {
    it(`${args('F')[0]}: a ${kind} of 80 MiB is exit 2 before it is read`, async () => {
      const file = sparse(`big-${args('F')[0]}.json`, 80 * 1024 * 1024);
      const r = await pronk(args(file));
      expect(r.code).toBe(2);
      expect(r.stderr).toBe(`${file}: the ${kind} is 80 MiB (83886080 bytes), over the 64 MiB (67108864 bytes) limit for input files\n`);
    });
  }

  it('merge: a partial result of 600 MiB is exit 2 before it is read (partials may hold 500 MiB)', async () => {
    expect(MAX_PARTIAL_FILE_BYTES).toBe(500 * 1024 * 1024); // under V8's longest string, 2^29 - 24 characters (from memory)
    const file = sparse('big-partial.json', 600 * 1024 * 1024);
    const r = await pronk(['merge', file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`${file}: the partial result is 600 MiB (629145600 bytes), over the 500 MiB (524288000 bytes) limit for partial results\n`);
  });

  it('robustness --shard refuses a shard whose partial result could outgrow what merge reads', async () => {
    const r = await pronk(['robustness', '--sigma', '0.01', '--rollouts', '10000000', '--shard', '1/2', '--out', at('never.json')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--shard: expected shards of at most 2048000 rollouts .*at least 5 shards of this run, found 5000000 rollouts in shard 1\/2/);
  });

  it('a study whose scenario_file is too large names the scenario file', async () => {
    sparse('huge-scenario.json', 70 * 1024 * 1024);
    writeFileSync(at('study.json'), JSON.stringify({ scenario_file: 'huge-scenario.json', free_parameters: [], objective: { terms: [] } }));
    const r = await pronk(['optimize', at('study.json')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(`${at('huge-scenario.json')}: the scenario file is 70 MiB`);
  });
});

describe('nesting and other unreadable files', () => {
  it('50 MB of "[" is refused at the bracket that nests too deep, before JSON.parse sees it (was 6 s and 2.8 GB)', async () => {
    writeFileSync(at('brackets.json'), '['.repeat(50e6));
    const r = await pronk(['simulate', at('brackets.json')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(
      `${at('brackets.json')}: invalid input at line 1, column ${MAX_JSON_DEPTH + 1}: more than ${MAX_JSON_DEPTH} levels of nested [ and { (Pronk's files nest fewer than 10)\n`,
    );
  });

  it('brackets inside strings do not count, and 64 levels still parse', () => {
    const deep = `${'['.repeat(MAX_JSON_DEPTH)}"[[[{{{"${']'.repeat(MAX_JSON_DEPTH)}`;
    expect(() => parseJson(deep)).not.toThrow();
    expect(() => parseJson(`[${deep}]`, 'x.json')).toThrow(/x\.json: invalid input at line 1, column 65: more than 64 levels/);
    expect(() => parseJson('{"a": "\\"[[[[", "b": [1, 2]}')).not.toThrow();
  });

  it('malformed JSON names its line and column', async () => {
    writeFileSync(at('trailing.json'), '{\n  "strides": 3,\n}\n');
    const r = await pronk(['simulate', at('trailing.json')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/trailing\.json: invalid JSON at line 3, column 1: trailing comma/);
  });

  it('a loop of symbolic links, a directory and a missing file are each named', async () => {
    symlinkSync(at('loop-b.json'), at('loop-a.json'));
    symlinkSync(at('loop-a.json'), at('loop-b.json'));
    mkdirSync(at('folder.json'));
    for (const [file, why] of [
      [at('loop-a.json'), 'a loop of symbolic links'],
      [at('folder.json'), 'it is a directory'],
      [at('none.json'), 'no such file'],
    ]) {
      const error = await readInputFile(file, 'scenario file').catch((e: unknown) => e);
      expect(error).toBeInstanceOf(InputError);
      expect((error as InputError).message).toBe(`${file}: cannot read the file (${why})`);
    }
  });
});
