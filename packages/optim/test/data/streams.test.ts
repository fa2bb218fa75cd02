/**
 * Value streams: the target of step t is row t + horizon, of chosen columns or of a target matrix of its own (for
 * derived targets such as differences), cut into contiguous streams; worked by hand on a small series. Bad shapes
 * are refused naming the option.
 */
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { streamBatches, wholeStream } from '@weft/optim';

// Rows t = 0..9 of two columns: [t, 10t].
const values = Array.from({ length: 10 }, (_, t) => [t, 10 * t]).flat();

describe('value streams', () => {
  it('pair each step with the chosen column horizon rows on, stream by stream', () => {
    const source = streamBatches({ kind: 'values', values, features: 2, targetColumns: [1], horizon: 2 }, { streams: 2, window: 2 });
    // (10 rows − horizon 2) / 2 streams = 4 rows per stream: stream 0 starts at row 0, stream 1 at row 4.
    const batch = source.batch(0, 0);
    expect(Array.from((batch.input as { data: Float32Array }).data)).toEqual([0, 0, 4, 40, 1, 10, 5, 50]);
    if (batch.targets.kind !== 'values') throw new Error('value targets expected');
    expect(Array.from(batch.targets.values.data)).toEqual([20, 60, 30, 70]);
  });

  it('take targets from a matrix of their own when given one, row t + horizon for step t', () => {
    const differences = Array.from({ length: 10 }, (_, t) => (t === 0 ? 0 : 1));
    const source = streamBatches(
      { kind: 'values', values, features: 2, targets: differences.map((d, t) => d * (t + 100)), targetWidth: 1 },
      { streams: 1, window: 3 },
    );
    const batch = source.batch(0, 0);
    if (batch.targets.kind !== 'values') throw new Error('value targets expected');
    expect(Array.from(batch.targets.values.data)).toEqual([101, 102, 103]);
    expect(() => streamBatches({ kind: 'values', values, features: 2, targets: [1, 2, 3], targetWidth: 1 }, { window: 2 })).toThrowError(WeftError);
    expect(() => streamBatches({ kind: 'values', values, features: 2, targets: [1, 2, 3], targetWidth: 1 }, { window: 2 })).toThrowError(
      'Bad data at stream.targets: expected 10 values (10 rows × 1, as many rows as the values), received 3',
    );
  });

  it("weigh each target value as given (0 for one never observed), times its row's weight, and refuse a wrong count", () => {
    // Column 1's row 3 and row 6 were never observed: steps 1 and 4 (horizon 2) weigh 0 there.
    const targetWeights = Array.from({ length: 10 }, (_, t) => (t === 3 || t === 6 ? 0 : 1));
    const source = streamBatches({ kind: 'values', values, features: 2, targetColumns: [1], horizon: 2, targetWeights }, { streams: 2, window: 2 });
    const batch = source.batch(0, 0);
    // Steps (t, b): (0, 0) row 0 → target row 2; (0, 1) row 4 → 6; (1, 0) row 1 → 3; (1, 1) row 5 → 7.
    expect(Array.from(batch.targets.weights ?? [])).toEqual([1, 0, 0, 1]);
    expect(() => streamBatches({ kind: 'values', values, features: 2, targetWeights: [1, 1] }, { window: 2 })).toThrowError(
      'Bad data at stream.targetWeights: expected 20 weights (10 rows × 2 targets), received 2',
    );
  });
});

describe('a whole stream for evaluation', () => {
  it('weigh the warm-up 0 and each target value as given after it', () => {
    const values = Array.from({ length: 11 }, (_, i) => i);
    const targetWeights = values.map((v) => (v === 6 ? 0 : 1));
    const source = wholeStream({ kind: 'values', values, features: 1, horizon: 2, targetWeights }, { window: 4, scoredFrom: 3 });
    const weights = [0, 1, 2].flatMap((i) => Array.from(source.batch(0, i).targets.weights ?? new Float64Array(4).fill(1)));
    // Positions 0–2 warm up; position 4's target (row 6) was never observed.
    expect(weights).toEqual([0, 0, 0, 1, 0, 1, 1, 1, 1]);
  });

  it('puts every position with a target in exactly one batch, the last one shorter, and weighs the warm-up 0', () => {
    // 11 rows, horizon 2 → positions 0 … 8; windows of 4 → batches of 4, 4, 1; positions 0 … 2 warm up only.
    const values = Array.from({ length: 11 }, (_, i) => i);
    const source = wholeStream({ kind: 'values', values, features: 1, horizon: 2 }, { window: 4, scoredFrom: 3 });
    expect(source.batchesPerEpoch).toBe(3);
    expect(source.carriesState).toBe(true);
    const seen: number[] = [];
    const targets: number[] = [];
    const weights: number[] = [];
    for (let i = 0; i < 3; i++) {
      const batch = source.batch(0, i);
      if (batch.targets.kind !== 'values' || !('data' in batch.input)) throw new Error('expected a value batch');
      seen.push(...batch.input.data);
      targets.push(...batch.targets.values.data);
      weights.push(...(batch.targets.weights ?? new Float64Array(batch.steps).fill(1)));
    }
    expect(seen).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8]);
    expect(targets).toEqual([2, 3, 4, 5, 6, 7, 8, 9, 10]);
    expect(weights).toEqual([0, 0, 0, 1, 1, 1, 1, 1, 1]);
    expect([0, 1, 2].map((i) => source.batch(0, i).positions)).toEqual([1, 4, 1]);
  });

  it('refuses a warm-up that leaves nothing to score, naming the option', () => {
    expect(() => wholeStream({ kind: 'values', values: [1, 2, 3], features: 1 }, { window: 2, scoredFrom: 2 })).toThrow(
      'Invalid option at stream.scoredFrom: expected a position in [0, 2), received 2',
    );
  });
});
