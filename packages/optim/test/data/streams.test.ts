/**
 * Value streams: the target of step t is row t + horizon, of chosen columns or of a target matrix of its own (for
 * derived targets such as differences), cut into contiguous streams; worked by hand on a small series. Bad shapes
 * are refused naming the option.
 */
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { streamBatches } from '@weft/optim';

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
    const source = streamBatches({ kind: 'values', values, features: 2, targets: differences.map((d, t) => d * (t + 100)), targetWidth: 1 }, { streams: 1, window: 3 });
    const batch = source.batch(0, 0);
    if (batch.targets.kind !== 'values') throw new Error('value targets expected');
    expect(Array.from(batch.targets.values.data)).toEqual([101, 102, 103]);
    expect(() => streamBatches({ kind: 'values', values, features: 2, targets: [1, 2, 3], targetWidth: 1 }, { window: 2 })).toThrowError(WeftError);
    expect(() => streamBatches({ kind: 'values', values, features: 2, targets: [1, 2, 3], targetWidth: 1 }, { window: 2 })).toThrowError(
      'Bad data at stream.targets: expected 10 values (10 rows × 1, as many rows as the values), received 3');
  });
});
