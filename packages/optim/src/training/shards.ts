/**
 * Data-parallel training by fixed shards. The rows of a batch are cut into shards of `shardRows` rows (the last
 * may be smaller): a cut that depends on the batch alone, never on how many threads compute it. Each shard's
 * forward and reverse sweep runs on its own (its loss scaled by its share of the batch's loss weight, so the shards'
 * gradients add up to the batch's), each shard's dropout masks come from a generator seeded by the run's seed, the
 * step and the shard, and the gradients are added in shard order into one sum. Computed in this thread or by
 * worker threads (`ShardWorkers`), the sum is the same, bit for bit: every shard is the same arithmetic on the same
 * numbers, and the order of the additions is fixed.
 *
 * A shard travels to a worker as a `PlainBatch` (typed arrays only, for structured cloning); in this thread it is
 * rebuilt the same way, so both paths start from the same numbers.
 */
import { Random, Tensor, resetGradients, scale } from '@weft/core';
import type { BufferPool, DType, FloatArray, Tape } from '@weft/core';
import type { TokenBatch } from '@weft/cells';
import type { Batch, BatchTargets } from '../data.js';
import { forwardWithLookback } from './lookback.js';
import type { TrainableModel } from './lookback.js';
import { taskLoss } from './task.js';

/** The row ranges [from, to) of `rows` rows cut into shards of `shardRows` rows. */
export function shardRanges(rows: number, shardRows: number): [number, number][] {
  const ranges: [number, number][] = [];
  for (let from = 0; from < rows; from += shardRows) ranges.push([from, Math.min(rows, from + shardRows)]);
  return ranges;
}

/** The total weight of a batch's loss positions: what its loss is a weighted mean over. */
export function lossWeight(batch: Batch): number {
  return weightOf(batch.targets.weights, batch.targets.perStep, batch.lengths, batch.steps, batch.batch);
}

/** The same total for a shard in its plain form (what a job's share is computed from). */
export function plainLossWeight(plain: PlainBatch): number {
  return weightOf(plain.weights, plain.perStep, plain.lengths, plain.steps, plain.rows);
}

/** Σ weights when there are weights; else the valid positions (per-step targets) or the rows. */
function weightOf(weights: Float64Array | null, perStep: boolean, lengths: Int32Array | null, steps: number, rows: number): number {
  let total = 0;
  if (weights !== null) {
    for (let i = 0; i < weights.length; i++) total += weights[i];
    return total;
  }
  if (!perStep) return rows;
  if (lengths === null) return steps * rows;
  for (let b = 0; b < rows; b++) total += lengths[b];
  return total;
}

/** A batch as typed arrays only (structured-clone-able), for a worker. */
export interface PlainBatch {
  /** Time steps T. */
  readonly steps: number;
  /** Rows of the shard. */
  readonly rows: number;
  /** Token ids [T·rows] for an embedding input, else null. */
  readonly tokens: Int32Array | null;
  /** Numbers [T·rows·width] for a values input, else null. */
  readonly values: FloatArray | null;
  /** Numbers per step of a values input (1 for tokens). */
  readonly width: number;
  /** Each row's length, or null when every row runs T steps. */
  readonly lengths: Int32Array | null;
  /** The batch's `carryAfter`, or null. */
  readonly carryAfter: number | null;
  /** Real (unpadded) positions of the shard. */
  readonly positions: number;
  /** Class targets or value targets. */
  readonly targetKind: 'classes' | 'values';
  /** A target at every step, or one per row. */
  readonly perStep: boolean;
  /** The class targets (time-major for per-step targets), or null. */
  readonly classes: Int32Array | null;
  /** The value targets, one row of `targetWidth` per target, or null. */
  readonly targetValues: FloatArray | null;
  /** Values per target row (1 for classes). */
  readonly targetWidth: number;
  /** A weight per target, or null. */
  readonly weights: Float64Array | null;
  /** The sources of a batch of pairs [sourceSteps·rows], or null. */
  readonly sourceTokens: Int32Array | null;
  /** Source steps S of a batch of pairs (0 otherwise). */
  readonly sourceSteps: number;
  /** Each row's source length, or null. */
  readonly sourceLengths: Int32Array | null;
}

