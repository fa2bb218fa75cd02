/**
 * The training loop; its parts live in training/ (task.ts: the loss by target kind; lookback.ts: the two-piece
 * forward; evaluation.ts: the one evaluation loop; stopping.ts: the stopping rule; types.ts: options, events,
 * snapshot, summary). Each step: clear the tape, run the model over one batch (with the carried state for
 * streams), compute the task's loss, sweep, check, clip, update, and carry the detached final state on.
 *
 * Safety: a non-finite loss stops training with an error naming the step and the quantity; a non-finite
 * gradient skips that update and is reported; an update that would leave a non-finite parameter is undone
 * (values restored from the copy taken just before it) and stops training naming the parameter and entry. So the
 * weights are always those after the last finite step.
 *
 * Reproducibility: every random choice (dropout masks, batch order) comes from seeded generators; `snapshot()`
 * captures weights, optimiser state, generator state, schedule position, data cursor, carried state and the
 * early-stopping record, and `restore()` continues bit for bit.
 *
 * Why one file of this length: the step (its gradients from the whole batch, from shards in this thread, or from
 * shards on threads), the run loop and snapshot/restore read and write the same private state of one object (the
 * carried state, the sums, the counters); the parts that stand alone are in training/ (shards.ts, thread-group.ts).
 */
import { type BufferPool, Random, Tape, Tensor, backendOf, defaultBackend, fail, resetGradients, zeros } from '@weft/core';
import type { Backend, FloatArray } from '@weft/core';
import type { SequenceModel } from '@weft/cells';
import type { TrainableModel } from './training/lookback.js';
import { limitGradientNorm, limitGradientValues, firstNonFiniteEntry, gradientNorm } from './clipping.js';
import type { Batch, DataSource } from './data.js';
import { figuresOn } from './training/evaluation.js';
import type { ValidationResult } from './training/evaluation.js';
import { forwardWithLookback } from './training/lookback.js';
import { BestValidation } from './training/stopping.js';
import { taskLoss } from './training/task.js';
import { batchOf, computeJob, lossWeight, plainLossWeight, shardGradients, shardOf, shardRanges, shardSeed } from './training/shards.js';
import type { ShardJob, ShardWorkers } from './training/shards.js';
import type { TrainingEvent, TrainingSnapshot, TrainingSummary } from './training/types.js';
import type { UpdateRule } from './update-rule.js';
import type { ScheduleDescription } from './schedule.js';
import { checkSchedule, scheduleFactor } from './schedule.js';

export type { TrainingEvent, TrainingSnapshot, TrainingSummary } from './training/types.js';

/** What a `Trainer` trains, on what, and how. */
export interface TrainerOptions {
  /**
   * The model whose parameters are trained in place: a sequence model, or an encoder-decoder trained on batches of
   * pairs (`pairBatches`).
   */
  readonly model: TrainableModel;
  /** The training batches. */
  readonly data: DataSource;
  /** The update rule (SGD, Adam, RMSProp, Adagrad). */
  readonly optimizer: UpdateRule;
  /** Passes over `data` (a whole number ≥ 1); the run has epochs × batches-per-epoch steps. */
  readonly epochs: number;
  /** The backend to compute on: by default the one whose memory holds the model's parameters. */
  readonly backend?: Backend;
  /** Held-out batches for validation, early stopping and keeping the best weights. */
  readonly validation?: DataSource;
  /** The learning-rate schedule; default constant. */
  readonly schedule?: ScheduleDescription;
  /** Scale the gradients down so their global norm is at most this (Pascanu et al. 2013; `limitGradientNorm`). */
  readonly gradientNormLimit?: number;
  /** Limit every gradient entry to ±this (`limitGradientValues`). */
  readonly gradientValueLimit?: number;
  /** Validate every this many steps (and at the end of each epoch). Default: once per epoch. */
  readonly validateEvery?: number;
  /** Stop after this many validations without improvement, restoring the best weights. */
  readonly patience?: number;
  /**
   * When the run ends (epochs done or patience out, not an abort), put back the weights of the best validation
   * (default true when there is validation data), so a run that got worse at the end does not keep the worse weights.
   */
  readonly keepBest?: boolean;
  /**
   * Cut each batch into shards of this many rows and add their gradients in shard order (see training/shards.ts):
   * the same bits in this thread as on any number of `workers`. Default: 8 with workers, else no cut.
   */
  readonly shardRows?: number;
  /**
   * Threads that compute the shards (`startTrainingThreads` from `@weft/optim/node`); steps are then asynchronous
   * (`stepAsync`, `run`).
   */
  readonly workers?: ShardWorkers;
  /** Seed of the trainer's generator (dropout masks); default 0. */
  readonly seed?: number | string;
  /** Ends `run()` after the current step when aborted (stoppedBy `signal`). */
  readonly signal?: AbortSignal;
  /** Called after each step, each validation, each skipped update and at the end. */
  readonly onProgress?: (event: TrainingEvent) => void;
  /** Awaited by `run()` after every step (for example to write a checkpoint every N steps). */
  readonly afterStep?: (trainer: Trainer) => void | Promise<void>;
}

