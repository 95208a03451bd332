// The README's examples are real, so it cannot go stale: its JSON blocks validate (as scenarios or
// studies, and against the JSON Schemas), its script runs, and every `pronk` command line in its
// shell blocks runs, in README order, in one temporary folder that holds the README's own files:
// each JSON block saved under the file names the sentence before it gives ("save it as
// `my-robot.json`"),
// each later command reading what an earlier one wrote. A command line must exit 0; with --json
// (and no --out) its stdout must be JSON; the files it names with --out and --plot must appear.
//
// Not run here: set-up lines (`npm ...`, `module load`, `cd`, `command -v`; the CI runs the npm
// ones), and scheduler scripts and submissions (blocks starting with `#!`, sbatch and kubectl
// lines), which test/slurm-recipe.test.ts runs on a one-node Slurm.
// `npx pronk` runs as `pronk`.

import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Ajv2020 } from 'ajv/dist/2020.js';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { jsonSchema } from '../src/core/json-schemas.js';
import { parseStudy, readStudyFile } from '../src/core/optimize/study.js';
import { parseScenario } from '../src/core/scenario.js';
import { simulate } from '../src/core/simulate.js';

const root = fileURLToPath(new URL('../', import.meta.url));
const readme = readFileSync(join(root, 'README.md'), 'utf8');
const built = existsSync(join(root, 'dist/src/cli/main.js')) && existsSync(join(root, 'dist/build/pronk.wasm'));

interface Block {
  language: string;
  text: string;
  /** The file names the paragraph right before the block saves it under: "as `NAME`", "call it `NAME`". */
  names: string[];
}

function blocks(markdown: string): Block[] {
  const out: Block[] = [];
  for (const match of markdown.matchAll(/```(\w*)\n([\s\S]*?)```/g)) {
    const before = markdown.slice(0, match.index).trimEnd();
    const paragraph = before.slice(before.lastIndexOf('\n\n') + 2);
    const names = [...paragraph.matchAll(/\b(?:as|it)\s+`([\w.-]+\.(?:json|mjs|js))`/g)].map((m) => m[1]);
    out.push({ language: match[1], text: match[2], names: [...new Set(names)] });
  }
  return out;
}

const all = blocks(readme);
const jsonBlocks = all.filter((b) => b.language === 'json');
const shellBlocks = all.filter((b) => b.language === 'sh');
const scripts = all.filter((b) => b.language === 'js');
const scriptName = (block: Block) => block.names.find((n) => /\.m?js$/.test(n)) ?? 'unnamed.mjs';
const isStudy = (value: Record<string, unknown>) => 'free_parameters' in value;

