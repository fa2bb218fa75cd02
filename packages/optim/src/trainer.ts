/**
 * The training loop. Each step: clear the tape, run the model over one batch (with the carried state for
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
 */
import { BufferPool, Random, Tape, Tensor, WeftError, backendOf, defaultBackend, meanSquaredError, reshape, resetGradients, crossEntropyAtTargets, zeros } from '@weft/core';
import type { Backend, FloatArray, RandomState } from '@weft/core';
import type { SequenceModel } from '@weft/cells';
import { joinSteps, lastSteps } from '@weft/cells';
import type { TokenBatch } from '@weft/cells';
import { limitGradientNorm, limitGradientValues, firstNonFiniteEntry, gradientNorm } from './clipping.js';
import type { Batch, DataSource } from './data.js';
import { classificationMetrics, regressionMetrics } from './metrics.js';
import type { UpdateRule, UpdateRuleState } from './update-rule.js';
import type { ScheduleDescription } from './schedule.js';
import { checkSchedule, scheduleFactor } from './schedule.js';

/** What a `Trainer` trains, on what, and how. */
export interface TrainerOptions {
  /** The model whose parameters are trained in place. */
  readonly model: SequenceModel;
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
  /** Seed of the trainer's generator (dropout masks); default 0. */
  readonly seed?: number | string;
  /** Ends `run()` after the current step when aborted (stoppedBy `signal`). */
  readonly signal?: AbortSignal;
  /** Called after each step, each validation, each skipped update and at the end. */
  readonly onProgress?: (event: TrainingEvent) => void;
  /** Awaited by `run()` after every step (for example to write a checkpoint every N steps). */
  readonly afterStep?: (trainer: Trainer) => void | Promise<void>;
}

/** What `onProgress` receives. */
export interface TrainingEvent {
  /** A step, a validation, an update skipped for a non-finite gradient, or the end of the run. */
  readonly kind: 'step' | 'validation' | 'skipped' | 'finished';
  /** Steps taken so far. */
  readonly step: number;
  /** The epoch in progress (from 0). */
  readonly epoch: number;
  /** Steps in the whole run. */
  readonly totalSteps: number;
  /** The latest step's training loss. */
  readonly loss: number;
  /** The global gradient norm of the latest step, before clipping. */
  readonly gradientNorm: number;
  /** The rate the latest update used (base rate × schedule). */
  readonly learningRate: number;
  /** Real (unpadded) positions trained per second in this run so far. */
  readonly positionsPerSecond: number;
  /** Estimated time to the end of the run, from the pace so far. */
  readonly secondsLeft: number;
  /** For a validation event: the validation loss. */
  readonly validationLoss?: number;
  /** Accuracy for classes, mean absolute error for values. */
  readonly validationMetric?: number;
  /** Which metric `validationMetric` is. */
  readonly validationMetricName?: 'accuracy' | 'meanAbsoluteError';
  /** For a skipped update: why (the parameter and offset of the first non-finite entry). */
  readonly reason?: string;
}

/** The model's figures on a validation source. */
export interface ValidationResult {
  /** Mean loss: cross-entropy in nats for classes, mean squared error for values. */
  readonly loss: number;
  /** Accuracy for classes, mean absolute error for values. */
  readonly metric: number;
  /** Which metric `metric` is. */
  readonly metricName: 'accuracy' | 'meanAbsoluteError';
  /** e^loss for classes (perplexity), else equal to the loss (mean squared error). */
  readonly perplexity: number;
}

