/**
 * Batches of pairs for teacher forcing (common practice; Sutskever, Vinyals & Le 2014): the decoder's input is the
 * target behind a start token, its targets the target followed by an end token, padding weighted 0; checked here
 * position by position against pairs written out by hand.
 */
import { describe, expect, it } from 'vitest';
import { pairBatches } from '@weft/optim';
import type { Batch } from '@weft/optim';

const START = 0;
const END = 1;

function rows(batch: Batch, tokens: Int32Array, steps: number): number[][] {
  return Array.from({ length: batch.batch }, (_, b) => Array.from({ length: steps }, (_, t) => tokens[t * batch.batch + b]));
}

describe('batches of source/target pairs', () => {
  it('put the target behind the start token as input and before the end token as the targets, padding weighted 0', () => {
    const data = pairBatches(
      [
        { source: [5, 6, 7], target: [2, 3] },
        { source: [8, 9], target: [4] },
      ],
      { batchSize: 2, startToken: START, endToken: END },
    );
    expect(data.batchesPerEpoch).toBe(1);
    const batch = data.batch(0, 0);
    // Sorted by source length: the shorter source comes first.
    expect(rows(batch, batch.source!.tokens.tokens, 3)).toEqual([
      [8, 9, 0],
      [5, 6, 7],
    ]);
    expect(Array.from(batch.source!.lengths)).toEqual([2, 3]);
    expect(rows(batch, (batch.input as { tokens: Int32Array }).tokens, 3)).toEqual([
      [START, 4, 0],
      [START, 2, 3],
    ]);
    if (batch.targets.kind !== 'classes') throw new Error('expected classes');
    expect(rows(batch, batch.targets.classes, 3)).toEqual([
      [4, END, 0],
      [2, 3, END],
    ]);
    expect(Array.from(batch.targets.weights!)).toEqual([1, 1, 1, 1, 0, 1]);
    expect([Array.from(batch.lengths!), batch.positions, batch.steps]).toEqual([[2, 3], 5, 3]);
  });

  it('keep every pair exactly once per epoch, in a batch order that the seed alone decides', () => {
    const pairs = Array.from({ length: 23 }, (_, i) => ({ source: Array.from({ length: 1 + (i % 5) }, () => 2 + i), target: [2 + i] }));
    const data = pairBatches(pairs, { batchSize: 4, startToken: START, endToken: END, seed: 3 });
    const again = pairBatches(pairs, { batchSize: 4, startToken: START, endToken: END, seed: 3 });
    const seen = (source: typeof data, epoch: number) =>
      Array.from({ length: source.batchesPerEpoch }, (_, i) =>
        Array.from(source.batch(epoch, i).source!.tokens.tokens.subarray(0, source.batch(epoch, i).batch)),
      ).flat();
    expect(seen(data, 0).sort((a, b) => a - b)).toEqual(pairs.map((p) => p.source[0]).sort((a, b) => a - b));
    expect(seen(again, 1)).toEqual(seen(data, 1));
    expect(seen(data, 1)).not.toEqual(seen(data, 0));
  });

  it('refuse an empty source, a bad token and a bad batch size by where they are', () => {
    const options = { batchSize: 2, startToken: START, endToken: END };
    expect(() =>
      pairBatches(
        [
          { source: [2], target: [3] },
          { source: [], target: [3] },
        ],
        options,
      ),
    ).toThrowError('Bad data at pairs[1].source: expected at least one token, received none');
    expect(() => pairBatches([{ source: [2, -1], target: [3] }], options)).toThrowError(
      'Bad data at pairs[0].source[1]: expected a token id (a whole number ≥ 0), received -1',
    );
    expect(() => pairBatches([{ source: [2], target: [3] }], { ...options, batchSize: 0 })).toThrowError(
      'Invalid option at pairs.batchSize: expected a whole number ≥ 1, received 0',
    );
  });
});
