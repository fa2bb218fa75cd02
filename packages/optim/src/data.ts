/**
 * Training data in the shapes the trainer consumes, as batches in weft's time-major layout. Every source is
 * deterministic: batch `index` of epoch `epoch` is a pure function of the source, its seed and those two
 * numbers, so a data cursor { epoch, index } is all a checkpoint needs to resume exactly.
 *
 * - `streamBatches`: one long stream, or a corpus cut into B parallel streams (stream b is the b-th contiguous
 *   slice), read in windows of T steps; consecutive windows continue each stream, so the model's state carries
 *   across them (detached: truncated backpropagation through time, Williams & Peng 1990, with k1 = T new steps per
 *   update). With `lookback` L > 0 each window also re-reads the L steps before it, without loss on them, so the
 *   reverse sweep reaches k2 = T + L steps back (their algorithm BPTT(k2; k1) with k2 > k1); the state carried on
 *   is then the one L steps before the window's end. The tail that does not fill a whole window is left out.
 * - `sequenceBatches`: independent sequences of different lengths, sorted by length and cut into batches of
 *   similar lengths (so little padding), padded and masked; the batch order is shuffled each epoch by the seeded
 *   generator, and the state starts afresh for each batch.
 */
import { Random, backendOf, fail, zeros } from '@weft/core';
import type { DType, FloatArray, Tensor } from '@weft/core';
import type { TokenBatch } from '@weft/cells';

/** What the model must predict for a batch. */
export type BatchTargets =
  /** A class per step ([T·B], time-major) or per sequence ([B]); weights (1 real, 0 padding) per target. */
  | {
    /** Class targets (cross-entropy loss). */
    readonly kind: 'classes';
    /** True for a target at every step, false for one per sequence (read at its last valid step). */
    readonly perStep: boolean;
    /** The target class ids. */
    readonly classes: Int32Array;
    /** A weight per target (0 for padding); null when every target counts once. */
    readonly weights: Float64Array | null;
  }
  /** Values per step ([T·B, width]) or per sequence ([B, width]); weights per row. */
  | {
    /** Value targets (mean squared error). */
    readonly kind: 'values';
    /** True for targets at every step, false for one row per sequence. */
    readonly perStep: boolean;
    /** Values per target row. */
    readonly width: number;
    /** The target values, one row per target. */
    readonly values: Tensor;
    /** A weight per target row (0 for padding); null when every row counts once. */
    readonly weights: Float64Array | null;
  };

/** One batch, as a data source hands it to the trainer. */
export interface Batch {
  /** The inputs: numbers [T, B, features], or token ids (time-major). */
  readonly input: Tensor | TokenBatch;
  /** Time steps T. */
  readonly steps: number;
  /** Batch rows B. */
  readonly batch: number;
  /** Each row's length for a padded batch of sequences; null when every row runs T steps. */
  readonly lengths: Int32Array | null;
  /** What the model must predict. */
  readonly targets: BatchTargets;
  /** Real (unpadded) positions, for tokens per second. */
  readonly positions: number;
  /**
   * For streams with a lookback: after how many leading steps the state to carry into the next batch is taken
   * (absent: after the last step).
   */
  readonly carryAfter?: number;
}

/**
 * Where a trainer gets its batches: a fixed number per epoch, each addressed by epoch and index so a resumed run gets
 * the same batches.
 */
export interface DataSource {
  /** Batches in one epoch. */
  readonly batchesPerEpoch: number;
  /** True when the state after one batch is the starting state of the next (streams). */
  readonly carriesState: boolean;
  /**
   * One batch. The sources made here recycle: a batch's tensors are valid until the same source's next `batch()`
   * call, which gives their buffers back to their pool for the new batch (see BatchBuffers).
   */
  batch(epoch: number, index: number): Batch;
}

/**
 * The tensors of one batch at a time. A source keeps what it handed out and gives the buffers back to their pool
 * when it makes the next batch, so a long run reuses the same few buffers instead of taking new ones each step. On
 * the WebAssembly backend this is what keeps a run within its memory reservation: blocks of a WebAssembly memory
 * are not reclaimed by the garbage collector, only by being given back.
 */
class BatchBuffers {
  private issued: Tensor[] = [];