/**
 * Trains a sequence model — truncated backpropagation through time over streams (state carried between windows, with
 * an optional lookback) or padded sequence batches — or an encoder-decoder on batches of pairs (teacher forcing); clipping, schedules, validation, early stopping, progress and exact
 * snapshots.
 */
export class Trainer {
  /** The model being trained. */
  readonly model: TrainableModel;
  /** The backend every step computes on: the one holding the model's parameters unless given. */
  readonly backend: Backend;
  /** The trainer's own buffer pool on that backend (its tape's buffers). */
  readonly pool: BufferPool;
  private readonly options: TrainerOptions;
  private readonly tape: Tape;
  private readonly parameters: Tensor[];
  private readonly backup: FloatArray[];
  private random: Random;
  private stepCount = 0;
  private epoch = 0;
  private index = 0;
  private carried: Tensor[] | null = null;
  private skipped = 0;
  private lastLoss = NaN;
  private readonly best: BestValidation;
  private startedAt = 0;
  private stepsThisRun = 0;
  private positionsThisRun = 0;
  private sums: FloatArray[] | null = null;
  private readonly seed: number | string;

  constructor(options: TrainerOptions) {
    if (!Number.isInteger(options.epochs) || options.epochs < 1) {
      fail('invalid_option', 'trainer.epochs', 'a whole number ≥ 1', String(options.epochs));
    }
    if (options.schedule !== undefined) checkSchedule(options.schedule);
    // The names these options had in 0.1.0: refused by name, so a program written for them does not train unclipped.
    for (const [old, now] of [
      ['clipNorm', 'gradientNormLimit'],
      ['clipValue', 'gradientValueLimit'],
    ] as const) {
      if (old in options) fail('invalid_option', `trainer.${old}`, `trainer.${now} (the option's name now)`, `trainer.${old}`);
    }
    for (const [name, value] of [
      ['gradientNormLimit', options.gradientNormLimit],
      ['gradientValueLimit', options.gradientValueLimit],
      ['validateEvery', options.validateEvery],
      ['patience', options.patience],
    ] as const) {
      if (value !== undefined && !(value > 0)) fail('invalid_option', `trainer.${name}`, 'a number > 0', String(value));
    }
    if (options.keepBest !== undefined && typeof options.keepBest !== 'boolean') {
      fail('invalid_option', 'trainer.keepBest', 'true or false', String(options.keepBest));
    }
    this.options = options;
    this.model = options.model;
    this.parameters = options.model.parameters().map((p) => p.tensor);
    this.backend = options.backend ?? (this.parameters.length > 0 ? backendOf(this.parameters[0].data) : defaultBackend());
    this.parameters.forEach((p, i) => {
      if (!this.backend.holds(p.data)) {
        fail(
          'backend_mismatch',
          `trainer.model.parameters[${i}] (${p.label()})`,
          `a tensor in ${this.backend.name} memory (the trainer's backend)`,
          `a tensor in ${backendOf(p.data).name} memory`,
        );
      }
    });
    this.pool = this.backend.createPool();
    this.tape = new Tape({ backend: this.backend, pool: this.pool });
    this.backup = this.parameters.map((p) => this.backend.pool.take(p.dtype, p.size));
    this.random = new Random(options.seed ?? 0);
    this.seed = options.seed ?? 0;
    if (options.shardRows !== undefined && !(Number.isInteger(options.shardRows) && options.shardRows >= 1)) {
      fail('invalid_option', 'trainer.shardRows', 'a whole number ≥ 1', String(options.shardRows));
    }
    this.best = new BestValidation(this.backend, options.patience);
  }

