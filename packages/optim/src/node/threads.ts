/**
 * Training threads for Node (`worker_threads`): `startTrainingThreads` starts `count` threads, each building the
 * model from its description on the same backend as this thread; a trainer given them (`workers`) hands each step's
 * shards out (shard k to thread k mod count) and adds the gradients in shard order (training/shards.ts), so the
 * weights are the same bits for any count and as in this thread. The weights travel in one SharedArrayBuffer
 * (written here before each step), each shard's gradients in its own part of another (written by the thread that
 * computed it).
 *
 * Failure: a thread that throws, exits or does not answer a step within `answerWithinMs` ends the step with a
 * WeftError (`worker_failed`) naming the thread, the step and the cause, and every thread is ended first — none
 * is left running. A checkpoint written before is untouched (checkpoints are written whole, by rename).
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { MessagePort } from 'node:worker_threads';
import { Tape, Tensor, WeftError, backendOf, fail, setDefaultBackend } from '@weft/core';
import type { BackendName, FloatArray } from '@weft/core';
import { EncoderDecoderModel, SequenceModel, isEncoderDecoder } from '@weft/cells';
import { batchOf, shardGradients } from '@weft/optim';
import type { ShardJob, ShardOutcome, ShardWorkers, TrainableModel } from '@weft/optim';

/** How `startTrainingThreads` starts its threads. */
export interface TrainingThreadOptions {
  /** Threads to start (a whole number ≥ 1). */
  readonly count: number;
  /** The model being trained (its description is rebuilt in each thread; built-in cells only). */
  readonly model: TrainableModel;
  /** How long a thread may take for one step before the run ends with an error; default 120,000 ms. */
  readonly answerWithinMs?: number;
}

/** The message a thread gets at the start (see shard-worker.ts). */
export interface ThreadStart {
  readonly description: unknown;
  readonly dtype: 'f32' | 'f64';
  readonly backend: string;
  readonly weights: SharedArrayBuffer;
  readonly sizes: readonly number[];
}

/** The ArrayBuffers of a job's own arrays (not shared memory), which postMessage can move instead of copying. */
function movable(job: ShardJob): ArrayBuffer[] {
  const b = job.batch;
  const arrays = [b.tokens, b.values, b.lengths, b.classes, b.targetValues, b.weights, b.sourceTokens, b.sourceLengths, ...(job.state ?? [])];
  const buffers = new Set<ArrayBuffer>();
  for (const array of arrays) if (array !== null && array.buffer instanceof ArrayBuffer) buffers.add(array.buffer);
  return [...buffers];
}

/** The worker script: built next to this file; from the sources (tests), the built copy in dist/. */
function workerScript(): URL {
  const beside = new URL('./shard-worker.js', import.meta.url);
  if (existsSync(fileURLToPath(beside))) return beside;
  return new URL('../../dist/node/shard-worker.js', import.meta.url);
}

/** Starts `count` training threads for `model` and waits until each has built it. */
export async function startTrainingThreads(options: TrainingThreadOptions): Promise<TrainingThreads> {
  const { count, model } = options;
  if (!Number.isInteger(count) || count < 1) fail('invalid_option', 'trainingThreads.count', 'a whole number ≥ 1', String(count));
  const answerWithinMs = options.answerWithinMs ?? 120_000;
  if (!(answerWithinMs > 0)) fail('invalid_option', 'trainingThreads.answerWithinMs', 'a number > 0', String(answerWithinMs));
  const parameters = model.parameters();
  const sizes = parameters.map((p) => p.tensor.size);
  const total = sizes.reduce((n, s) => n + s, 0);
  const bytes = model.dtype === 'f64' ? 8 : 4;
  const weights = new SharedArrayBuffer(total * bytes);
  const backend = parameters.length > 0 ? backendOf(parameters[0].tensor.data).name : 'javascript';
  const start: ThreadStart = { description: model.description, dtype: model.dtype, backend, weights, sizes };
  const threads = new TrainingThreads(count, sizes, model.dtype, weights, answerWithinMs);
  await threads.begin(start);
  return threads;
}

interface Pending {
  readonly resolve: (results: ShardOutcome[]) => void;
  readonly reject: (error: Error) => void;
}