  /** Gives the previous batch's buffers back; call before making the next batch. */
  recycle(): void {
    for (const t of this.issued) backendOf(t.data).pool.give(t.data);
    this.issued = [];
  }

  keep(t: Tensor): Tensor {
    this.issued.push(t);
    return t;
  }
}

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
  if (!Number.isInteger(lookback) || lookback < 0 || lookback > window) fail('invalid_option', 'stream.lookback', `a whole number from 0 to the window (${window})`, String(lookback));
  if (data.kind === 'tokens') {
    const { tokens, vocabulary } = data;
    for (let i = 0; i < tokens.length; i++) {
      if (!(tokens[i] >= 0 && tokens[i] < vocabulary)) fail('bad_data', `stream.tokens[${i}]`, `an id in [0, ${vocabulary})`, String(tokens[i]));
    }
    // Pairs (input, next): N − 1 of them, split into `streams` contiguous slices.
    const perStream = Math.floor((tokens.length - 1) / streams);
    const windows = Math.floor(perStream / window);
    if (windows < 1) fail('bad_data', 'stream.tokens', `at least ${streams * window + 1} tokens for ${streams} streams of one ${window}-step window`, `${tokens.length}`);
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
    if (own.length !== rows * ownWidth) fail('bad_data', 'stream.targets', `${rows * ownWidth} values (${rows} rows × ${ownWidth}, as many rows as the values)`, `${own.length}`);
    for (let i = 0; i < own.length; i++) {
      if (!Number.isFinite(own[i])) fail('bad_data', `stream.targets[${Math.floor(i / ownWidth)}][${i % ownWidth}]`, 'a finite number', String(own[i]));
    }
  }
  const perStream = Math.floor((rows - horizon) / streams);
  const windows = Math.floor(perStream / window);
  if (windows < 1) fail('bad_data', 'stream.values', `at least ${streams * window + horizon} rows`, `${rows}`);
  const width = own === undefined ? columns.length : ownWidth;
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
      return {
        input: inputTensor,
        steps,
        batch: streams,
        lengths: null,
        targets: { kind: 'values', perStep: true, width, values: targetTensor, weights },
        positions: window * streams,
        carryAfter,
      };
    },
  };
}

/** One independent sequence: its inputs (token ids, or [L, features] numbers) and what to predict. */
export interface LabelledSequence {
  /** Token ids, one per step (for a model with embedding input). */
  readonly tokens?: Int32Array | readonly number[];
  /** Numbers, row-major [length, features] (for a model with numeric input). */
  readonly values?: FloatArray | readonly number[];
  /** A class for the whole sequence. */
  readonly label?: number;
  /** Values for the whole sequence. */
  readonly target?: readonly number[];
}

/** How a set of independent sequences is batched. */
export interface SequenceSetOptions {
  /** Sequences per batch. */
  readonly batchSize: number;
  /** Numbers per step for `values` sequences. */
  readonly features?: number;
  /** Seed of the shuffle of the batch order each epoch; default 0. */
  readonly seed?: number | string;
  /** Element type of the batches' tensors; default `f32`. */
  readonly dtype?: DType;
}

/**
 * Batches of independent sequences (for classifiers and sequence-to-value models), grouped by similar lengths, padded
 * and masked, in a batch order shuffled each epoch from the seed.
 */
