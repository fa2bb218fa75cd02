/**
 * Threads that compute shards (training/shards.ts), whatever the platform's threads are: Node's worker_threads
 * (`@weft/optim/node`) or a browser's Web Workers (`webWorkerThread`, `serveShardsInWorker`). A `ThreadGroup` of
 * `count` computes shards on the trainer's own thread and `count − 1` threads it starts (or on `count` threads,
 * with `callerComputes: false`), each thread building the model from its description on the backend the trainer
 * uses. Each step it publishes the weights, hands shard k to computer k mod count (the caller is computer 0), and
 * gives back every shard's gradients, which the trainer adds in shard order, so the weights are the same bits for
 * any count and as in the trainer's own thread.
 *
 * The caller computes too because a thread that only waits is a core lost: on two cores, two computing threads
 * and a waiting third woke each other (measured: the trainer's two posts of a step took ~0.49 ms there, a post to
 * one idle thread ~0.02 ms), and the tokens per second of two threads against one went from 1.62× to 1.84×.
 *
 * Weights and gradients live in SharedArrayBuffers where the platform has them (Node always; a browser page when
 * it is cross-origin isolated): the weights written once per step by the trainer, each shard's gradients into its
 * own part by the thread that computed it. Elsewhere they travel in the messages (the weights copied to each
 * thread, the gradients moved back).
 *
 * Failure: a thread that throws, exits or does not answer a step within `answerWithinMs` ends the step with a
 * WeftError (`worker_failed`) naming the thread, the step and the cause, and every thread is ended first.
 *
 * Why one file of this length: the group and the serving side speak one message protocol (the start message, the
 * step messages and their answers); keeping both ends of it in one place keeps them in step.
 */
import { Tape, WeftError, backendOf, compiledKernels, createWebAssemblyBackend, fail, setDefaultBackend, useCompiledKernels } from '@weft/core';
import type { BackendName, FloatArray, KernelSet } from '@weft/core';
import { EncoderDecoderModel, SequenceModel, isEncoderDecoder } from '@weft/cells';
import type { TrainableModel } from './lookback.js';
import { computeJob } from './shards.js';
import type { ComputeHere, ShardJob, ShardOutcome, ShardWorkers } from './shards.js';

/** One thread as the group drives it: a platform's worker behind four calls. */
export interface ShardThread {
  /** Sends a message, moving the listed buffers. */
  post(message: unknown, transfer: ArrayBuffer[]): void;
  /** Calls `onMessage` with each message the thread sends, `onFailure` once if it throws or exits. */
  listen(onMessage: (data: unknown) => void, onFailure: (cause: string) => void): void;
  /** Ends the thread; resolves once it has ended. */
  terminate(): Promise<void>;
}

/** The thread's end of the protocol: what `serveShards` needs of its surroundings. */
export interface ShardEndpoint {
  /** Sends a message to the group, moving the listed buffers. */
  post(message: unknown, transfer: ArrayBuffer[]): void;
  /** Calls `onMessage` with each message from the group. */
  listen(onMessage: (data: unknown) => void): void;
}

/** What a thread is told at its start. */
export interface ThreadStart {
  /** The model's description (rebuilt in the thread). */
  readonly description: unknown;
  /** The model's element type. */
  readonly dtype: 'f32' | 'f64';
  /** The backend the trainer computes on (the thread uses the same). */
  readonly backend: string;
  /**
   * The WebAssembly backend's kernels as the trainer's thread compiled them, or null for the JavaScript backend: a
   * thread runs that code (already tiered up) instead of compiling its own copy while the others compute.
   */
  readonly kernels: WebAssembly.Module | null;
  /** Which build those kernels are (the trainer's backend's), so every thread computes the same bits; null for JavaScript. */
  readonly kernelSet: KernelSet | null;
  /** The shared weights, or null when they travel in each step's message. */
  readonly weights: SharedArrayBuffer | null;
  /** Each parameter's element count, in parameter order. */
  readonly sizes: readonly number[];
}

