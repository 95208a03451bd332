// Writes the byte-for-byte regression goldens (test/regression/golden/) from the current build.
// Run it only when an output is meant to change, and say why in the commit.
//   node scripts/update-goldens.mjs            all cases
//   node scripts/update-goldens.mjs NAME ...   only these cases

import { mkdirSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { GOLDEN_DIR, goldenPath, runCases } from '../test/regression/run.mjs';

const only = process.argv.slice(2);
mkdirSync(GOLDEN_DIR, { recursive: true });
if (only.length === 0) for (const f of readdirSync(GOLDEN_DIR)) rmSync(`${GOLDEN_DIR}${f}`);
let written = 0;
for (const { name, outputs } of runCases({ only: only.length ? only : undefined })) {
  for (const [label, text] of Object.entries(outputs)) {
    writeFileSync(goldenPath(name, label), text);
    written++;
  }
  if (outputs.exit !== '0\n') console.error(`note: ${name} exits ${outputs.exit.trim()}: ${outputs.stderr ?? ''}`);
}
console.error(`${written} golden files written to ${GOLDEN_DIR}`);