export function sequenceBatches(sequences: readonly LabelledSequence[], options: SequenceSetOptions): DataSource {
  const { batchSize } = options;
  if (!Number.isInteger(batchSize) || batchSize < 1) fail('invalid_option', 'sequences.batchSize', 'a whole number ≥ 1', String(batchSize));
  if (sequences.length === 0) fail('bad_data', 'sequences', 'at least one sequence', '0');
  const features = options.features ?? 1;
  const dtype = options.dtype ?? 'f32';
  const usesTokens = sequences[0].tokens !== undefined;
  const usesLabels = sequences[0].label !== undefined;
  const targetWidth = usesLabels ? 0 : (sequences[0].target?.length ?? 0);
  const lengths = sequences.map((s, i) => {
    const length = usesTokens ? s.tokens?.length : s.values === undefined ? undefined : s.values.length / features;
    if (length === undefined || !Number.isInteger(length) || length < 1) {
      fail('bad_data', `sequences[${i}]`, usesTokens ? 'non-empty tokens' : `non-empty values, a multiple of ${features}`, String(length));
    }
    if (usesLabels ? !Number.isInteger(s.label) || (s.label as number) < 0 : s.target?.length !== targetWidth || targetWidth === 0) {
      fail('bad_data', `sequences[${i}]`, usesLabels ? 'a whole-number label ≥ 0' : `a target of ${targetWidth} values`, JSON.stringify(s.label ?? s.target));
    }
    return length;
  });
  // Sort by length (stable, by index for ties) and cut into batches of neighbours.
  const order = sequences.map((_, i) => i).sort((a, b) => lengths[a] - lengths[b] || a - b);
  const groups: number[][] = [];
  for (let i = 0; i < order.length; i += batchSize) groups.push(order.slice(i, i + batchSize));
  const seed = options.seed ?? 0;
  // The batch order of the epoch last asked for (a trainer asks for one epoch's batches in turn).
  let orderEpoch = -1;
  let batchOrder: number[] = [];
  const epochOrder = (epoch: number): number[] => {
    if (epoch !== orderEpoch) {
      batchOrder = groups.map((_, i) => i);
      new Random(`${String(seed)}:epoch:${epoch}`).shuffle(batchOrder);
      orderEpoch = epoch;
    }
    return batchOrder;
  };
  // What a group's batch holds that never changes (its lengths, classes, token ids), made at its first use and
  // handed out again, read-only, every epoch.
  interface GroupPlan {
    readonly steps: number;
    readonly lengths: Int32Array;
    readonly positions: number;
    readonly classes: Int32Array | null;
    readonly ids: Int32Array | null;
  }
  const plans: (GroupPlan | undefined)[] = new Array<GroupPlan | undefined>(groups.length);
  const planOf = (group: number): GroupPlan => {
    const known = plans[group];
    if (known !== undefined) return known;
    const members = groups[group];
    const rows = members.length;
    const steps = Math.max(...members.map((m) => lengths[m]));
    const batchLengths = Int32Array.from(members.map((m) => lengths[m]));
    let ids: Int32Array | null = null;
    if (usesTokens) {
      ids = new Int32Array(steps * rows);
      const into = ids;
      members.forEach((m, b) => {
        const tokens = sequences[m].tokens!;
        for (let t = 0; t < tokens.length; t++) into[t * rows + b] = tokens[t];
      });
    }
    const plan: GroupPlan = {
      steps,
      lengths: batchLengths,
      positions: batchLengths.reduce((s, l) => s + l, 0),
      classes: usesLabels ? Int32Array.from(members.map((m) => sequences[m].label as number)) : null,
      ids,
    };
    plans[group] = plan;
    return plan;
  };
  const buffers = new BatchBuffers();
  return {
    batchesPerEpoch: groups.length,
    carriesState: false,
    batch(epoch: number, index: number): Batch {
      buffers.recycle();
      const group = epochOrder(epoch)[index];
      const members = groups[group];
      const plan = planOf(group);
      const rows = members.length;
      const steps = plan.steps;
      let input: Tensor | TokenBatch;
      if (plan.ids !== null) {
        input = { tokens: plan.ids, steps, batch: rows };
      } else {
        // Padding stays zero: the buffer comes zeroed from the pool, and only each row's own steps are written.
        const values = buffers.keep(zeros([steps, rows, features], dtype));
        const flat = values.data;
        for (let b = 0; b < rows; b++) {
          const m = members[b];
          const v = sequences[m].values!;
          for (let t = 0; t < lengths[m]; t++) for (let f = 0; f < features; f++) flat[(t * rows + b) * features + f] = v[t * features + f];
        }
        input = values;
      }
      let targets: BatchTargets;
      if (plan.classes !== null) {
        targets = { kind: 'classes', perStep: false, classes: plan.classes, weights: null };
      } else {
        const values = buffers.keep(zeros([rows, targetWidth], dtype));
        for (let b = 0; b < rows; b++) {
          const target = sequences[members[b]].target!;
          for (let c = 0; c < targetWidth; c++) values.data[b * targetWidth + c] = target[c];
        }
        targets = { kind: 'values', perStep: false, width: targetWidth, values, weights: null };
      }
      return { input, steps, batch: rows, lengths: plan.lengths, targets, positions: plan.positions };
    },
  };
}