// Shell lines of the README: continuations joined, comments dropped.
function shellLines(text: string): string[] {
  return text
    .replace(/\\\n\s*/g, ' ')
    .split('\n')
    .map((line) => line.replace(/\s{2,}#.*$/, '').trim())
    .filter((line) => line !== '' && !line.startsWith('#'));
}

// set-up (npm, an environment module, a folder, where pronk is) and scheduler submissions
const SKIPPED = /^(npm |module load |cd |command -v |sbatch |jobid=\$\(sbatch |kubectl |bash \.ci\/run|npx vitest |npx asc )/;
const commands: string[] = [];
const skipped: string[] = [];
const unknown: string[] = [];
for (const block of shellBlocks) {
  if (block.text.startsWith('#!')) {
    skipped.push(...shellLines(block.text));
    continue;
  }
  for (const line of shellLines(block.text)) {
    const command = line.replace(/^npx pronk /, 'pronk ');
    if (command.startsWith('pronk ') || command.startsWith('mkdir -p ')) commands.push(command);
    else if (SKIPPED.test(line)) skipped.push(line);
    else unknown.push(line);
  }
}

describe('README: set-up and structure', () => {
  it('the first paragraph states the job and the next blocks are the two set-up commands', () => {
    const paragraphs = readme.split(/\n\n/);
    expect(paragraphs[1]).toMatch(/spring-loaded\s+inverted\s+pendulum/);
    expect(shellBlocks[0].text.trim()).toBe('npm ci && npm link && npm start');
    expect(shellBlocks[1].text.trim()).toBe('npm ci && npm test');
  });
  it('every shell line is a pronk command, a folder to make, or a set-up or cluster line run elsewhere', () => {
    expect(unknown).toEqual([]);
    expect(commands.filter((c) => c.startsWith('pronk ')).length).toBeGreaterThan(15);
  });
  it('tells the reader to use pronk, never npx pronk, outside the cluster section (whose scripts are tested with it)', () => {
    const cluster = readme.indexOf('## Running sweeps on a cluster');
    const next = readme.indexOf('\n## ', cluster + 1);
    const outside = readme.slice(0, cluster) + readme.slice(next);
    expect(outside.match(/npx pronk/g)).toHaveLength(1); // the sentence that says not to
    expect(outside).toMatch(/never\s+`npx pronk`/);
  });
});

describe('README: JSON blocks', () => {
  const ajv = new Ajv2020({ strict: true });
  const scenarioSchema = ajv.compile(jsonSchema('scenario'));
  const studySchema = ajv.compile(jsonSchema('study'));
  it('has a scenario and a study example, each named by the sentence before it', () => {
    const values = jsonBlocks.map((b) => JSON.parse(b.text));
    expect(values.filter((v) => !isStudy(v)).length).toBeGreaterThan(0);
    expect(values.filter(isStudy).length).toBeGreaterThan(0);
    for (const block of jsonBlocks.filter((b) => !JSON.parse(b.text).$schema)) {
      expect(block.names.filter((n) => n.endsWith('.json')).length, block.text).toBeGreaterThan(0);
    }
    for (const block of scripts) expect(scriptName(block)).not.toBe('unnamed.mjs');
  });
  for (const [i, block] of jsonBlocks.entries()) {
    const value = JSON.parse(block.text);
    if (isStudy(value)) {
      it(`JSON example ${i + 1} (${block.names.join(', ')}) is a study that validates, also against its JSON Schema`, () => {
        expect(studySchema(value), JSON.stringify(studySchema.errors)).toBe(true);
        if (!value.scenario_file) expect(() => parseStudy(value)).not.toThrow();
      });
    } else {
      it(`JSON example ${i + 1} (${block.names.join(', ') || 'unnamed'}) is a scenario that validates, also against its JSON Schema, and runs`, async () => {
        expect(scenarioSchema(value), JSON.stringify(scenarioSchema.errors)).toBe(true);
        const r = await simulate(parseScenario(value));
        expect(r.strides.length).toBeGreaterThan(0);
      });
    }
  }
});

describe.skipIf(!built)('README: every pronk command line runs, in order, with the README\'s files', () => {
  let folder = '';
  let env: NodeJS.ProcessEnv = {};

  beforeAll(() => {
    folder = mkdtempSync(join(tmpdir(), 'pronk-readme-'));
    for (const block of jsonBlocks) for (const name of block.names.filter((n) => n.endsWith('.json'))) writeFileSync(join(folder, name), block.text);
    for (const block of scripts) writeFileSync(join(folder, scriptName(block)), block.text);
    // `pronk` as `npm link` puts it on the PATH, and `pronk` importable as `npm link pronk` makes it
    mkdirSync(join(folder, '.bin'));
    symlinkSync(join(root, 'bin', 'pronk.js'), join(folder, '.bin', 'pronk'));
    mkdirSync(join(folder, 'node_modules'));
    symlinkSync(root, join(folder, 'node_modules', 'pronk'), 'dir');
    // the README links the demo files in scenarios/ (relative to the checkout)
    mkdirSync(join(folder, 'scenarios'));
    for (const name of ['demo.json', 'demo-study.json', 'demo-hexapod.json']) writeFileSync(join(folder, 'scenarios', name), readFileSync(join(root, 'scenarios', name)));
    env = { ...process.env, PATH: `${join(folder, '.bin')}:${process.env.PATH}` };
    for (const key of Object.keys(env)) if (key.startsWith('VITEST')) delete env[key];
  });
  afterAll(() => {
    if (folder) rmSync(folder, { recursive: true, force: true });
  });

  it('the study example reads its scenario_file from the README\'s scenario', async () => {
    const study = jsonBlocks.find((b) => isStudy(JSON.parse(b.text)))!;
    await expect(readStudyFile(join(folder, study.names[0]))).resolves.toHaveProperty('scenario.body');
  });

  for (const command of commands) {
    it(command, () => {
      const run = spawnSync('bash', ['-c', command], { cwd: folder, env, encoding: 'utf8', maxBuffer: 256 << 20, timeout: 600_000 });
      const why = `exit ${run.status}\nstderr: ${run.stderr.slice(0, 2000)}`;
      expect(run.status, why).toBe(0);
      const words = command.split(/\s+/);
      const option = (name: string) => {
        const at = words.indexOf(name);
        return at >= 0 ? words[at + 1] : undefined;
      };
      if (words.includes('--json') && option('--out') === undefined) expect(() => JSON.parse(run.stdout)).not.toThrow();
      for (const name of ['--out', '--plot']) {
        const file = option(name);
        if (file) expect(existsSync(join(folder, file)), `${name} ${file}`).toBe(true);
      }
      if (option('--plot')) expect(readFileSync(join(folder, option('--plot')!), 'utf8')).toMatch(/^<svg|^<\?xml/);
    }, 600_000);
  }

  for (const block of scripts) {
    it(`the script ${scriptName(block)} runs against the package`, () => {
      expect(block.text).toMatch(/from 'pronk'/);
      const run = spawnSync(process.execPath, [scriptName(block)], { cwd: folder, env, encoding: 'utf8', timeout: 120_000 });
      expect(run.status, run.stderr).toBe(0);
      expect(run.stdout).toMatch(/^completed/);
      expect(run.stdout).toMatch(/fixed point .* m, stable: true/);
    }, 120_000);
  }

  it('skips only set-up and cluster-scheduler lines', () => {
    for (const line of skipped) expect(line).toMatch(/^(npm |module load |cd |command -v |sbatch |jobid=\$\(sbatch |kubectl |bash |npx |pronk .*\$\{?SLURM)/);
  });
});
