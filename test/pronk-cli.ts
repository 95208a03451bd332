// The pronk command line run in this process, its output captured: what the CLI tests call.

import { main } from '../src/cli/main.js';

/** Runs `pronk ARGS` in-process (no environment), returning the exit code and both streams. */
export async function pronk(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '';
  let stderr = '';
  const code = await main(args, { stdout: { write: (c: string) => (stdout += c) }, stderr: { write: (c: string) => (stderr += c) }, env: {} });
  return { code, stdout, stderr };
}
