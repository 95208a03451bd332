// Runs the regression cases (cases.mjs) in a fresh folder and returns each output, with the
// values of timing fields masked. Used by test/regression.test.ts and scripts/update-goldens.mjs.

import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { CASES, SCENARIOS, TIMING_FIELDS } from './cases.mjs';

const BIN = fileURLToPath(new URL('../../bin/pronk.js', import.meta.url));

/** Replaces the value of every timing field (a number, string or flat object) by "<masked>". */
export function maskTimings(text) {
  let out = text;
  for (const field of TIMING_FIELDS) {
    const key = `"${field}"`;
    out = out.replace(new RegExp(`${key}(\\s*):(\\s*)("[^"]*"|-?[0-9.eE+-]+|\\{[^{}]*\\})`, 'g'), `${key}$1:$2"<masked>"`);
  }
  // Dates anywhere (file headers, "created"), and the SHA-256 of a result file (which holds its
  // own creation date; the file itself is compared).
  out = out.replace(/\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?Z/g, '<date>');
  out = out.replace(/("result_sha256"\s*:\s*"|result SHA-256\s+)[0-9a-f]{64}/g, '$1<sha256>');
  return out;
}

/** Runs every case; returns [{ name, outputs: { [label]: text } }], masking timings. */
export function runCases({ only } = {}) {
  const dir = mkdtempSync(join(tmpdir(), 'pronk-regression-'));
  try {
    for (const [file, content] of Object.entries(SCENARIOS)) writeFileSync(join(dir, file), `${JSON.stringify(content, null, 2)}\n`);
    const results = [];
    for (const c of CASES) {
      if (only && !only.includes(c.name)) continue;
      const run = spawnSync(process.execPath, [BIN, ...c.args], { cwd: dir, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1' }, maxBuffer: 1 << 28 });
      const outputs = { 'exit': `${run.status}\n`, 'stdout': maskTimings(run.stdout) };
      if (run.status !== 0) outputs.stderr = run.stderr;
      for (const f of c.files ?? []) outputs[f] = existsSync(join(dir, f)) ? maskTimings(readFileSync(join(dir, f), 'utf8')) : '<missing>\n';
      results.push({ name: c.name, outputs });
    }
    return results;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

export const GOLDEN_DIR = fileURLToPath(new URL('./golden/', import.meta.url));
/** The golden file of one output of one case. */
export const goldenPath = (name, label) => join(GOLDEN_DIR, `${name}.${label.replace(/[^A-Za-z0-9._-]/g, '_')}.txt`);