/** Threads that compute shards (see above). */
export class TrainingThreads implements ShardWorkers {
  /** How many threads compute. */
  readonly count: number;
  /** The threads themselves (for a supervisor that must end one). */
  readonly threads: Worker[] = [];
  private readonly sizes: readonly number[];
  private readonly offsets: number[];
  private readonly total: number;
  private readonly dtype: 'f32' | 'f64';
  private readonly weights: FloatArray;
  private gradients: SharedArrayBuffer;
  private gradientViews: FloatArray;
  private capacity = 0;
  private closed = false;
  private failure: WeftError | null = null;
  private pending: Pending | null = null;
  private readonly answerWithinMs: number;

  constructor(count: number, sizes: readonly number[], dtype: 'f32' | 'f64', weights: SharedArrayBuffer, answerWithinMs: number) {
    this.count = count;
    this.sizes = sizes;
    this.dtype = dtype;
    this.offsets = [];
    let offset = 0;
    for (const size of sizes) {
      this.offsets.push(offset);
      offset += size;
    }
    this.total = offset;
    this.weights = dtype === 'f64' ? new Float64Array(weights) : new Float32Array(weights);
    this.gradients = new SharedArrayBuffer(0);
    this.gradientViews = new Float32Array(0);
    this.answerWithinMs = answerWithinMs;
  }

  /** Starts the threads and waits for each to say it built the model. */
  async begin(start: ThreadStart): Promise<void> {
    const script = workerScript();
    const ready = Array.from({ length: this.count }, (_, i) => new Promise<void>((resolve, reject) => {
      const thread = new Worker(script, { workerData: start });
      this.threads.push(thread);
      thread.once('message', (message: { ready?: boolean; error?: string }) => {
        if (message.ready === true) resolve();
        else reject(this.fault(i, 0, message.error ?? 'no ready message'));
      });
      thread.once('error', (error) => reject(this.fault(i, 0, error.message)));
    }));
    try {
      await Promise.all(ready);
    } catch (error) {
      await this.close();
      throw error;
    }
    this.threads.forEach((thread, i) => {
      thread.on('error', (error) => void this.fail(this.fault(i, this.currentStep, `it threw: ${error.message}`)));
      thread.on('exit', (code) => {
        if (!this.closed) void this.fail(this.fault(i, this.currentStep, `it exited (code ${code})`));
      });
    });
  }

  private currentStep = 0;

  private fault(thread: number, step: number, cause: string): WeftError {
    return new WeftError({ code: 'worker_failed', path: `training thread ${thread + 1} of ${this.count}${step > 0 ? `, step ${step}` : ', starting'}`, expected: 'its shards\' gradients', received: cause, detail: 'every thread was ended; the last checkpoint is as it was written' });
  }

  /** Ends every thread, then rejects the step in progress with `error`. */
  private async fail(error: WeftError): Promise<void> {
    if (this.failure !== null) return;
    this.failure = error;
    const pending = this.pending;
    this.pending = null;
    await this.close();
    pending?.reject(error);
  }

  async compute(step: number, weights: readonly FloatArray[], jobs: readonly ShardJob[]): Promise<ShardOutcome[]> {
    if (this.failure !== null) throw this.failure;
    if (this.closed) fail('worker_failed', 'training threads', 'threads still running', 'threads already closed');
    this.currentStep = step;
    weights.forEach((w, i) => {
      if (w.length !== this.sizes[i]) fail('shape_mismatch', `trainingThreads.weights[${i}]`, `${this.sizes[i]} values`, `${w.length}`);
      this.weights.set(w, this.offsets[i]);
    });
    let fresh: SharedArrayBuffer | null = null;
    if (jobs.length > this.capacity) {
      this.capacity = jobs.length;
      this.gradients = new SharedArrayBuffer(this.capacity * this.total * (this.dtype === 'f64' ? 8 : 4));
      this.gradientViews = this.dtype === 'f64' ? new Float64Array(this.gradients) : new Float32Array(this.gradients);
      fresh = this.gradients;
    }
    const answers = new Map<number, ShardOutcome>();
    const waiting = new Set<number>();
    const result = new Promise<ShardOutcome[]>((resolve, reject) => {
      this.pending = { resolve, reject };
    });
    const timer = setTimeout(() => void this.fail(this.fault([...waiting][0] ?? 0, step, `no answer within ${this.answerWithinMs} ms`)), this.answerWithinMs);
    this.threads.forEach((thread, i) => {
      const mine = jobs.filter((job) => job.shard % this.count === i);
      if (mine.length === 0) return;
      waiting.add(i);
      const onMessage = (message: { step: number; results?: ShardOutcome[] & { shard: number }[]; error?: string }) => {
        if (message.step !== step) return;
        thread.off('message', onMessage);
        if (message.error !== undefined) {
          void this.fail(this.fault(i, step, `it threw: ${message.error}`));
          return;
        }
        for (const r of message.results as (ShardOutcome & { shard: number })[]) answers.set(r.shard, { loss: r.loss, state: r.state });
        waiting.delete(i);
        if (waiting.size === 0 && this.pending !== null) {
          const pending = this.pending;
          this.pending = null;
          pending.resolve(jobs.map((job) => answers.get(job.shard) as ShardOutcome));
        }
      };
      thread.on('message', onMessage);
      // The jobs' arrays are copies made for this step: moved to the thread, not copied again.
      thread.postMessage({ step, jobs: mine, gradients: fresh }, mine.flatMap(movable));
    });
    try {
      return await result;
    } finally {
      clearTimeout(timer);
    }
  }