interface StepMessage {
  readonly step: number;
  readonly jobs: readonly ShardJob[];
  /** A new shared gradient buffer (shared mode, when the group grew it), else null. */
  readonly gradients: SharedArrayBuffer | null;
  /** The weights, when they are not shared. */
  readonly weights: FloatArray | null;
}

interface Answer {
  readonly step: number;
  readonly results?: readonly (ShardOutcome & { readonly shard: number; readonly gradients: FloatArray | null })[];
  readonly error?: string;
}

/** How a `ThreadGroup` is started. */
export interface ThreadGroupOptions {
  /** Threads that compute (a whole number ≥ 1), the caller's own thread included unless `callerComputes` is false. */
  readonly count: number;
  /**
   * The caller's thread computes its share of the shards (default true), so `count − 1` threads are started; false
   * starts `count` threads and leaves the caller free (a page's UI thread, a server answering requests).
   */
  readonly callerComputes?: boolean;
  /** The model being trained (its description is rebuilt in each thread; built-in cells only). */
  readonly model: TrainableModel;
  /** Makes one thread, handing it `start` (see ThreadStart). */
  readonly spawn: (start: ThreadStart) => ShardThread;
  /**
   * How long a thread may take for one step, beyond the caller's own shards, before the run ends with an error;
   * default 120,000 ms.
   */
  readonly answerWithinMs?: number;
  /** Share weights and gradients through SharedArrayBuffers; default: where the platform can. */
  readonly shared?: boolean;
}

/** True where SharedArrayBuffers can be made and sent to threads (Node; cross-origin isolated pages). */
export function canShareMemory(): boolean {
  const isolated = (globalThis as { crossOriginIsolated?: boolean }).crossOriginIsolated;
  return typeof SharedArrayBuffer === 'function' && isolated !== false;
}

/** Starts a group of `count` threads and waits until each has built the model. */
export async function startThreadGroup(options: ThreadGroupOptions): Promise<ThreadGroup> {
  const { count, model } = options;
  if (!Number.isInteger(count) || count < 1) fail('invalid_option', 'trainingThreads.count', 'a whole number ≥ 1', String(count));
  const answerWithinMs = options.answerWithinMs ?? 120_000;
  if (!(answerWithinMs > 0)) fail('invalid_option', 'trainingThreads.answerWithinMs', 'a number > 0', String(answerWithinMs));
  const parameters = model.parameters();
  const sizes = parameters.map((p) => p.tensor.size);
  const shared = options.shared ?? canShareMemory();
  const total = sizes.reduce((n, s) => n + s, 0);
  const weights = shared ? new SharedArrayBuffer(total * (model.dtype === 'f64' ? 8 : 4)) : null;
  const owner = parameters.length > 0 ? backendOf(parameters[0].tensor.data) : null;
  const backend = owner?.name ?? 'javascript';
  const kernelSet = owner?.kernelSet ?? null;
  const kernels = kernelSet === null ? null : compiledKernels(kernelSet);
  const start: ThreadStart = { description: model.description, dtype: model.dtype, backend, kernels, kernelSet, weights, sizes };
  const group = new ThreadGroup(count, options.callerComputes ?? true, start, answerWithinMs);
  await group.begin(options.spawn);
  return group;
}

/** Threads that compute shards (see above). */
export class ThreadGroup implements ShardWorkers {
  /** How many threads compute, the caller's included when `callerComputes`. */
  readonly count: number;
  /** True when the caller's thread computes shards (computer 0) and `count − 1` threads were started. */
  readonly callerComputes: boolean;
  /** The threads started, in order (for a supervisor that must end one). */
  readonly threads: ShardThread[] = [];
  /** True when weights and gradients are in shared memory. */
  readonly shared: boolean;
  private readonly start: ThreadStart;
  private readonly offsets: number[] = [];
  private readonly total: number;
  private readonly weights: FloatArray | null;
  private gradients: FloatArray = new Float32Array(0);
  private capacity = 0;
  private moved: (FloatArray | null)[] = [];
  private closed = false;
  private failure: WeftError | null = null;
  private pending: { resolve: (results: ShardOutcome[]) => void; reject: (error: Error) => void } | null = null;
  private currentStep = 0;
  private readonly answerWithinMs: number;

