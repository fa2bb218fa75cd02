/**
 * Training threads for Node: a ThreadGroup (training/thread-group.ts) whose threads are `worker_threads` Workers
 * running shard-worker.js, beside the trainer's own thread. Give the result to a Trainer as `workers`; the weights
 * come out the same bits for any count and as in the trainer's own thread. In Node the weights and gradients are
 * always in shared memory.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import { startThreadGroup } from '@weft/optim';
import type { ThreadGroup, ThreadStart, TrainableModel } from '@weft/optim';
import type { ShardThread } from '@weft/optim/internal';

/** How `startTrainingThreads` starts its threads. */
export interface TrainingThreadOptions {
  /** Threads that compute (a whole number ≥ 1): the caller's and `count − 1` started (see `callerComputes`). */
  readonly count: number;
  /** The caller's thread computes its share of the shards (default true); false starts `count` threads. */
  readonly callerComputes?: boolean;
  /** The model being trained (its description is rebuilt in each thread; built-in cells only). */
  readonly model: TrainableModel;
  /**
   * How long a thread may take for one step, beyond the caller's own shards, before the run ends with an error;
   * default 120,000 ms.
   */
  readonly answerWithinMs?: number;
  /**
   * Weights and gradients in shared memory (default true); false sends them in each step's messages, as a page that
   * is not cross-origin isolated must (same bits either way).
   */
  readonly shared?: boolean;
}

/** The worker script: built next to this file; from the sources (tests), the built copy in dist/. */
function workerScript(): URL {
  const beside = new URL('./shard-worker.js', import.meta.url);
  if (existsSync(fileURLToPath(beside))) return beside;
  return new URL('../../dist/node/shard-worker.js', import.meta.url);
}

/** A worker_threads Worker as a thread of a group (the Worker itself as `worker`, for a supervisor). */
function nodeThread(start: ThreadStart): ShardThread & { readonly worker: Worker } {
  // A young generation as large as the main thread's, so a thread's step is not cut by more scavenges than there.
  const worker = new Worker(workerScript(), { workerData: start, resourceLimits: { maxYoungGenerationSizeMb: 64 } });
  let ended = false;
  return {
    worker,
    post: (message, transfer) => worker.postMessage(message, transfer),
    listen: (onMessage, onFailure) => {
      worker.on('message', onMessage);
      worker.on('error', (error) => onFailure(`it threw: ${error.message}`));
      worker.on('exit', (code) => {
        if (!ended) onFailure(`it exited (code ${code})`);
      });
    },
    terminate: async () => {
      ended = true;
      await worker.terminate();
    },
  };
}

/** Starts the training threads for `model` (`count − 1` beside the caller's by default); waits until each built it. */
export function startTrainingThreads(options: TrainingThreadOptions): Promise<ThreadGroup> {
  return startThreadGroup({ ...options, spawn: nodeThread, shared: options.shared ?? true });
}
