/**
 * The reduction kernels (kernels/reductions.ts) against their definitions, worked by hand on small arrays, and
 * against mathjs (a general-purpose reference library) on seeded random ones. NaN handling follows IEEE 754:
 * a comparison with NaN is false, so NaN is neither limited nor counted, and sums that meet NaN are NaN.
 */
import { describe, expect, it } from 'vitest';
import { dot as referenceDot, sum as referenceSum } from 'mathjs';
import { Random, kernels } from '@weft/core';

describe('reduction kernels', () => {
  it('match their definitions on a small array with a NaN at the end', () => {
    const x = Float64Array.of(1, -2, 3, Number.NaN);
    expect(kernels.sum(x, 3)).toBe(2);
    expect(kernels.dot(x, x, 3)).toBe(14);
    expect(kernels.sumOfSquares(x, 3)).toBe(14);
    expect(kernels.sumOfSquares(x, 4)).toBeNaN();
    expect(kernels.maxAbs(x, 3)).toBe(3);
    expect(kernels.maxAbs(x, 4)).toBeNaN();
    expect(kernels.firstNonFinite(x, 4)).toBe(3);
    expect(kernels.firstNonFinite(x, 3)).toBe(-1);
    expect(kernels.firstNonFinite(Float32Array.of(0, Number.NEGATIVE_INFINITY), 2)).toBe(1);
  });

  it('agree with mathjs on sums and dot products of seeded random arrays', () => {
    const random = new Random('reductions');
    const a = Float64Array.from({ length: 101 }, () => random.between(-3, 3));
    const b = Float64Array.from({ length: 101 }, () => random.between(-3, 3));
    expect(kernels.sum(a, a.length)).toBeCloseTo(referenceSum(Array.from(a)), 12);
    expect(kernels.dot(a, b, a.length)).toBeCloseTo(referenceDot(Array.from(a), Array.from(b)), 12);
    expect(kernels.sumOfSquares(a, a.length)).toBeCloseTo(referenceDot(Array.from(a), Array.from(a)), 12);
  });

  it('limit entries to [−limit, limit] in place, count the entries changed and leave NaN and the rest alone', () => {
    const x = Float32Array.of(0.5, -3, 2, Number.NaN, -0.25, Number.POSITIVE_INFINITY, 1);
    expect(kernels.limitEntries(x, 1, 6)).toBe(3);
    expect(Array.from(x)).toEqual([0.5, -1, 1, Number.NaN, -0.25, 1, 1]);
    // Only the first `length` entries are touched.
    const y = Float64Array.of(5, 5);
    expect(kernels.limitEntries(y, 1, 1)).toBe(1);
    expect(Array.from(y)).toEqual([1, 5]);
  });
});