  constructor(count: number, callerComputes: boolean, start: ThreadStart, answerWithinMs: number) {
    this.count = count;
    this.callerComputes = callerComputes;
    this.start = start;
    this.shared = start.weights !== null;
    let offset = 0;
    for (const size of start.sizes) {
      this.offsets.push(offset);
      offset += size;
    }
    this.total = offset;
    this.weights = start.weights === null ? null : this.view(start.weights);
    this.answerWithinMs = answerWithinMs;
  }

  private view(buffer: SharedArrayBuffer): FloatArray {
    return this.start.dtype === 'f64' ? new Float64Array(buffer) : new Float32Array(buffer);
  }

  /** Makes the threads and waits for each to say it built the model. */
  async begin(spawn: (start: ThreadStart) => ShardThread): Promise<void> {
    const ready = Array.from(
      { length: this.count - this.first },
      (_, i) =>
        new Promise<void>((resolve, reject) => {
          const thread = spawn(this.start);
          this.threads.push(thread);
          let started = false;
          thread.listen(
            (data) => {
              const message = data as { ready?: boolean; error?: string };
              if (!started) {
                started = true;
                if (message.ready === true) resolve();
                else reject(this.fault(i, `it could not start: ${message.error ?? 'no ready message'}`));
              } else {
                this.onAnswer(i, data as Answer);
              }
            },
            (cause) => {
              if (!started) reject(this.fault(i, cause));
              else if (!this.closed) void this.fail(this.fault(i, cause));
            },
          );
        }),
    );
    try {
      await Promise.all(ready);
    } catch (error) {
      await this.close();
      throw error;
    }
  }

  /** The computer number of the first started thread: 1 when the caller computes (it is computer 0), else 0. */
  private get first(): number {
    return this.callerComputes ? 1 : 0;
  }

  /** A failure of started thread `thread` (0-based among `threads`), named by its computer number. */
  private fault(thread: number, cause: string): WeftError {
    const when = this.currentStep === 0 ? ', starting' : this.pending === null ? `, after step ${this.currentStep}` : `, step ${this.currentStep}`;
    const where = `training thread ${thread + this.first + 1} of ${this.count}${when}`;
    return new WeftError({
      code: 'worker_failed',
      path: where,
      expected: "its shards' gradients",
      received: cause,
      detail: 'every thread was ended; the last checkpoint is as it was written',
    });
  }

  /** Ends every thread, then rejects the step in progress with `error`. */
  private async fail(error: WeftError): Promise<void> {
    if (this.failure !== null) return;
    this.failure = error;
    const pending = this.pending;
    this.pending = null;
    this.ending = this.close();
    await this.ending;
    pending?.reject(error);
  }

  /** The ending of every thread after a failure (a later step waits for it before it reports the failure). */
  private ending: Promise<void> = Promise.resolve();

  private waiting = new Set<number>();
  private answers = new Map<number, ShardOutcome>();
  private jobs: readonly ShardJob[] = [];

  private onAnswer(thread: number, answer: Answer): void {
    if (answer.step !== this.currentStep || !this.waiting.has(thread)) return;
    if (answer.error !== undefined) {
      void this.fail(this.fault(thread, `it threw: ${answer.error}`));
      return;
    }
    for (const r of answer.results ?? []) {
      this.answers.set(r.shard, { loss: r.loss, state: r.state });
      if (r.gradients !== null) this.moved[r.shard] = r.gradients;
    }
    this.waiting.delete(thread);
    if (this.waiting.size === 0) this.settle();
  }

