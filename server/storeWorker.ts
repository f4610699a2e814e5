// The store's writer thread: every write to SQLite (and so every fsync that synchronous=FULL
// makes) happens here, not on the event loop, where a commit could wait seconds for the disk
// under load. The main thread reads through its own connection (WAL lets readers run beside
// the writer and see each commit once it returns).
import { parentPort, workerData } from 'node:worker_threads';
import { Store } from './store.js';
import type { WriteReply, WriteRequest } from './storeWriter.js';

const store = new Store((workerData as { dataDir: string }).dataDir);

parentPort!.on('message', (req: WriteRequest | { id: 0; method: 'close' }) => {
  if (req.method === 'close') {
    store.close();
    parentPort!.close();
    return;
  }
  let reply: WriteReply;
  try {
    const fn = (store as unknown as Record<string, (...a: unknown[]) => unknown>)[req.method];
    reply = { id: req.id, ok: true, result: fn.apply(store, req.args) };
  } catch (e) {
    // The code (SQLITE_FULL, ENOSPC, ...) goes back with the error: the pipeline tells a full
    // disk from other failures by it.
    const code = (e as { code?: unknown }).code;
    reply = { id: req.id, ok: false, error: String((e as Error).stack ?? e), ...(typeof code === 'string' && { code }) };
  }
  parentPort!.postMessage(reply);
});
