// A pool worker (worker_threads): runs batch chunks on its own engine and posts the
// results back, transferring the buffers. Errors are replies, never a dead thread.

import { parentPort } from 'node:worker_threads';
import { loadEngine, type BatchRequest } from '../core/engine.js';

const port = parentPort;
if (!port) throw new Error('node-batch-worker.js runs only as a worker thread');

const engine = await loadEngine();
port.on('message', (msg: { id: number; req: BatchRequest }) => {
  try {
    const r = engine.runBatch(msg.req);
    const transfer = [r.summaries.buffer as ArrayBuffer];
    if (r.records) transfer.push(r.records.buffer as ArrayBuffer);
    port.postMessage({ id: msg.id, summaries: r.summaries, records: r.records, completed: r.completed }, transfer);
  } catch (error) {
    port.postMessage({ id: msg.id, error: error instanceof Error ? error.message : String(error) });
  }
});
