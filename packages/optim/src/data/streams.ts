/**
 * Batches over long streams (see data.ts): value series for forecasting and token streams for next-token models.
 *
 * Why one file of this length: training's streams (tokens and values) and evaluation's whole stream read the same
 * options and cut windows by the same plan (windowPlan), each in functions of its own.
 */
import { fail, zeros } from '@weft/core';
import type { DType, FloatArray } from '@weft/core';
import { BatchBuffers } from './buffers.js';
import type { Batch, DataSource } from './batch-types.js';

/** A long stream of token ids, for next-token models. */
export interface TokenStreamOptions {
  /** Marks a token stream. */
  readonly kind: 'tokens';
  /** The corpus as token ids; the target at each position is the next id. */
  readonly tokens: Int32Array;
  /** How many distinct ids there are; every id must be below it. */
  readonly vocabulary: number;
}

/** A long series of numbers, for forecasting. */
export interface ValueStreamOptions {
  /** Marks a value stream. */
  readonly kind: 'values';
  /** Row-major [N, features]. */
  readonly values: FloatArray | readonly number[];
  /** Numbers per row (the model's input width). */
  readonly features: number;
  /** Columns to predict (default all). */
  readonly targetColumns?: readonly number[];
  /**
   * What to predict instead of columns of `values`: row-major [N, targetWidth], row t + horizon being the target of
   * step t (for targets derived from the values, such as differences). `targetColumns` is then not used.
   */
  readonly targets?: FloatArray | readonly number[];
  /** Numbers per row of `targets`. */
  readonly targetWidth?: number;
  /**
   * A weight per target value, row-major [N, target width] like `targets` (row t + horizon weighs step t's targets):
   * 0 for a value never observed, which then counts in no loss. Default 1 each.
   */
  readonly targetWeights?: FloatArray | readonly number[];
  /** Predict the value this many steps ahead (default 1). */
  readonly horizon?: number;
  /** Element type of the batches' tensors; default `f32`. */
  readonly dtype?: DType;
}

/**
 * How a stream is cut into batches: B parallel streams through the data, T steps per window, the state carried from one
 * window to the next.
 */
export interface StreamOptions {
  /** Parallel streams B (default 1). */
  readonly streams?: number;
  /** Window length T: new steps per update (k1). */
  readonly window: number;
  /** Extra steps before each window that the reverse sweep runs through (k2 − k1), at most T. Default 0. */
  readonly lookback?: number;
}

/**
 * Where window `index` starts and how its lookback, loss weights and carried state fall. The weights (0 over the
 * lookback steps, 1 over the window's own) depend only on how many steps are skipped, so each distinct one is made
 * once and kept in `weightsBySkipped`; batches hand out the same read-only array.
 */
function windowPlan(index: number, window: number, lookback: number, streams: number, weightsBySkipped: Map<number, Float64Array>) {
  const start = index * window;
  const begin = Math.max(0, start - lookback);
  const steps = start + window - begin;
  const skipped = start - begin;
  const carryAfter = Math.max(0, (index + 1) * window - lookback - begin);
  let weights: Float64Array | null = null;
  if (skipped > 0) {
    weights = weightsBySkipped.get(skipped) ?? null;
    if (weights === null) {
      weights = new Float64Array(steps * streams).fill(1);
      weights.fill(0, 0, skipped * streams);
      weightsBySkipped.set(skipped, weights);
    }
  }
  return { begin, steps, carryAfter: lookback > 0 ? carryAfter : undefined, weights };
}

/**
 * Batches over a long stream for truncated backpropagation through time: the data is cut into `streams` equal parts
 * read side by side, `window` steps per batch, each batch continuing where the last ended.
 */
