#!/usr/bin/env node
// The installed `pronk` command: runs the compiled CLI (npm run build writes dist/).

// A closed pipe (pronk simulate | head) ends the output; it is not an error.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (error) => {
    if (error.code === 'EPIPE') process.exit(process.exitCode ?? 0);
    throw error;
  });
}

let main;
try {
  ({ main } = await import('../dist/src/cli/main.js'));
} catch (error) {
  if (error?.code === 'ERR_MODULE_NOT_FOUND' && String(error.message).includes('dist')) {
    process.stderr.write("pronk: the CLI is not built yet (no dist/); run 'npm run build' first\n");
    process.exitCode = 1;
  } else {
    throw error;
  }
}
if (main) process.exitCode = await main(process.argv.slice(2));
