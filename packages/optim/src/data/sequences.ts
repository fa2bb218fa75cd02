/** Batches of independent, padded sequences (see data.ts), for classifiers and sequence-to-value models. */
import { Random, fail, zeros } from '@weft/core';
import type { DType, FloatArray, Tensor } from '@weft/core';
import type { TokenBatch } from '@weft/cells';
import { BatchBuffers } from './buffers.js';
import type { Batch, BatchTargets, DataSource } from './batch-types.js';

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
  /**
   * A weight per target value (0 for a value never observed: it then counts in no loss); default 1 each. When any
   * sequence has them, every batch carries one weight per target value.
   */
  readonly targetWeights?: readonly number[];
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
  const weighted = !usesLabels && sequences.some((s) => s.targetWeights !== undefined);
  const lengths = checkedLengths(sequences, { features, usesTokens, usesLabels, targetWidth });
  const { groups, epochOrder } = neighbourBatches(
    sequences.map((_, i) => i).sort((a, b) => lengths[a] - lengths[b] || a - b),
    batchSize,
    options.seed ?? 0,
  );
  const plans: (GroupPlan | undefined)[] = new Array<GroupPlan | undefined>(groups.length);
  const planOf = (group: number): GroupPlan => {
    plans[group] ??= groupPlan(groups[group], lengths, sequences, usesTokens, usesLabels);
    return plans[group];
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
        let weights: Float64Array | null = null;
        if (weighted) {
          weights = new Float64Array(rows * targetWidth);
          for (let b = 0; b < rows; b++) {
            const given = sequences[members[b]].targetWeights;
            for (let c = 0; c < targetWidth; c++) weights[b * targetWidth + c] = given === undefined ? 1 : given[c];
          }
        }
        targets = { kind: 'values', perStep: false, width: targetWidth, values, weights };
      }
      return { input, steps, batch: rows, lengths: plan.lengths, targets, positions: plan.positions };
    },
  };
}

/** Each sequence's length (steps), every sequence checked against the first's kind of input and target. */
function checkedLengths(
  sequences: readonly LabelledSequence[],
  kind: { features: number; usesTokens: boolean; usesLabels: boolean; targetWidth: number },
): number[] {
  const { features, usesTokens, usesLabels, targetWidth } = kind;
  return sequences.map((s, i) => {
    const length = usesTokens ? s.tokens?.length : s.values === undefined ? undefined : s.values.length / features;
    if (length === undefined || !Number.isInteger(length) || length < 1) {
      fail('bad_data', `sequences[${i}]`, usesTokens ? 'non-empty tokens' : `non-empty values, a multiple of ${features}`, String(length));
    }
    if (usesLabels ? !Number.isInteger(s.label) || (s.label as number) < 0 : s.target?.length !== targetWidth || targetWidth === 0) {
      fail('bad_data', `sequences[${i}]`, usesLabels ? 'a whole-number label ≥ 0' : `a target of ${targetWidth} values`, JSON.stringify(s.label ?? s.target));
    }
    if (s.targetWeights !== undefined && (s.targetWeights.length !== targetWidth || !s.targetWeights.every((w) => w >= 0 && Number.isFinite(w)))) {
      fail('bad_data', `sequences[${i}].targetWeights`, `${targetWidth} finite weights ≥ 0, one per target value`, JSON.stringify(s.targetWeights));
    }
    return length;
  });
}

/** What a group's batch holds that never changes (its lengths, classes, token ids), made at its first use and handed out again, read-only, every epoch. */
interface GroupPlan {
  readonly steps: number;
  readonly lengths: Int32Array;
  readonly positions: number;
  readonly classes: Int32Array | null;
  readonly ids: Int32Array | null;
}

/** A group's plan (see GroupPlan). */
function groupPlan(
  members: readonly number[],
  lengths: readonly number[],
  sequences: readonly LabelledSequence[],
  usesTokens: boolean,
  usesLabels: boolean,
): GroupPlan {
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
  return {
    steps,
    lengths: batchLengths,
    positions: batchLengths.reduce((s, l) => s + l, 0),
    classes: usesLabels ? Int32Array.from(members.map((m) => sequences[m].label as number)) : null,
    ids,
  };
}

/**
 * Items in `order` (sorted by length, ties by index) cut into batches of `batchSize` neighbours, and each epoch's
 * batch order: shuffled by a generator seeded with the seed and the epoch, so it depends on nothing else (the order
 * of the epoch last asked for is kept, as a trainer asks for one epoch's batches in turn).
 */
export function neighbourBatches(
  order: readonly number[],
  batchSize: number,
  seed: number | string,
): { groups: number[][]; epochOrder: (epoch: number) => number[] } {
  const groups: number[][] = [];
  for (let i = 0; i < order.length; i += batchSize) groups.push(order.slice(i, i + batchSize));
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
  return { groups, epochOrder };
}