  gradient(shard: number, parameter: number): FloatArray {
    const at = shard * this.total + this.offsets[parameter];
    return this.gradientViews.subarray(at, at + this.sizes[parameter]);
  }

  /** Ends every thread (and waits until they have ended). */
  async close(): Promise<void> {
    this.closed = true;
    await Promise.all(this.threads.map((thread) => thread.terminate()));
  }
}

/**
 * What a training thread does (shard-worker.ts runs it): builds the model from the description it is given, on the
 * backend the trainer uses; then for each step copies the shared weights into its parameters and computes the shards
 * it is handed (training/shards.ts, the same code the trainer runs in its own thread), writing each shard's gradients
 * into that shard's part of the shared gradient buffer and answering with the losses and final states.
 */
export function serveShards(port: MessagePort, start: ThreadStart): void {
  try {
    const backend = setDefaultBackend(start.backend as BackendName);
    const model = isEncoderDecoder(start.description)
      ? new EncoderDecoderModel(start.description, { dtype: start.dtype })
      : new SequenceModel(start.description, { dtype: start.dtype });
    const parameters = model.parameters().map((p) => p.tensor);
    const shared = start.dtype === 'f64' ? new Float64Array(start.weights) : new Float32Array(start.weights);
    const total = start.sizes.reduce((n, s) => n + s, 0);
    const pool = backend.createPool();
    const tape = new Tape({ backend, pool });
    let gradients: FloatArray = new Float32Array(0);

    port.on('message', (message: { step: number; jobs: ShardJob[]; gradients: SharedArrayBuffer | null }) => {
      const { step, jobs } = message;
      try {
        if (message.gradients !== null) gradients = start.dtype === 'f64' ? new Float64Array(message.gradients) : new Float32Array(message.gradients);
        let offset = 0;
        for (const p of parameters) {
          p.data.set(shared.subarray(offset, offset + p.size));
          offset += p.size;
        }
        const results = jobs.map((job) => {
          const made: FloatArray[] = [];
          const batch = batchOf(job.batch, start.dtype, pool, made);
          const initial = job.state === null ? undefined : job.state.map((values, i) => {
            const data = pool.take(start.dtype, values.length);
            data.set(values);
            made.push(data);
            const rows = job.batch.rows;
            return new Tensor(data, [rows, values.length / rows]);
          });
          const outcome = shardGradients(model, parameters, tape, batch, initial, job.seed, job.share);
          let at = job.shard * total;
          for (const p of parameters) {
            if (p.gradient === null) gradients.fill(0, at, at + p.size);
            else gradients.set(p.gradient, at);
            at += p.size;
          }
          tape.clear();
          for (const array of made) pool.give(array);
          return { shard: job.shard, loss: outcome.loss, state: outcome.state };
        });
        port.postMessage({ step, results }, results.flatMap((r) => r.state.map((s) => s.buffer as ArrayBuffer)));
      } catch (error) {
        tape.clear();
        port.postMessage({ step, error: error instanceof Error ? error.message : String(error) });
      }
    });
    port.postMessage({ ready: true });
  } catch (error) {
    port.postMessage({ error: error instanceof Error ? error.message : String(error) });
  }
}
