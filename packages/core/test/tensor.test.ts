import { describe, expect, it } from 'vitest';
import {
  Random,
  Tape,
  WeftError,
  add,
  concat,
  filled,
  gatherRows,
  matmul,
  randomNormal,
  randomUniform,
  crossEntropyAtTargets,
  tensor,
  zeros,
} from '@weft/core';

describe('tensors', () => {
  it('lay out nested values row-major and read them back by the address formula', () => {
    const t = tensor(
      [
        [
          [1, 2, 3],
          [4, 5, 6],
        ],
        [
          [7, 8, 9],
          [10, 11, 12],
        ],
      ],
      undefined,
      'f64',
    );
    expect(t.shape).toEqual([2, 2, 3]);
    expect(t.dtype).toBe('f64');
    // offset = ((i0·n1 + i1)·n2 + i2)
    expect(t.at(1, 0, 2)).toBe(t.data[(1 * 2 + 0) * 3 + 2]);
    expect(t.at(1, 0, 2)).toBe(9);
    expect(t.toArray()).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]);
  });

  it('round f32 values once on entry (IEEE 754 binary32)', () => {
    const t = tensor([0.1], [1], 'f32');
    expect(t.data[0]).toBe(Math.fround(0.1));
    expect(t.data[0]).not.toBe(0.1);
  });

  it('create zeros, filled and seeded random tensors; one seed gives the same bits', () => {
    expect(Array.from(zeros([2, 2]).data)).toEqual([0, 0, 0, 0]);
    expect(Array.from(filled([3], 2.5, 'f64').data)).toEqual([2.5, 2.5, 2.5]);
    const a = randomUniform([50], new Random(42), -1, 1, 'f64');
    const b = randomUniform([50], new Random(42), -1, 1, 'f64');
    expect(Array.from(a.data)).toEqual(Array.from(b.data));
    expect(Math.min(...a.data)).toBeGreaterThanOrEqual(-1);
    expect(Math.max(...a.data)).toBeLessThan(1);
    const n = randomNormal([20000], new Random(1), 0, 1, 'f64');
    const mean = n.toArray().reduce((s, v) => s + v, 0) / n.size;
    const variance = n.toArray().reduce((s, v) => s + (v - mean) ** 2, 0) / n.size;
    // Sample mean within 4 standard errors (1/√20000 ≈ 0.007), variance near 1 (common practice).
    expect(Math.abs(mean)).toBeLessThan(0.03);
    expect(Math.abs(variance - 1)).toBeLessThan(0.05);
  });

  it('refuse ragged nesting, wrong counts and bad shapes, naming where', () => {
    expect(() => tensor([[1, 2], [3]])).toThrowError('Bad data at values[1]: expected an array of 2 entries, received an array of 1 entries');
    expect(() => tensor([1, 2, 3], [2, 2])).toThrowError('Shape mismatch at tensor.values: expected 4 values for shape [2, 2], received 3');
    expect(() => zeros([2, -1])).toThrowError('Invalid argument at zeros.shape[1]: expected a whole number ≥ 0, received -1');
    expect(() => zeros([2], 'f16' as 'f32')).toThrowError(`Invalid option at zeros.dtype: expected 'f32' or 'f64', received "f16"`);
    expect(() => tensor([[1, 'x' as unknown as number]])).toThrowError('Bad data at values[0][1]: expected a number, received string');
  });

  it('operations name the operation, the argument and both shapes on a mismatch', () => {
    const tape = new Tape();
    const a = zeros([3, 4]);
    let caught: unknown;
    try {
      matmul(tape, a, zeros([5, 2]));
    } catch (error) {
      caught = error;
    }
    expect(caught).toBeInstanceOf(WeftError);
    const error = caught as WeftError;
    expect(error.code).toBe('shape_mismatch');
    expect(error.path).toBe('matmul.b');
    expect(error.message).toBe('Shape mismatch at matmul.b: expected [4, cols], received [5, 2] (inner sizes differ: A is [3, 4], B is [5, 2])');
    expect(() => add(tape, a, zeros([3]))).toThrowError('Shape mismatch at add.b: expected [3, 4] or a row [4], received [3]');
    expect(() => add(tape, a, zeros([3, 4], 'f64'))).toThrowError('Dtype mismatch at add.b: expected f32, received f64');
    expect(() => concat(tape, [a, zeros([2, 4])])).toThrowError('Shape mismatch at concat.parts[1]: expected [3, any], received [2, 4]');
    expect(() => gatherRows(tape, a, [0, 3])).toThrowError('Invalid argument at gatherRows.indices[1]: expected a whole number in [0, 3), received 3');
    expect(() => crossEntropyAtTargets(tape, a, [0, 1])).toThrowError(
      'Shape mismatch at crossEntropyAtTargets.targets: expected 3 targets (one per row of logits [3, 4]), received 2',
    );
    expect(() => crossEntropyAtTargets(tape, a, [0, 1, 4])).toThrowError(
      'Invalid argument at crossEntropyAtTargets.targets[2]: expected a class index in [0, 4), received 4',
    );
    expect(() => crossEntropyAtTargets(tape, a, [0, 1, 2], { weights: [1, Number.NaN, 1] })).toThrowError(
      'Invalid argument at crossEntropyAtTargets.weights[1]: expected a finite number ≥ 0, received NaN',
    );
  });
});