  async compute(step: number, weights: readonly FloatArray[], jobs: readonly ShardJob[], here?: ComputeHere): Promise<ShardOutcome[]> {
    if (this.failure !== null) {
      // A thread failed between steps: report it once every thread has ended.
      await this.ending;
      throw this.failure;
    }
    if (this.closed) fail('worker_failed', 'training threads', 'threads still running', 'threads already closed');
    if (this.callerComputes && here === undefined)
      fail('invalid_option', 'trainingThreads.compute', "a function computing the caller's shards (the group was started with callerComputes)", 'none');
    this.currentStep = step;
    const values = this.weights ?? (this.start.dtype === 'f64' ? new Float64Array(this.total) : new Float32Array(this.total));
    weights.forEach((w, i) => {
      if (w.length !== this.start.sizes[i]) fail('shape_mismatch', `trainingThreads.weights[${i}]`, `${this.start.sizes[i]} values`, `${w.length}`);
      values.set(w, this.offsets[i]);
    });
    let fresh: SharedArrayBuffer | null = null;
    if (this.shared && jobs.length > this.capacity) {
      this.capacity = jobs.length;
      fresh = new SharedArrayBuffer(this.capacity * this.total * (this.start.dtype === 'f64' ? 8 : 4));
      this.gradients = this.view(fresh);
    }
    this.jobs = jobs;
    this.answers = new Map();
    this.moved = [];
    this.waiting = new Set();
    const result = new Promise<ShardOutcome[]>((resolve, reject) => {
      this.pending = { resolve, reject };
    });
    let timer: ReturnType<typeof setTimeout> | undefined;
    try {
      this.threads.forEach((thread, i) => {
        const mine = jobs.filter((job) => job.shard % this.count === i + this.first);
        if (mine.length === 0) return;
        this.waiting.add(i);
        const message: StepMessage = { step, jobs: mine, gradients: fresh, weights: this.shared ? null : values.slice() };
        // The jobs' arrays (and unshared weights) are copies made for this step: moved to the thread, not copied again.
        thread.post(message, [...mine.flatMap(movable), ...(message.weights === null ? [] : [message.weights.buffer as ArrayBuffer])]);
      });
      // The caller's shards, while the threads compute theirs (their answers are read once this yields).
      if (here !== undefined && this.callerComputes) {
        for (const job of jobs) {
          if (job.shard % this.count !== 0) continue;
          const own = this.shared ? null : this.start.dtype === 'f64' ? new Float64Array(this.total) : new Float32Array(this.total);
          this.answers.set(job.shard, here(job, own ?? this.gradients, own === null ? job.shard * this.total : 0));
          if (own !== null) this.moved[job.shard] = own;
        }
      }
      if (this.waiting.size === 0) this.settle();
      // Timed from here: a thread has the caller's own shards' time and then `answerWithinMs` more.
      else timer = setTimeout(() => void this.fail(this.fault([...this.waiting][0] ?? 0, `no answer within ${this.answerWithinMs} ms`)), this.answerWithinMs);
      return await result;
    } finally {
      if (timer !== undefined) clearTimeout(timer);
      this.pending = null;
    }
  }

  /** Resolves the step in progress with every shard's outcome, in job order. */
  private settle(): void {
    const pending = this.pending;
    if (pending === null) return;
    this.pending = null;
    pending.resolve(this.jobs.map((job) => this.answers.get(job.shard) as ShardOutcome));
  }

  gradient(shard: number, parameter: number): FloatArray {
    const at = this.offsets[parameter];
    const size = this.start.sizes[parameter];
    const moved = this.moved[shard];
    if (moved !== undefined && moved !== null) return moved.subarray(at, at + size);
    return this.gradients.subarray(shard * this.total + at, shard * this.total + at + size);
  }

  /** Ends every thread (and waits until they have ended). */
  async close(): Promise<void> {
    this.closed = true;
    await Promise.all(this.threads.map((thread) => thread.terminate()));
  }
}

/** The ArrayBuffers of a job's own arrays (not shared memory), which postMessage can move instead of copying. */
function movable(job: ShardJob): ArrayBuffer[] {
  const b = job.batch;
  const arrays = [b.tokens, b.values, b.lengths, b.classes, b.targetValues, b.weights, b.sourceTokens, b.sourceLengths, ...(job.state ?? [])];
  const buffers = new Set<ArrayBuffer>();
  for (const array of arrays) if (array !== null && array.buffer instanceof ArrayBuffer) buffers.add(array.buffer);
  return [...buffers];
}