/** Everything needed to resume a run exactly, as plain data (what a checkpoint stores). */
export interface TrainingSnapshot {
  /** Steps taken. */
  readonly step: number;
  /** Where the data stands: the next batch to train on. */
  readonly cursor: {
    /** The epoch of the next batch. */
    readonly epoch: number;
    /** The index of the next batch within its epoch. */
    readonly index: number;
  };
  /** The parameters' values, by name. */
  readonly parameters: Readonly<Record<string, readonly number[]>>;
  /** The update rule's state (moments, velocities, update count). */
  readonly optimizer: UpdateRuleState;
  /** The trainer's generator's state. */
  readonly random: RandomState;
  /** The state carried into the next window of a stream, slot by slot; null when none. */
  readonly carried: readonly (readonly number[])[] | null;
  /** The best validation so far, for early stopping and keeping the best weights. */
  readonly best: {
    /** The best validation loss so far (Infinity before the first validation). */
    readonly loss: number;
    /** The step of that validation (−1 before the first). */
    readonly step: number;
    /** The parameters at that validation, by name; null when none were kept. */
    readonly parameters: Readonly<Record<string, readonly number[]>> | null;
    /** Validations since the best one (the early-stopping count). */
    readonly stale: number;
  };
  /** Updates skipped so far for non-finite gradients. */
  readonly skipped: number;
}

/** How a `run()` ended. */
export interface TrainingSummary {
  /** Steps taken in all. */
  readonly steps: number;
  /** Why it ended: every epoch done, patience out (early stopping), or the abort signal. */
  readonly stoppedBy: 'epochs' | 'patience' | 'signal';
  /** The last step's training loss. */
  readonly lastLoss: number;
  /** The best validation's figures; null without validation data. */
  readonly bestValidation: ValidationResult | null;
  /** The step whose weights the model holds after the run: the best validation's when they were put back. */
  readonly keptStep: number;
  /** Updates skipped for non-finite gradients. */
  readonly skippedUpdates: number;
}

/**
 * Trains a sequence model: truncated backpropagation through time over streams (state carried between windows, with an
 * optional lookback) or padded sequence batches; clipping, schedules, validation, early stopping, progress and exact
 * snapshots.
 */
export class Trainer {
  /** The model being trained. */
  readonly model: SequenceModel;
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
  private bestLoss = Infinity;
  private bestStep = -1;
  private bestParameters: FloatArray[] | null = null;
  private stale = 0;
  private skipped = 0;
  private lastLoss = NaN;
  private bestValidation: ValidationResult | null = null;
  private startedAt = 0;
  private stepsThisRun = 0;
  private positionsThisRun = 0;

