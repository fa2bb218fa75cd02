/**
 * Batches of source/target pairs for encoder-decoders (see data.ts), trained by teacher forcing (common practice;
 * Sutskever, Vinyals & Le 2014): the decoder reads the target shifted right behind a start token and must predict
 * the target followed by an end token. A batch holds the sources (token ids, time-major, padded, with their
 * lengths) for the encoder, the shifted targets as the decoder's input, and the per-step classes with weight 0 on
 * padding. Pairs are sorted by source length, then target length, and cut into batches of neighbours (little
 * padding); the batch order is shuffled each epoch from the seed, as for sequenceBatches.
 */
import { fail } from '@weft/core';
import { neighbourBatches } from './sequences.js';
import type { Batch, DataSource } from './batch-types.js';

/** One source/target pair of token ids. */
export interface TokenPair {
  /** The source tokens (the encoder's input), at least one. */
  readonly source: ArrayLike<number>;
  /** The target tokens (what the decoder must write), without start or end token; may be empty. */
  readonly target: ArrayLike<number>;
}

/** How a set of pairs is batched. */
export interface PairSetOptions {
  /** Pairs per batch. */
  readonly batchSize: number;
  /** The decoder's first input token (an id of the decoder's input vocabulary). */
  readonly startToken: number;
  /** The token the decoder writes after the target (an id of its output vocabulary). */
  readonly endToken: number;
  /** Seed of the shuffle of the batch order each epoch; default 0. */
  readonly seed?: number | string;
}

interface PairPlan {
  readonly batch: Batch;
}

/** Teacher-forcing batches of source/target pairs for an EncoderDecoderModel (see above). */
export function pairBatches(pairs: readonly TokenPair[], options: PairSetOptions): DataSource {
  const { batchSize, startToken, endToken } = options;
  if (!Number.isInteger(batchSize) || batchSize < 1) fail('invalid_option', 'pairs.batchSize', 'a whole number ≥ 1', String(batchSize));
  for (const [name, id] of [
    ['startToken', startToken],
    ['endToken', endToken],
  ] as const) {
    if (!Number.isInteger(id) || id < 0) fail('invalid_option', `pairs.${name}`, 'a token id (a whole number ≥ 0)', String(id));
  }
  if (pairs.length === 0) fail('bad_data', 'pairs', 'at least one pair', '0');
  pairs.forEach((pair, i) => {
    if (pair.source.length < 1) fail('bad_data', `pairs[${i}].source`, 'at least one token', 'none');
    for (const side of ['source', 'target'] as const) {
      const tokens = pair[side];
      for (let t = 0; t < tokens.length; t++) {
        if (!Number.isInteger(tokens[t]) || tokens[t] < 0) fail('bad_data', `pairs[${i}].${side}[${t}]`, 'a token id (a whole number ≥ 0)', String(tokens[t]));
      }
    }
  });
  const order = pairs
    .map((_, i) => i)
    .sort((a, b) => pairs[a].source.length - pairs[b].source.length || pairs[a].target.length - pairs[b].target.length || a - b);
  const { groups, epochOrder } = neighbourBatches(order, batchSize, options.seed ?? 0);
  // A group's batch never changes (token ids only): made at its first use, handed out read-only every epoch.
  const plans: (PairPlan | undefined)[] = new Array<PairPlan | undefined>(groups.length);
  const planOf = (group: number): PairPlan => {
    const known = plans[group];
    if (known !== undefined) return known;
    const members = groups[group];
    const rows = members.length;
    const sourceLengths = Int32Array.from(members.map((m) => pairs[m].source.length));
    const targetLengths = Int32Array.from(members.map((m) => pairs[m].target.length + 1));
    const sourceSteps = Math.max(...sourceLengths);
    const steps = Math.max(...targetLengths);
    const sources = new Int32Array(sourceSteps * rows);
    const inputs = new Int32Array(steps * rows);
    const classes = new Int32Array(steps * rows);
    const weights = new Float64Array(steps * rows);
    members.forEach((m, b) => {
      const { source, target } = pairs[m];
      for (let s = 0; s < source.length; s++) sources[s * rows + b] = source[s];
      for (let t = 0; t <= target.length; t++) {
        inputs[t * rows + b] = t === 0 ? startToken : target[t - 1];
        classes[t * rows + b] = t === target.length ? endToken : target[t];
        weights[t * rows + b] = 1;
      }
    });
    const plan: PairPlan = {
      batch: {
        input: { tokens: inputs, steps, batch: rows },
        steps,
        batch: rows,
        lengths: targetLengths,
        targets: { kind: 'classes', perStep: true, classes, weights },
        positions: targetLengths.reduce((n, l) => n + l, 0),
        source: { tokens: { tokens: sources, steps: sourceSteps, batch: rows }, lengths: sourceLengths },
      },
    };
    plans[group] = plan;
    return plan;
  };
  return {
    batchesPerEpoch: groups.length,
    carriesState: false,
    batch(epoch: number, index: number): Batch {
      return planOf(epochOrder(epoch)[index]).batch;
    },
  };
}