/**
 * A training thread's work: builds the model from `start`, on the backend the trainer uses; then for each step takes
 * the weights (shared, or from the message), computes the shards it is handed (training/shards.ts, the same code
 * the trainer runs in its own thread), puts each shard's gradients in that shard's part of the shared buffer (or
 * moves them back in the answer), and answers with the losses and final states.
 */
export function serveShards(endpoint: ShardEndpoint, start: ThreadStart): void {
  try {
    if (start.kernels !== null && start.kernelSet !== null) useCompiledKernels(start.kernels, start.kernelSet);
    const backend = setDefaultBackend(start.kernelSet === null ? (start.backend as BackendName) : createWebAssemblyBackend({ kernels: start.kernelSet }));
    const model = isEncoderDecoder(start.description)
      ? new EncoderDecoderModel(start.description, { dtype: start.dtype })
      : new SequenceModel(start.description, { dtype: start.dtype });
    const parameters = model.parameters().map((p) => p.tensor);
    const total = start.sizes.reduce((n, s) => n + s, 0);
    const make = (length: number): FloatArray => (start.dtype === 'f64' ? new Float64Array(length) : new Float32Array(length));
    const shared = start.weights === null ? null : start.dtype === 'f64' ? new Float64Array(start.weights) : new Float32Array(start.weights);
    const pool = backend.createPool();
    const tape = new Tape({ backend, pool });
    let gradients: FloatArray = make(0);
    endpoint.listen((data) => {
      const message = data as StepMessage;
      const { step, jobs } = message;
      try {
        if (message.gradients !== null) gradients = start.dtype === 'f64' ? new Float64Array(message.gradients) : new Float32Array(message.gradients);
        const weights = (shared ?? message.weights) as FloatArray;
        let offset = 0;
        for (const p of parameters) {
          p.data.set(weights.subarray(offset, offset + p.size));
          offset += p.size;
        }
        const results = jobs.map((job) => {
          const own = shared === null ? make(total) : null;
          const outcome = computeJob(model, parameters, tape, pool, job, own ?? gradients, own === null ? job.shard * total : 0);
          return { shard: job.shard, loss: outcome.loss, state: outcome.state, gradients: own };
        });
        const transfer = results.flatMap((r) => [
          ...r.state.map((s) => s.buffer as ArrayBuffer),
          ...(r.gradients === null ? [] : [r.gradients.buffer as ArrayBuffer]),
        ]);
        endpoint.post({ step, results }, transfer);
      } catch (error) {
        endpoint.post({ step, error: error instanceof Error ? error.message : String(error) }, []);
      }
    });
    endpoint.post({ ready: true }, []);
  } catch (error) {
    endpoint.post({ error: error instanceof Error ? error.message : String(error) }, []);
  }
}

/** A Web Worker (running `serveShardsInWorker`) as a thread of a group. */
export function webWorkerThread(worker: Worker, start: ThreadStart): ShardThread {
  worker.postMessage(start);
  return {
    post: (message, transfer) => worker.postMessage(message, transfer),
    listen: (onMessage, onFailure) => {
      worker.addEventListener('message', (event: MessageEvent) => onMessage(event.data));
      worker.addEventListener('error', (event: ErrorEvent) => onFailure(`it threw: ${event.message}`));
    },
    terminate: async () => worker.terminate(),
  };
}

/** The body of a Web Worker script that computes shards: waits for its start message, then serves shards. */
export function serveShardsInWorker(scope: {
  postMessage(message: unknown, transfer: Transferable[]): void;
  addEventListener(type: 'message', listener: (event: MessageEvent) => void): void;
  removeEventListener(type: 'message', listener: (event: MessageEvent) => void): void;
}): void {
  const first = (event: MessageEvent): void => {
    scope.removeEventListener('message', first);
    serveShards(
      {
        post: (message, transfer) => scope.postMessage(message, transfer),
        listen: (onMessage) => scope.addEventListener('message', (e: MessageEvent) => onMessage(e.data)),
      },
      event.data as ThreadStart,
    );
  };
  scope.addEventListener('message', first);
}