  /** Steps in the whole run: epochs × batches per epoch. */
  get totalSteps(): number {
    return this.options.epochs * this.options.data.batchesPerEpoch;
  }

  /** Steps taken so far (resumed runs included). */
  get stepsTaken(): number {
    return this.stepCount;
  }

  /** True once every epoch is done. */
  get finished(): boolean {
    return this.epoch >= this.options.epochs;
  }

  /** One training step on the next batch; returns the loss. Throws on a non-finite loss or parameter. */
  step(): number {
    if (this.options.workers !== undefined)
      fail('invalid_option', 'trainer.step', 'stepAsync() or run() (steps on training threads are asynchronous)', 'step() with workers');
    const batch = this.nextBatch();
    return this.finishStep(batch, this.shardRanges(batch).length > 1 ? this.shardsInThread(batch) : this.wholeBatch(batch));
  }

  /** One training step, on the worker threads when the trainer has them; returns the loss. */
  async stepAsync(): Promise<number> {
    const workers = this.options.workers;
    if (workers === undefined) return this.step();
    const batch = this.nextBatch();
    const ranges = this.shardRanges(batch);
    return this.finishStep(batch, ranges.length > 1 ? await this.shardsOnWorkers(batch, workers) : this.wholeBatch(batch));
  }

  private nextBatch(): Batch {
    const data = this.options.data;
    const batch = data.batch(this.epoch, this.index);
    if (data.carriesState && this.index === 0) this.releaseCarried();
    return batch;
  }

  /** The shards of a batch: one range, the whole batch, unless `shardRows` cuts it. */
  private shardRanges(batch: Batch): [number, number][] {
    const rows = this.options.shardRows ?? (this.options.workers === undefined ? batch.batch : DEFAULT_SHARD_ROWS);
    return shardRanges(batch.batch, rows);
  }

  private carriedState(): Tensor[] | undefined {
    return this.options.data.carriesState && this.carried !== null ? this.carried : undefined;
  }

  /** The whole batch at once: its loss (the parameters hold its gradients) and the state to carry. */
  private wholeBatch(batch: Batch): StepOutcome {
    this.tape.clear();
    resetGradients(this.parameters);
    const result = forwardWithLookback(this.model, this.tape, batch, this.carriedState(), this.random);
    const loss = taskLoss(this.tape, result.outputs, batch);
    const value = loss.data[0];
    if (Number.isFinite(value)) this.tape.reverseSweep(loss);
    return { loss: value, carry: result.carry };
  }