/** Rows [from, to) of a time-major array of `rows` rows × `width` numbers per step. */
function rowsOf<T extends Int32Array | Float32Array | Float64Array>(array: T, steps: number, rows: number, width: number, from: number, to: number): T {
  const out = new (array.constructor as new (n: number) => T)(steps * (to - from) * width);
  const w = (to - from) * width;
  for (let t = 0; t < steps; t++) out.set(array.subarray((t * rows + from) * width, (t * rows + to) * width), t * w);
  return out;
}

/** Rows [from, to) of `batch`, as a plain batch of their own. */
export function shardOf(batch: Batch, from: number, to: number): PlainBatch {
  const { steps, batch: rows } = batch;
  const input = batch.input;
  const tokens = input instanceof Tensor ? null : rowsOf(input.tokens, steps, rows, 1, from, to);
  const width = input instanceof Tensor ? input.shape[2] : 1;
  const values = input instanceof Tensor ? rowsOf(input.data, steps, rows, width, from, to) : null;
  const lengths = batch.lengths === null ? null : batch.lengths.slice(from, to);
  const targets: BatchTargets = batch.targets;
  const targetSteps = targets.perStep ? steps : 1;
  const targetWidth = targets.kind === 'values' ? targets.width : 1;
  const source = batch.source;
  let positions = 0;
  for (let b = from; b < to; b++) positions += batch.lengths === null ? steps : batch.lengths[b];
  return {
    steps,
    rows: to - from,
    tokens,
    values,
    width,
    lengths,
    carryAfter: batch.carryAfter ?? null,
    positions,
    targetKind: targets.kind,
    perStep: targets.perStep,
    classes: targets.kind === 'classes' ? rowsOf(targets.classes, targetSteps, rows, 1, from, to) : null,
    targetValues: targets.kind === 'values' ? rowsOf(targets.values.data, targetSteps, rows, targetWidth, from, to) : null,
    targetWidth,
    // Weights per target row, or per target value (the width of a row of values).
    weights:
      targets.weights === null ? null : rowsOf(targets.weights, targetSteps, rows, targets.weights.length === targetSteps * rows ? 1 : targetWidth, from, to),
    sourceTokens: source === undefined ? null : rowsOf(source.tokens.tokens, source.tokens.steps, rows, 1, from, to),
    sourceSteps: source === undefined ? 0 : source.tokens.steps,
    sourceLengths: source === undefined ? null : source.lengths.slice(from, to),
  };
}

/** A plain batch as a Batch, its numbers copied into buffers of `pool` (handed to `made`, to give back later). */
export function batchOf(plain: PlainBatch, dtype: DType, pool: BufferPool, made: FloatArray[]): Batch {
  const tensor = (data: FloatArray, shape: number[]): Tensor => {
    const buffer = pool.take(dtype, data.length);
    buffer.set(data);
    made.push(buffer);
    return new Tensor(buffer, shape);
  };
  const input: Tensor | TokenBatch =
    plain.tokens !== null
      ? { tokens: plain.tokens, steps: plain.steps, batch: plain.rows }
      : tensor(plain.values as FloatArray, [plain.steps, plain.rows, plain.width]);
  const targetRows = plain.perStep ? plain.steps * plain.rows : plain.rows;
  const targets: BatchTargets =
    plain.targetKind === 'classes'
      ? { kind: 'classes', perStep: plain.perStep, classes: plain.classes as Int32Array, weights: plain.weights }
      : {
          kind: 'values',
          perStep: plain.perStep,
          width: plain.targetWidth,
          values: tensor(plain.targetValues as FloatArray, [targetRows, plain.targetWidth]),
          weights: plain.weights,
        };
  return {
    input,
    steps: plain.steps,
    batch: plain.rows,
    lengths: plain.lengths,
    targets,
    positions: plain.positions,
    ...(plain.carryAfter === null ? {} : { carryAfter: plain.carryAfter }),
    ...(plain.sourceTokens === null
      ? {}
      : { source: { tokens: { tokens: plain.sourceTokens, steps: plain.sourceSteps, batch: plain.rows }, lengths: plain.sourceLengths as Int32Array } }),
  };
}

/** The generator of one shard's dropout masks: the run's seed, the step and the shard, nothing else. */
export function shardSeed(seed: number | string, step: number, shard: number): string {
  return `${String(seed)}:step ${step}:shard ${shard}`;
}

