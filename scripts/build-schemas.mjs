// Writes the JSON Schemas of scenario, study and result files (src/core/json-schemas.ts, compiled
// to dist/) to schemas/*.schema.json. Part of `npm run build`.
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';

const { JSON_SCHEMA_NAMES, jsonSchemaFile, jsonSchemaText } = await import('../dist/src/core/json-schemas.js');
mkdirSync('schemas', { recursive: true });
for (const name of JSON_SCHEMA_NAMES) {
  const file = jsonSchemaFile(name);
  const text = jsonSchemaText(name);
  let old;
  try {
    old = readFileSync(file, 'utf8');
  } catch {
    old = undefined;
  }
  if (old !== text) writeFileSync(file, text); // unchanged files keep their time stamps
}
