import { describe, expect, it } from 'vitest';
import { sequenceBatches } from '@weft/optim';

describe('batches of independent sequences', () => {
  const sequences = [
    { values: [1, 2, 3], label: 0 },
    { values: [4], label: 1 },
    { values: [5, 6], label: 2 },
    { values: [7, 8, 9, 10], label: 1 },
  ];

  it('group neighbours by length, lay them out time-major [T, B, F] with zero padding, and keep lengths and classes', () => {
    const source = sequenceBatches(sequences, { batchSize: 2 });
    expect(source.batchesPerEpoch).toBe(2);
    const batches = [0, 1].map((i) => source.batch(0, i));
    const short = batches.find((b) => b.steps === 2)!;
    // Lengths 1 and 2 (sequences 1 and 2) form one batch: steps 2, rows [4, 0 | 5, 6] time-major → 4, 5, 0, 6.
    expect(Array.from(short.lengths!)).toEqual([1, 2]);
    expect(Array.from((short.input as { data: Float32Array }).data)).toEqual([4, 5, 0, 6]);
    expect(short.targets.kind === 'classes' && Array.from(short.targets.classes)).toEqual([1, 2]);
    expect(short.positions).toBe(3);
  });

  it('shuffle the batch order each epoch from the seed: the same seed, the same order', () => {
    const many = Array.from({ length: 40 }, (_, i) => ({ tokens: Array.from({ length: 1 + (i % 9) }, (_, t) => t % 3), label: i % 2 }));
    const orderOf = (seed: string, epoch: number) => {
      const source = sequenceBatches(many, { batchSize: 4, seed });
      return Array.from({ length: source.batchesPerEpoch }, (_, i) => source.batch(epoch, i).steps);
    };
    expect(orderOf('a', 0)).toEqual(orderOf('a', 0));
    expect(orderOf('a', 1)).not.toEqual(orderOf('a', 0));
    expect([...orderOf('a', 1)].sort()).toEqual([...orderOf('a', 0)].sort());
  });

  it('carry sequence targets of several values, row by row', () => {
    const source = sequenceBatches(
      [
        { values: [1, 1], target: [0.5, -1] },
        { values: [2], target: [3, 4] },
      ],
      { batchSize: 2 },
    );
    const batch = source.batch(0, 0);
    expect(batch.targets.kind === 'values' && Array.from(batch.targets.values.data)).toEqual([3, 4, 0.5, -1]);
  });

  it('carry a weight per target value when a sequence gives them (1 for the sequences that do not), and refuse a wrong count', () => {
    const source = sequenceBatches(
      [
        { values: [1, 1], target: [0.5, -1], targetWeights: [1, 0] },
        { values: [2], target: [3, 4] },
      ],
      { batchSize: 2 },
    );
    const batch = source.batch(0, 0);
    expect(batch.targets.kind === 'values' && Array.from(batch.targets.weights ?? [])).toEqual([1, 1, 1, 0]);
    expect(() => sequenceBatches([{ values: [1], target: [1, 2], targetWeights: [1] }], { batchSize: 1 })).toThrowError(
      'Bad data at sequences[0].targetWeights: expected 2 finite weights ≥ 0, one per target value, received [1]',
    );
  });

  it('refuse an empty sequence, a label that is not a whole number, and a batch size below 1, naming which', () => {
    expect(() => sequenceBatches([{ values: [], label: 0 }], { batchSize: 1 })).toThrowError(
      'Bad data at sequences[0]: expected non-empty values, a multiple of 1, received 0',
    );
    expect(() => sequenceBatches([{ values: [1], label: 0.5 }], { batchSize: 1 })).toThrowError(
      'Bad data at sequences[0]: expected a whole-number label ≥ 0, received 0.5',
    );
    expect(() => sequenceBatches(sequences, { batchSize: 0 })).toThrowError('Invalid option at sequences.batchSize: expected a whole number ≥ 1, received 0');
  });
});