  /** Every shard in this thread, in order; the parameters hold the sum of their gradients. */
  private shardsInThread(batch: Batch): StepOutcome {
    const total = lossWeight(batch);
    const step = this.stepCount + 1;
    const sums = this.sumBuffers();
    const carried = this.carriedState();
    const states: FloatArray[][] = [];
    let loss = 0;
    this.shardRanges(batch).forEach(([from, to], k) => {
      const made: FloatArray[] = [];
      const shard = batchOf(shardOf(batch, from, to), this.model.dtype, this.pool, made);
      const initial = carried?.map((slot) => this.rowsTensor(slot, from, to, made));
      const outcome = shardGradients(this.model, this.parameters, this.tape, shard, initial, shardSeed(this.seed, step, k), lossWeight(shard) / total);
      loss += outcome.loss;
      states.push(outcome.state);
      // A parameter the shard did not reach adds zeros, as a thread's answer for it does.
      this.parameters.forEach((p, i) => this.sumInto(sums[i], p.gradient ?? this.zerosOf(p.size), k));
      this.tape.clear();
      for (const array of made) this.pool.give(array);
    });
    return { loss, carry: this.joinedStates(states, batch.batch), sums };
  }

  /** Every shard on the worker threads; the sums are added here in shard order, as in this thread. */
  private async shardsOnWorkers(batch: Batch, workers: ShardWorkers): Promise<StepOutcome> {
    const total = lossWeight(batch);
    const step = this.stepCount + 1;
    const carried = this.carriedState();
    const jobs: ShardJob[] = this.shardRanges(batch).map(([from, to], k) => {
      const plain = shardOf(batch, from, to);
      const share = plainLossWeight(plain) / total;
      return {
        shard: k,
        batch: plain,
        state: carried === undefined ? null : carried.map((slot) => rowsOf(slot, from, to)),
        seed: shardSeed(this.seed, step, k),
        share,
      };
    });
    const here = (job: ShardJob, into: FloatArray, at: number) => computeJob(this.model, this.parameters, this.tape, this.pool, job, into, at);
    const outcomes = await workers.compute(
      step,
      this.parameters.map((p) => p.data),
      jobs,
      here,
    );
    const sums = this.sumBuffers();
    let loss = 0;
    outcomes.forEach((outcome, k) => {
      loss += outcome.loss;
      this.parameters.forEach((_, i) => this.sumInto(sums[i], workers.gradient(k, i), k));
    });
    return {
      loss,
      carry: this.joinedStates(
        outcomes.map((o) => o.state),
        batch.batch,
      ),
      sums,
    };
  }

  private zeros: Float64Array = new Float64Array(0);

  private zerosOf(size: number): Float64Array {
    if (this.zeros.length < size) this.zeros = new Float64Array(size);
    return this.zeros.subarray(0, size);
  }

  /** The buffers the shards' gradients are summed in, in the backend's memory (overwritten by the first shard). */
  private sumBuffers(): FloatArray[] {
    this.sums ??= this.parameters.map((p) => this.backend.pool.take(p.dtype, p.size));
    return this.sums;
  }

  /** A copy of `values` in the backend's memory (one buffer, grown as needed), for its kernels to read. */
  private staged(values: FloatArray): FloatArray {
    if (this.stage === null || this.stage.length < values.length || this.stage.constructor !== values.constructor) {
      if (this.stage !== null) this.backend.pool.give(this.stage);
      this.stage = this.backend.pool.take(values instanceof Float64Array ? 'f64' : 'f32', values.length);
    }
    const copy = this.stage.subarray(0, values.length);
    copy.set(values);
    return copy;
  }

  private stage: FloatArray | null = null;

  /**
   * Shard `shard`'s gradient into the sum: the first is copied, each later one added in shard order with the
   * backend's kernel (one rule for shards computed here and on threads, so the sums agree bit for bit; an f32 sum
   * is the correctly rounded one in either backend).
   */
  private sumInto(sum: FloatArray, gradient: FloatArray, shard: number): void {
    if (shard === 0) sum.set(gradient);
    else this.backend.kernels.addInto(sum, this.backend.holds(gradient) ? gradient : this.staged(gradient), sum.length);
  }

