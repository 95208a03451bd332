// Writing a long output to stdout piece by piece (src/core/json-stream.ts makes the pieces),
// waiting for the stream to drain whenever it says its buffer is full, so that neither one string
// nor the stream's queue has to hold the whole output.

import type { OutputStream } from './command.js';

/** The size pieces are gathered to before each write (characters). */
const WRITE_CHARS = 1 << 20;

interface DrainingStream extends OutputStream {
  once?(event: 'drain', listener: () => void): unknown;
}

export async function writeChunks(stream: OutputStream, chunks: Iterable<string>): Promise<void> {
  const target = stream as DrainingStream;
  let pending = '';
  const flush = async () => {
    const accepted = target.write(pending);
    pending = '';
    if (accepted === false && typeof target.once === 'function') await new Promise<void>((resolve) => target.once!('drain', resolve));
  };
  for (const chunk of chunks) {
    pending += chunk;
    if (pending.length >= WRITE_CHARS) await flush();
  }
  if (pending) await flush();
}