/** What one shard's computation gives: its scaled loss and its rows' final state (for streams). */
export interface ShardOutcome {
  /** The shard's loss times its share of the batch's loss weight. */
  readonly loss: number;
  /** The state to carry, [rows, width] per slot; empty when the model carries none. */
  readonly state: FloatArray[];
}

/**
 * One shard's forward and reverse sweep on `tape` (cleared first): the parameters' gradients are the shard's
 * (scaled by `share`) afterwards.
 */
export function shardGradients(
  model: TrainableModel,
  parameters: readonly Tensor[],
  tape: Tape,
  batch: Batch,
  initialState: readonly Tensor[] | undefined,
  seed: string,
  share: number,
): ShardOutcome {
  tape.clear();
  resetGradients(parameters);
  const result = forwardWithLookback(model, tape, batch, initialState, new Random(seed));
  const loss = scale(tape, taskLoss(tape, result.outputs, batch), share);
  const value = loss.data[0];
  if (Number.isFinite(value)) tape.reverseSweep(loss);
  return { loss: value, state: result.carry.map((s) => s.data.slice()) };
}

/**
 * One job computed in the calling thread on `model` (whose parameter tensors are `parameters`): the shard's
 * gradients written in parameter order into `into` from offset `at` (zeros for a parameter the shard did not reach),
 * then the tape cleared and the pooled buffers given back. A training thread and the trainer's own thread both run
 * it, so a shard is the same arithmetic wherever it is computed.
 */
export function computeJob(
  model: TrainableModel,
  parameters: readonly Tensor[],
  tape: Tape,
  pool: BufferPool,
  job: ShardJob,
  into: FloatArray,
  at: number,
): ShardOutcome {
  const dtype = model.dtype;
  const made: FloatArray[] = [];
  try {
    const batch = batchOf(job.batch, dtype, pool, made);
    const rows = job.batch.rows;
    const initial =
      job.state === null
        ? undefined
        : job.state.map((values) => {
            const buffer = pool.take(dtype, values.length);
            buffer.set(values);
            made.push(buffer);
            return new Tensor(buffer, [rows, values.length / rows]);
          });
    const outcome = shardGradients(model, parameters, tape, batch, initial, job.seed, job.share);
    let offset = at;
    for (const p of parameters) {
      if (p.gradient === null) into.fill(0, offset, offset + p.size);
      else into.set(p.gradient, offset);
      offset += p.size;
    }
    return outcome;
  } finally {
    tape.clear();
    for (const array of made) pool.give(array);
  }
}

/** The work of one step for `ShardWorkers`: every shard's batch, state rows, generator seed and share. */
export interface ShardJob {
  /** The shard's number in the batch (its place in the sum). */
  readonly shard: number;
  /** The shard's rows of the batch. */
  readonly batch: PlainBatch;
  /** The shard's rows of the carried state, per slot; null to start from zeros. */
  readonly state: FloatArray[] | null;
  /** The seed of the shard's dropout masks (`shardSeed`). */
  readonly seed: string;
  /** The shard's share of the batch's loss weight, its loss's scale. */
  readonly share: number;
}

/**
 * Computes one job in the caller's thread, writing its gradients (every parameter's, in order) into `into` from
 * offset `at`: what `ShardWorkers.compute` calls for the shards it leaves to the caller (see `computeJob`).
 */
export type ComputeHere = (job: ShardJob, into: FloatArray, at: number) => ShardOutcome;

/**
 * Threads that compute shards (see `startTrainingThreads` in `@weft/optim/node`): each call publishes the weights,
 * hands the jobs out, and resolves when every shard's gradients are in `gradient(shard, parameter)`.
 */
export interface ShardWorkers {
  /** How many threads compute, the caller's own thread included when it takes shards (`here`). */
  readonly count: number;
  /**
   * Computes `jobs` of step `step` with `weights` (the parameters' values, in parameter order); the shards it
   * leaves to the caller's thread are computed with `here` while the other threads compute theirs.
   */
  compute(step: number, weights: readonly FloatArray[], jobs: readonly ShardJob[], here?: ComputeHere): Promise<ShardOutcome[]>;
  /** The gradient of parameter `parameter` from shard `shard` of the last `compute`. */
  gradient(shard: number, parameter: number): FloatArray;
  /** Ends every thread. */
  close(): Promise<void>;
}