  /** Rows [from, to) of a [rows, width] state slot, as a tensor from the trainer's pool. */
  private rowsTensor(slot: Tensor, from: number, to: number, made: FloatArray[]): Tensor {
    const width = slot.shape[1];
    const data = this.pool.take(slot.dtype, (to - from) * width);
    data.set(slot.data.subarray(from * width, to * width));
    made.push(data);
    return new Tensor(data, [to - from, width]);
  }

  /** The shards' final states joined back into whole slots [rows, width]. */
  private joinedStates(states: readonly FloatArray[][], rows: number): FloatArray[] {
    if (states.length === 0 || states[0].length === 0) return [];
    return states[0].map((_, slot) => {
      const parts = states.map((s) => s[slot]);
      const joined =
        parts[0] instanceof Float64Array
          ? new Float64Array(parts.reduce((n, p) => n + p.length, 0))
          : new Float32Array(parts.reduce((n, p) => n + p.length, 0));
      let offset = 0;
      for (const part of parts) {
        joined.set(part, offset);
        offset += part.length;
      }
      if (joined.length % rows !== 0) fail('shape_mismatch', 'trainer.carried', `a multiple of ${rows} values`, `${joined.length}`);
      return joined;
    });
  }

  /** The rest of a step, the same for every way the gradients were computed. */
  private finishStep(batch: Batch, outcome: StepOutcome): number {
    const { data, optimizer } = this.options;
    const value = outcome.loss;
    const stepNumber = this.stepCount + 1;
    if (!Number.isFinite(value)) {
      this.tape.clear();
      fail('not_finite', `training step ${stepNumber}: loss`, 'a finite value', String(value), 'the weights are those after the last finite step');
    }
    if (outcome.sums !== undefined) this.parameters.forEach((p, i) => this.tape.gradientOf(p).set((outcome.sums as FloatArray[])[i]));
    const multiplier = this.options.schedule === undefined ? 1 : scheduleFactor(this.options.schedule, this.stepCount);
    // The squares are summed in f64, where a finite entry's square stays finite: a finite norm means every entry is
    // finite, so only a non-finite norm sends the search for the entry to name.
    const wholeNorm = gradientNorm(this.parameters);
    const badGradient = Number.isFinite(wholeNorm) ? null : firstNonFiniteEntry(this.parameters, 'gradient');
    let norm = NaN;
    if (badGradient !== null) {
      this.skipped++;
      this.emit('skipped', value, NaN, multiplier, `non-finite gradient of ${badGradient.name}[${badGradient.offset}] = ${badGradient.value}; update skipped`);
    } else {
      norm = this.options.gradientNormLimit !== undefined ? limitGradientNorm(this.parameters, this.options.gradientNormLimit, wholeNorm) : wholeNorm;
      if (this.options.gradientValueLimit !== undefined) limitGradientValues(this.parameters, this.options.gradientValueLimit);
      for (let i = 0; i < this.parameters.length; i++) this.backup[i].set(this.parameters[i].data);
      optimizer.update(this.parameters, multiplier);
      const badValue = firstNonFiniteEntry(this.parameters, 'values');
      if (badValue !== null) {
        for (let i = 0; i < this.parameters.length; i++) this.parameters[i].data.set(this.backup[i]);
        this.tape.clear();
        fail(
          'not_finite',
          `training step ${stepNumber}: parameter ${badValue.name}[${badValue.offset}]`,
          'a finite value after the update',
          String(badValue.value),
          'the update was undone; the weights are those after the last finite step',
        );
      }
    }
    if (data.carriesState) this.keepCarried(outcome.carry);
    this.tape.clear();
    this.stepCount = stepNumber;
    this.lastLoss = value;
    this.index++;
    if (this.index >= data.batchesPerEpoch) {
      this.index = 0;
      this.epoch++;
    }
    this.stepsThisRun++;
    this.positionsThisRun += batch.positions;
    this.emit('step', value, norm, multiplier);
    return value;
  }

