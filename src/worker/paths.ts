// Where the compiled worker scripts are. Compiled, the pool modules sit beside the workers in
// dist/src/worker/; run from the TypeScript sources (tests), they use the compiled workers that
// `npm run build` (and `pretest`) made.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

export class MissingWorkerError extends Error {}

export function compiledWorkerUrl(fileName: string): URL {
  const here = new URL(`./${fileName}`, import.meta.url);
  if (import.meta.url.endsWith('.js') && existsSync(fileURLToPath(here))) return here;
  const built = new URL(`../../dist/src/worker/${fileName}`, import.meta.url);
  if (!existsSync(fileURLToPath(built))) {
    throw new MissingWorkerError(`the worker script is missing at ${fileURLToPath(built)}; run "npm run build" first`);
  }
  return built;
}