  constructor(options: TrainerOptions) {
    if (!Number.isInteger(options.epochs) || options.epochs < 1) {
      throw new WeftError({ code: 'invalid_option', path: 'trainer.epochs', expected: 'a whole number ≥ 1', received: String(options.epochs) });
    }
    if (options.schedule !== undefined) checkSchedule(options.schedule);
    // The names these options had before 0.2: refused by name, so a program written for them does not train unclipped.
    for (const [old, now] of [['clipNorm', 'gradientNormLimit'], ['clipValue', 'gradientValueLimit']] as const) {
      if (old in options) throw new WeftError({ code: 'invalid_option', path: `trainer.${old}`, expected: `trainer.${now} (the option's name now)`, received: `trainer.${old}` });
    }
    for (const [name, value] of [['gradientNormLimit', options.gradientNormLimit], ['gradientValueLimit', options.gradientValueLimit], ['validateEvery', options.validateEvery], ['patience', options.patience]] as const) {
      if (value !== undefined && !(value > 0)) throw new WeftError({ code: 'invalid_option', path: `trainer.${name}`, expected: 'a number > 0', received: String(value) });
    }
    if (options.keepBest !== undefined && typeof options.keepBest !== 'boolean') {
      throw new WeftError({ code: 'invalid_option', path: 'trainer.keepBest', expected: 'true or false', received: String(options.keepBest) });
    }
    this.options = options;
    this.model = options.model;
    this.parameters = options.model.parameters().map((p) => p.tensor);
    this.backend = options.backend ?? (this.parameters.length > 0 ? backendOf(this.parameters[0].data) : defaultBackend());
    this.parameters.forEach((p, i) => {
      if (!this.backend.holds(p.data)) {
        throw new WeftError({ code: 'backend_mismatch', path: `trainer.model.parameters[${i}] (${p.label()})`, expected: `a tensor in ${this.backend.name} memory (the trainer's backend)`, received: `a tensor in ${backendOf(p.data).name} memory` });
      }
    });
    this.pool = this.backend.createPool();
    this.tape = new Tape({ backend: this.backend, pool: this.pool });
    this.backup = this.parameters.map((p) => this.backend.pool.take(p.dtype, p.size));
    this.random = new Random(options.seed ?? 0);
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
    const { data, optimizer } = this.options;
    const batch = data.batch(this.epoch, this.index);
    if (data.carriesState && this.index === 0) this.releaseCarried();
    this.tape.clear();
    resetGradients(this.parameters);
    const result = this.forward(batch, data.carriesState && this.carried !== null ? this.carried : undefined);
    const loss = taskLoss(this.tape, result.outputs, batch);
    const value = loss.data[0];
    const stepNumber = this.stepCount + 1;
    if (!Number.isFinite(value)) {
      this.tape.clear();
      throw new WeftError({ code: 'not_finite', path: `training step ${stepNumber}: loss`, expected: 'a finite value', received: String(value), detail: 'the weights are those after the last finite step' });
    }
    this.tape.reverseSweep(loss);
    const multiplier = this.options.schedule === undefined ? 1 : scheduleFactor(this.options.schedule, this.stepCount);
    const badGradient = firstNonFiniteEntry(this.parameters, 'gradient');
    let norm = NaN;
    if (badGradient !== null) {
      this.skipped++;
      this.emit('skipped', value, NaN, multiplier, `non-finite gradient of ${badGradient.name}[${badGradient.offset}] = ${badGradient.value}; update skipped`);
    } else {
      norm = this.options.gradientNormLimit !== undefined ? limitGradientNorm(this.parameters, this.options.gradientNormLimit) : gradientNorm(this.parameters);
      if (this.options.gradientValueLimit !== undefined) limitGradientValues(this.parameters, this.options.gradientValueLimit);
      for (let i = 0; i < this.parameters.length; i++) this.backup[i].set(this.parameters[i].data);
      optimizer.update(this.parameters, multiplier);
      const badValue = firstNonFiniteEntry(this.parameters, 'values');
      if (badValue !== null) {
        for (let i = 0; i < this.parameters.length; i++) this.parameters[i].data.set(this.backup[i]);
        this.tape.clear();
        throw new WeftError({
          code: 'not_finite',
          path: `training step ${stepNumber}: parameter ${badValue.name}[${badValue.offset}]`,
          expected: 'a finite value after the update',
          received: String(badValue.value),
          detail: 'the update was undone; the weights are those after the last finite step',
        });
      }
    }
    if (data.carriesState) {
      if (this.carried === null) this.carried = result.carry.map((s) => this.tape.keep(s));
      else result.carry.forEach((s, i) => this.tape.keep(s, (this.carried as Tensor[])[i]));
    }
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

  /**
   * The model over one batch. With a lookback (`carryAfter` < steps) it runs in two pieces on one tape: the steps
   * up to `carryAfter`, whose final state is what the next batch starts from, then the rest from that state, so
   * the reverse sweep runs through all of them.
   */
  private forward(batch: Batch, initialState: readonly Tensor[] | undefined): { outputs: Tensor; carry: readonly Tensor[] } {
    const options = { lengths: batch.lengths, training: true, random: this.random };
    const split = batch.carryAfter;
    if (split === undefined || split >= batch.steps) {
      const result = this.model.run(this.tape, batch.input, { ...options, initialState });
      return { outputs: result.outputs, carry: result.state };
    }
    const [head, tail] = splitSteps(batch.input, split, batch.batch);
    let carry: readonly Tensor[];
    let headOutputs: Tensor | null = null;
    if (head === null) {
      carry = initialState ?? this.model.stateSlots().map((slot) => {
        const fresh = this.tape.output([batch.batch, slot.size], this.model.dtype, false);
        fresh.data.fill(0);
        return fresh;
      });
    } else {
      const first = this.model.run(this.tape, head, { ...options, initialState });
      carry = first.state;
      headOutputs = first.outputs;
    }
    const second = this.model.run(this.tape, tail, { ...options, initialState: carry });
    return { outputs: headOutputs === null ? second.outputs : joinSteps(this.tape, headOutputs, second.outputs), carry };
  }

  /** Loss and metric over a whole data source, without recording (state carried across stream windows). */
  validate(source: DataSource = this.requireValidation()): ValidationResult {
    const tape = new Tape({ backend: this.backend, pool: this.pool, recording: false });
    let carried: Tensor[] | null = null;
    let lossSum = 0;
    let metricSum = 0;
    let count = 0;
    let kind: 'classes' | 'values' = 'classes';
    for (let i = 0; i < source.batchesPerEpoch; i++) {
      const batch = source.batch(0, i);
      const result = this.model.run(tape, batch.input, { lengths: batch.lengths, initialState: source.carriesState && carried !== null ? carried : undefined });
      const { rows, outputs, weights } = taskRows(tape, result.outputs, batch);
      const targets = batch.targets;
      if (targets.kind === 'classes') {
        const m = classificationMetrics(outputs.data, targets.classes, weights, rows, outputs.shape[1]);
        lossSum += m.crossEntropy * m.count;
        metricSum += m.accuracy * m.count;
        count += m.count;
      } else {
        kind = 'values';
        const m = regressionMetrics(outputs.data, targets.values.data, weights, rows, targets.width);
        lossSum += m.meanSquaredError * m.count;
        metricSum += m.meanAbsoluteError * m.count;
        count += m.count;
      }
      if (source.carriesState) {
        const kept: Tensor[] = result.state.map((s, k) => (carried === null ? tape.keep(s) : tape.keep(s, (carried as Tensor[])[k])));
        carried = kept;
      }
      tape.clear();
    }
    // The carried state's buffers came from the trainer's pool: give them back for the next validation.
    if (carried !== null) for (const t of carried as Tensor[]) this.pool.give(t.data);
    const loss = count > 0 ? lossSum / count : 0;
    return {
      loss,
      metric: count > 0 ? metricSum / count : 0,
      metricName: kind === 'classes' ? 'accuracy' : 'meanAbsoluteError',
      perplexity: kind === 'classes' ? Math.exp(loss) : loss,
    };
  }

  /** Trains until the epochs are done, patience runs out, or the signal aborts; yields to the event loop now and then. */
  async run(): Promise<TrainingSummary> {
    const { signal, validation, validateEvery, patience } = this.options;
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
      this.step();
      const due = validation !== undefined && ((validateEvery !== undefined && this.stepCount % validateEvery === 0) || this.epoch !== epochBefore);
      if (due) {
        const result = this.validate();
        this.emit('validation', this.lastLoss, NaN, 1, undefined, result);
        if (result.loss < this.bestLoss) {
          this.bestLoss = result.loss;
          this.bestStep = this.stepCount;
          this.bestValidation = result;
          this.bestParameters ??= this.parameters.map((p) => this.backend.pool.take(p.dtype, p.size));
          this.parameters.forEach((p, i) => (this.bestParameters as FloatArray[])[i].set(p.data));
          this.stale = 0;
        } else if (patience !== undefined && ++this.stale >= patience) {
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
    if ((stoppedBy === 'patience' || (stoppedBy === 'epochs' && keepBest)) && this.bestParameters !== null) {
      this.parameters.forEach((p, i) => p.data.set((this.bestParameters as FloatArray[])[i]));
      keptStep = this.bestStep;
    }
    this.emit('finished', this.lastLoss, NaN, 1, stoppedBy);
    return { steps: this.stepCount, stoppedBy, lastLoss: this.lastLoss, bestValidation: this.bestValidation, keptStep, skippedUpdates: this.skipped };
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
      best: { loss: this.bestLoss, step: this.bestStep, parameters: this.bestParameters === null ? null : named(this.bestParameters), stale: this.stale },
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
          throw new WeftError({ code: 'shape_mismatch', path: `${where}.${name}`, expected: `${into[i].length} values`, received: values === undefined ? 'nothing' : `${values.length}` });
        }
        for (let k = 0; k < values.length; k++) into[i][k] = values[k];
      });
    };
    load(snapshot.parameters, this.parameters.map((p) => p.data), 'snapshot.parameters');
    this.options.optimizer.restore(snapshot.optimizer, this.parameters);
    this.random = Random.fromState(snapshot.random);
    this.stepCount = snapshot.step;
    this.epoch = snapshot.cursor.epoch;
    this.index = snapshot.cursor.index;
    if (snapshot.carried === null) {
      this.releaseCarried();
    } else {
      const slots = this.model.stateSlots();
      this.releaseCarried();
      this.carried = snapshot.carried.map((values, i) => {
        const t = zeros([values.length / slots[i].size, slots[i].size], this.model.dtype, this.pool);
        for (let k = 0; k < values.length; k++) t.data[k] = values[k];
        return t;
      });
    }
    this.bestLoss = snapshot.best.loss ?? Infinity;
    this.bestStep = snapshot.best.step;
    this.stale = snapshot.best.stale;
    if (snapshot.best.parameters === null) {
      this.bestParameters = null;
    } else {
      this.bestParameters = this.parameters.map((p) => this.backend.pool.take(p.dtype, p.size));
      load(snapshot.best.parameters, this.bestParameters, 'snapshot.best.parameters');
    }
    this.skipped = snapshot.skipped;
  }

  private requireValidation(): DataSource {
    if (this.options.validation === undefined) throw new WeftError({ code: 'invalid_option', path: 'trainer.validation', expected: 'a validation data source', received: 'nothing' });
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

function now(): number {
  return typeof performance !== 'undefined' ? performance.now() : Date.now();
}

/** The rows the loss is taken over: every step for per-step targets, each row's last valid step otherwise. */
function taskRows(tape: Tape, outputs: Tensor, batch: Batch): { rows: number; outputs: Tensor; weights: Float64Array | null } {
  const width = outputs.shape[2];
  const targets = batch.targets;
  if (targets.perStep) {
    const rows = batch.steps * batch.batch;
    let weights = targets.weights;
    if (weights === null && batch.lengths !== null) {
      const lengths = batch.lengths;
      weights = Float64Array.from({ length: rows }, (_, i) => (Math.floor(i / batch.batch) < lengths[i % batch.batch] ? 1 : 0));
    }
    return { rows, outputs: reshape(tape, outputs, [rows, width]), weights };
  }
  return { rows: batch.batch, outputs: lastSteps(tape, outputs, batch.lengths), weights: targets.weights };
}

function taskLoss(tape: Tape, outputs: Tensor, batch: Batch): Tensor {
  const { rows, outputs: picked, weights } = taskRows(tape, outputs, batch);
  const targets = batch.targets;
  if (targets.kind === 'classes') {
    if (targets.classes.length !== rows) {
      throw new WeftError({ code: 'shape_mismatch', path: 'trainer.batch.targets', expected: `${rows} classes`, received: `${targets.classes.length}` });
    }
    return crossEntropyAtTargets(tape, picked, targets.classes, weights === null ? {} : { weights });
  }
  if (picked.shape[1] !== targets.width) {
    throw new WeftError({ code: 'shape_mismatch', path: 'trainer.model.outputs', expected: `${targets.width} values per step (the target width)`, received: `${picked.shape[1]}` });
  }
  return meanSquaredError(tape, picked, targets.values, weights === null ? {} : { weights });
}

/** A time-major batch input cut after `split` steps (views, no copies); the first part is null when `split` is 0. */
function splitSteps(input: Tensor | TokenBatch, split: number, rows: number): [Tensor | TokenBatch | null, Tensor | TokenBatch] {
  if (!(input instanceof Tensor)) {
    const { tokens, steps, batch } = input;
    const tail: TokenBatch = { tokens: tokens.subarray(split * rows), steps: steps - split, batch };
    return [split === 0 ? null : { tokens: tokens.subarray(0, split * rows), steps: split, batch }, tail];
  }
  const [steps, , width] = input.shape;
  const cut = split * rows * width;
  const tail = new Tensor(input.data.subarray(cut), [steps - split, rows, width]);
  return [split === 0 ? null : new Tensor(input.data.subarray(0, cut), [split, rows, width]), tail];
}