  /** The state after this step becomes the carried state (copied into the trainer's pool). */
  private keepCarried(carry: readonly Tensor[] | readonly FloatArray[]): void {
    carry.forEach((state, i) => {
      const values = state instanceof Tensor ? state.data : state;
      const width = state instanceof Tensor ? state.shape[1] : (this.model as SequenceModel).stateSlots()[i].width;
      if (this.carried === null) this.carried = [];
      if (this.carried[i] === undefined) this.carried[i] = new Tensor(this.pool.take(this.model.dtype, values.length), [values.length / width, width]);
      this.carried[i].data.set(values);
    });
  }

  /** Loss and metric over a whole data source, without recording (state carried across stream windows). */
  validate(source: DataSource = this.requireValidation()): ValidationResult {
    return figuresOn(this.model, source, { backend: this.backend, pool: this.pool });
  }

  /** Trains until the epochs are done, patience runs out, or the signal aborts; yields to the event loop now and then. */
  async run(): Promise<TrainingSummary> {
    const { signal, validation, validateEvery } = this.options;
    this.startedAt = now();
    this.stepsThisRun = 0;
    this.positionsThisRun = 0;
    let lastYield = now();
    let stoppedBy: TrainingSummary['stoppedBy'] = 'epochs';
    while (!this.finished) {
      if (signal?.aborted === true) {
        stoppedBy = 'signal';
        break;
      }
      const epochBefore = this.epoch;
      await this.stepAsync();
      const due = validation !== undefined && ((validateEvery !== undefined && this.stepCount % validateEvery === 0) || this.epoch !== epochBefore);
      if (due) {
        const result = this.validate();
        this.emit('validation', this.lastLoss, NaN, 1, undefined, result);
        if (this.best.observe(result, this.stepCount, this.parameters)) {
          stoppedBy = 'patience';
          break;
        }
      }
      if (this.options.afterStep !== undefined) await this.options.afterStep(this);
      if (now() - lastYield > 50) {
        await new Promise<void>((resolve) => setTimeout(resolve, 0));
        lastYield = now();
      }
    }
    let keptStep = this.stepCount;
    const keepBest = this.options.keepBest ?? validation !== undefined;
    if (stoppedBy === 'patience' || (stoppedBy === 'epochs' && keepBest)) keptStep = this.best.putBack(this.parameters) ?? keptStep;
    this.emit('finished', this.lastLoss, NaN, 1, stoppedBy);
    return { steps: this.stepCount, stoppedBy, lastLoss: this.lastLoss, bestValidation: this.best.result, keptStep, skippedUpdates: this.skipped };
  }

  /** Gives the carried state's buffers back to the trainer's pool (they came from it) and forgets the state. */
  private releaseCarried(): void {
    if (this.carried !== null) for (const t of this.carried) this.pool.give(t.data);
    this.carried = null;
  }

  /** The run's whole state as plain data, for a checkpoint; `restore` continues bit-identically. */
  snapshot(): TrainingSnapshot {
    const named = (buffers: readonly FloatArray[]): Record<string, number[]> => {
      const out = Object.create(null) as Record<string, number[]>;
      this.model.parameters().forEach((p, i) => {
        out[p.name] = Array.from(buffers[i]);
      });
      return out;
    };
    return {
      step: this.stepCount,
      cursor: { epoch: this.epoch, index: this.index },
      parameters: named(this.parameters.map((p) => p.data)),
      optimizer: this.options.optimizer.state(),
      random: this.random.state(),
      carried: this.carried === null ? null : this.carried.map((t) => Array.from(t.data)),
      best: {
        loss: this.best.loss,
        step: this.best.step,
        parameters: this.best.parameters === null ? null : named(this.best.parameters),
        stale: this.best.stale,
      },
      skipped: this.skipped,
    };
  }