export function streamBatches(data: TokenStreamOptions | ValueStreamOptions, options: StreamOptions): DataSource {
  const streams = options.streams ?? 1;
  const window = options.window;
  if (!Number.isInteger(streams) || streams < 1) fail('invalid_option', 'stream.streams', 'a whole number ≥ 1', String(streams));
  if (!Number.isInteger(window) || window < 1) fail('invalid_option', 'stream.window', 'a whole number ≥ 1', String(window));
  const lookback = options.lookback ?? 0;
  if (!Number.isInteger(lookback) || lookback < 0 || lookback > window)
    fail('invalid_option', 'stream.lookback', `a whole number from 0 to the window (${window})`, String(lookback));
  const plan: StreamPlan = { streams, window, lookback };
  return data.kind === 'tokens' ? tokenStreams(data, plan) : valueStreams(data, plan);
}

/** The streams' layout: how many, the window's steps, and the lookback before it. */
interface StreamPlan {
  readonly streams: number;
  readonly window: number;
  readonly lookback: number;
}

/** Token streams: pairs (input, next), N − 1 of them, split into `streams` contiguous slices. */
function tokenStreams(data: TokenStreamOptions, { streams, window, lookback }: StreamPlan): DataSource {
  const { tokens, vocabulary } = data;
  for (let i = 0; i < tokens.length; i++) {
    if (!(tokens[i] >= 0 && tokens[i] < vocabulary)) fail('bad_data', `stream.tokens[${i}]`, `an id in [0, ${vocabulary})`, String(tokens[i]));
  }
  // Pairs (input, next): N − 1 of them, split into `streams` contiguous slices.
  const perStream = Math.floor((tokens.length - 1) / streams);
  const windows = Math.floor(perStream / window);
  if (windows < 1)
    fail('bad_data', 'stream.tokens', `at least ${streams * window + 1} tokens for ${streams} streams of one ${window}-step window`, `${tokens.length}`);
  const weightsBySkipped = new Map<number, Float64Array>();
  // The id and target arrays of a batch, by its number of steps (a window, or a window and its lookback): refilled
  // by each batch, valid until the next `batch()` call, as for every source.
  const arraysBySteps = new Map<number, { ids: Int32Array; classes: Int32Array }>();
  return {
    batchesPerEpoch: windows,
    carriesState: true,
    batch(_epoch: number, index: number): Batch {
      const { begin, steps, carryAfter, weights } = windowPlan(index, window, lookback, streams, weightsBySkipped);
      let arrays = arraysBySteps.get(steps);
      if (arrays === undefined) {
        arrays = { ids: new Int32Array(steps * streams), classes: new Int32Array(steps * streams) };
        arraysBySteps.set(steps, arrays);
      }
      const { ids, classes } = arrays;
      for (let t = 0; t < steps; t++) {
        for (let b = 0; b < streams; b++) {
          const at = b * perStream + begin + t;
          ids[t * streams + b] = tokens[at];
          classes[t * streams + b] = tokens[at + 1];
        }
      }
      return {
        input: { tokens: ids, steps, batch: streams },
        steps,
        batch: streams,
        lengths: null,
        targets: { kind: 'classes', perStep: true, classes, weights },
        positions: window * streams,
        carryAfter,
      };
    },
  };
}

/** A value stream's data, checked: rows, the horizon, the target columns (or its own targets) and their width. */
function checkValueStream(data: ValueStreamOptions) {
  const { values, features } = data;
  const horizon = data.horizon ?? 1;
  const columns = data.targetColumns ?? Array.from({ length: features }, (_, i) => i);
  const dtype = data.dtype ?? 'f32';
  if (!Number.isInteger(features) || features < 1) fail('invalid_option', 'stream.features', 'a whole number ≥ 1', String(features));
  if (values.length % features !== 0) fail('bad_data', 'stream.values', `a multiple of ${features} values (rows × features)`, `${values.length}`);
  if (!Number.isInteger(horizon) || horizon < 1) fail('invalid_option', 'stream.horizon', 'a whole number ≥ 1', String(horizon));
  columns.forEach((c, i) => {
    if (!Number.isInteger(c) || c < 0 || c >= features) fail('invalid_option', `stream.targetColumns[${i}]`, `a column in [0, ${features})`, String(c));
  });
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) fail('bad_data', `stream.values[${Math.floor(i / features)}][${i % features}]`, 'a finite number', String(values[i]));
  }
  const rows = values.length / features;
  const own = data.targets;
  const ownWidth = data.targetWidth ?? 1;
  if (own !== undefined) {
    if (!Number.isInteger(ownWidth) || ownWidth < 1) fail('invalid_option', 'stream.targetWidth', 'a whole number ≥ 1', String(ownWidth));
    if (own.length !== rows * ownWidth)
      fail('bad_data', 'stream.targets', `${rows * ownWidth} values (${rows} rows × ${ownWidth}, as many rows as the values)`, `${own.length}`);
    for (let i = 0; i < own.length; i++) {
      if (!Number.isFinite(own[i])) fail('bad_data', `stream.targets[${Math.floor(i / ownWidth)}][${i % ownWidth}]`, 'a finite number', String(own[i]));
    }
  }
  return { values, features, rows, horizon, columns, dtype, own, ownWidth };
}

