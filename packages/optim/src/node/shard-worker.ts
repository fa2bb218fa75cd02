/**
 * One training thread's script (started by threads.ts): it serves shards (`serveShards`) until it is ended.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { serveShards } from './threads.js';
import type { ThreadStart } from './threads.js';

if (parentPort === null) throw new Error('shard-worker.js runs as a worker thread (started by startTrainingThreads)');
serveShards(parentPort, workerData as ThreadStart);