  /** Continues from a snapshot of a run with the same model, data and options. */
  restore(snapshot: TrainingSnapshot): void {
    const names = this.model.parameters().map((p) => p.name);
    const load = (from: Readonly<Record<string, readonly number[]>>, into: readonly FloatArray[], where: string): void => {
      names.forEach((name, i) => {
        const values = from[name];
        if (values === undefined || values.length !== into[i].length) {
          fail('shape_mismatch', `${where}.${name}`, `${into[i].length} values`, values === undefined ? 'nothing' : `${values.length}`);
        }
        for (let k = 0; k < values.length; k++) into[i][k] = values[k];
      });
    };
    load(
      snapshot.parameters,
      this.parameters.map((p) => p.data),
      'snapshot.parameters',
    );
    this.options.optimizer.restore(snapshot.optimizer, this.parameters);
    this.random = Random.fromState(snapshot.random);
    this.stepCount = snapshot.step;
    this.epoch = snapshot.cursor.epoch;
    this.index = snapshot.cursor.index;
    if (snapshot.carried === null) {
      this.releaseCarried();
    } else {
      // Only a sequence model carries state (an encoder-decoder's snapshots have none).
      if (!('stateSlots' in this.model))
        fail('shape_mismatch', 'snapshot.carried', 'null (an encoder-decoder carries no state)', `${snapshot.carried.length} slots`);
      const model: SequenceModel = this.model;
      const slots = model.stateSlots();
      this.releaseCarried();
      this.carried = snapshot.carried.map((values, i) => {
        const t = zeros([values.length / slots[i].width, slots[i].width], model.dtype, this.pool);
        for (let k = 0; k < values.length; k++) t.data[k] = values[k];
        return t;
      });
    }
    this.best.loss = snapshot.best.loss ?? Infinity;
    this.best.step = snapshot.best.step;
    this.best.stale = snapshot.best.stale;
    if (snapshot.best.parameters === null) {
      this.best.parameters = null;
    } else {
      this.best.parameters = this.best.copies(this.parameters);
      load(snapshot.best.parameters, this.best.parameters, 'snapshot.best.parameters');
    }
    this.skipped = snapshot.skipped;
  }

  private requireValidation(): DataSource {
    if (this.options.validation === undefined) fail('invalid_option', 'trainer.validation', 'a validation data source', 'nothing');
    return this.options.validation;
  }

  private emit(kind: TrainingEvent['kind'], loss: number, norm: number, multiplier: number, reason?: string, validation?: ValidationResult): void {
    const listener = this.options.onProgress;
    if (listener === undefined) return;
    const elapsed = (now() - this.startedAt) / 1000;
    const perStep = this.stepsThisRun > 0 ? elapsed / this.stepsThisRun : 0;
    listener({
      kind,
      step: this.stepCount,
      epoch: this.epoch,
      totalSteps: this.totalSteps,
      loss,
      gradientNorm: norm,
      learningRate: this.options.optimizer.rate * multiplier,
      positionsPerSecond: elapsed > 0 ? this.positionsThisRun / elapsed : 0,
      secondsLeft: perStep * Math.max(0, this.totalSteps - this.stepCount),
      validationLoss: validation?.loss,
      validationMetric: validation?.metric,
      validationMetricName: validation?.metricName,
      reason,
    });
  }
}

/** Rows per shard when the trainer has workers and no `shardRows`. */
const DEFAULT_SHARD_ROWS = 8;

/** What computing one step's gradients gives. */
interface StepOutcome {
  /** The batch's loss. */
  readonly loss: number;
  /** The state to carry into the next batch: tensors of the whole batch, or joined shard states. */
  readonly carry: readonly Tensor[] | readonly FloatArray[];
  /** The summed shard gradients, per parameter; absent when the parameters already hold the gradients. */
  readonly sums?: readonly FloatArray[];
}

/** Rows [from, to) of a [rows, width] state slot, copied. */
function rowsOf(slot: Tensor, from: number, to: number): FloatArray {
  const width = slot.shape[1];
  return slot.data.slice(from * width, to * width);
}

function now(): number {
  return typeof performance !== 'undefined' ? performance.now() : Date.now();
}