/** Value streams: every row's values in, the target columns `horizon` rows on (or the data's own targets) out. */
function valueStreams(data: ValueStreamOptions, { streams, window, lookback }: StreamPlan): DataSource {
  const { values, features, rows, horizon, columns, dtype, own, ownWidth } = checkValueStream(data);
  const perStream = Math.floor((rows - horizon) / streams);
  const windows = Math.floor(perStream / window);
  if (windows < 1) fail('bad_data', 'stream.values', `at least ${streams * window + horizon} rows`, `${rows}`);
  const width = own === undefined ? columns.length : ownWidth;
  const valueWeights = data.targetWeights;
  let weightBuffer = new Float64Array(0);
  if (valueWeights !== undefined) {
    if (valueWeights.length !== rows * width)
      fail('bad_data', 'stream.targetWeights', `${rows * width} weights (${rows} rows × ${width} targets)`, `${valueWeights.length}`);
    for (let i = 0; i < valueWeights.length; i++) {
      if (!(valueWeights[i] >= 0 && Number.isFinite(valueWeights[i])))
        fail('bad_data', `stream.targetWeights[${Math.floor(i / width)}][${i % width}]`, 'a finite weight ≥ 0', String(valueWeights[i]));
    }
  }
  const buffers = new BatchBuffers();
  const weightsBySkipped = new Map<number, Float64Array>();
  return {
    batchesPerEpoch: windows,
    carriesState: true,
    batch(_epoch: number, index: number): Batch {
      buffers.recycle();
      const { begin, steps, carryAfter, weights } = windowPlan(index, window, lookback, streams, weightsBySkipped);
      // Filled in place in buffers from the pool (given back at the next batch): every entry is written below.
      const inputTensor = buffers.keep(zeros([steps, streams, features], dtype));
      const targetTensor = buffers.keep(zeros([steps * streams, width], dtype));
      const input = inputTensor.data;
      const target = targetTensor.data;
      for (let t = 0; t < steps; t++) {
        for (let b = 0; b < streams; b++) {
          const row = b * perStream + begin + t;
          const at = t * streams + b;
          for (let f = 0; f < features; f++) input[at * features + f] = values[row * features + f];
          if (own === undefined) for (let c = 0; c < width; c++) target[at * width + c] = values[(row + horizon) * features + columns[c]];
          else for (let c = 0; c < width; c++) target[at * width + c] = own[(row + horizon) * width + c];
        }
      }
      // With weights per target value: each one times its row's weight (0 over a lookback).
      let batchWeights: Float64Array | null = weights;
      if (valueWeights !== undefined) {
        // Kept, like the tensors, until the next batch is asked for.
        if (weightBuffer.length !== steps * streams * width) weightBuffer = new Float64Array(steps * streams * width);
        batchWeights = weightBuffer;
        for (let t = 0; t < steps; t++) {
          for (let b = 0; b < streams; b++) {
            const row = b * perStream + begin + t;
            const at = t * streams + b;
            const rowWeight = weights === null ? 1 : weights[at];
            for (let c = 0; c < width; c++) batchWeights[at * width + c] = rowWeight * valueWeights[(row + horizon) * width + c];
          }
        }
      }
      return {
        input: inputTensor,
        steps,
        batch: streams,
        lengths: null,
        targets: { kind: 'values', perStep: true, width, values: targetTensor, weights: batchWeights },
        positions: window * streams,
        carryAfter,
      };
    },
  };
}

