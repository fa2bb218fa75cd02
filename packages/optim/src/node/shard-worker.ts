/**
 * One training thread's script (started by threads.ts): it serves shards (`serveShards`) until it is ended.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { serveShards } from '@weft/optim/internal';
import type { ThreadStart } from '@weft/optim';

if (parentPort === null) throw new Error('shard-worker.js runs as a worker thread (started by startTrainingThreads)');
const port = parentPort;
serveShards(
  { post: (message, transfer) => port.postMessage(message, transfer), listen: (onMessage) => port.on('message', onMessage) },
  workerData as ThreadStart,
);