/** How `wholeStream` reads one stream for evaluation. */
export interface WholeStreamOptions {
  /** Steps per batch; the last batch holds what is left, so no position is dropped. */
  readonly window: number;
  /** Positions before this one carry state only (loss weight 0): the warm-up before the rows scored. Default 0. */
  readonly scoredFrom?: number;
}

/**
 * One stream read whole for evaluation: every position that has a target (N − horizon of them for values, N − 1
 * for tokens) is in exactly one batch, `window` steps at a time with a shorter last batch, the state carried
 * across; positions before `scoredFrom` weigh 0. Where `streamBatches` drops the rows that do not fill a window
 * (right for training), this scores exactly the positions asked for.
 */
export function wholeStream(data: TokenStreamOptions | ValueStreamOptions, options: WholeStreamOptions): DataSource {
  const window = options.window;
  const scoredFrom = options.scoredFrom ?? 0;
  if (!Number.isInteger(window) || window < 1) fail('invalid_option', 'stream.window', 'a whole number ≥ 1', String(window));
  const features = data.kind === 'values' ? data.features : 1;
  const rows = data.kind === 'values' ? data.values.length / features : data.tokens.length;
  const horizon = data.kind === 'values' ? (data.horizon ?? 1) : 1;
  const total = rows - horizon;
  if (!(Number.isInteger(scoredFrom) && scoredFrom >= 0 && scoredFrom < total))
    fail('invalid_option', 'stream.scoredFrom', `a position in [0, ${total})`, String(scoredFrom));
  const batches = Math.ceil(total / window);
  // Targets per row of a value stream (for slicing its weights per target value).
  const valueWidth = data.kind === 'values' ? (data.targets === undefined ? (data.targetColumns?.length ?? features) : (data.targetWidth ?? 1)) : 1;
  // Each batch is read from a one-window source over the batch's own rows (with the horizon after them).
  const sliceOf = (index: number) => {
    const begin = index * window;
    const steps = Math.min(window, total - begin);
    const end = begin + steps + horizon;
    const source =
      data.kind === 'values'
        ? streamBatches(
            {
              ...data,
              values: data.values.slice(begin * features, end * features),
              ...(data.targets === undefined ? {} : { targets: data.targets.slice(begin * (data.targetWidth ?? 1), end * (data.targetWidth ?? 1)) }),
              ...(data.targetWeights === undefined ? {} : { targetWeights: data.targetWeights.slice(begin * valueWidth, end * valueWidth) }),
            },
            { window: steps },
          )
        : streamBatches({ ...data, tokens: data.tokens.subarray(begin, end) }, { window: steps });
    let weights: Float64Array | null = null;
    if (begin < scoredFrom) {
      weights = new Float64Array(steps).fill(1);
      weights.fill(0, 0, Math.min(steps, scoredFrom - begin));
    }
    return { source, weights, scored: steps - Math.max(0, Math.min(steps, scoredFrom - begin)) };
  };
  const slices = Array.from({ length: batches }, (_, i) => sliceOf(i));
  return {
    batchesPerEpoch: batches,
    carriesState: true,
    batch(_epoch: number, index: number): Batch {
      const { source, weights, scored } = slices[index];
      const batch = source.batch(0, 0);
      let combined = weights ?? batch.targets.weights;
      if (weights !== null && batch.targets.weights !== null) {
        // Weights per target value (from targetWeights) times the warm-up's weight of their row.
        const perValue = batch.targets.weights;
        const width = perValue.length / weights.length;
        combined = perValue.map((w, i) => w * weights[Math.floor(i / width)]);
      }
      return { ...batch, targets: { ...batch.targets, weights: combined } as Batch['targets'], positions: scored };
    },
  };
}
