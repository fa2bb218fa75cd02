import { describe, expect, it } from 'vitest';
import { indexOfLargest, kernels } from '@weft/core';

describe('softmax cross-entropy kernel', () => {
  it('stays finite at logits ±1000 and equals the log-sum-exp identity', () => {
    // Identity (common practice): −log softmax(z)_t = log Σ_j e^{z_j} − z_t = m + log Σ_j e^{z_j − m} − z_t.
    const logits = Float64Array.of(1000, -1000, 999, -1000, 1000, 0);
    const targets = Int32Array.of(2, 0);
    const losses = new Float64Array(2);
    const probabilities = new Float64Array(6);
    kernels.crossEntropyRows(losses, probabilities, logits, targets, 2, 3);
    expect(Number.isFinite(losses[0]) && Number.isFinite(losses[1])).toBe(true);
    // Row 0: m = 1000, Σ e^{z−m} = 1 + e^−2000 + e^−1 = 1 + e^−1 (the middle term underflows to 0).
    expect(losses[0]).toBeCloseTo(1000 + Math.log(1 + Math.exp(-1)) - 999, 12);
    // Row 1: m = 1000, Σ e^{z−m} = e^−2000 + 1 + e^−1000 = 1, loss = 1000 − (−1000) = 2000.
    expect(losses[1]).toBe(2000);
    for (const p of probabilities) expect(Number.isFinite(p)).toBe(true);
    expect(probabilities[0] + probabilities[1] + probabilities[2]).toBeCloseTo(1, 15);
  });

  it('matches the direct formula on moderate logits', () => {
    const logits = Float64Array.of(0.5, -1.25, 2, 0.1);
    const losses = new Float64Array(1);
    const probabilities = new Float64Array(4);
    kernels.crossEntropyRows(losses, probabilities, logits, Int32Array.of(1), 1, 4);
    const total = Array.from(logits).reduce((s, z) => s + Math.exp(z), 0);
    expect(Math.abs(losses[0] - -Math.log(Math.exp(-1.25) / total))).toBeLessThan(1e-15);
    for (let j = 0; j < 4; j++) expect(Math.abs(probabilities[j] - Math.exp(logits[j]) / total)).toBeLessThan(1e-15);
  });

  it('lets probabilities alias the logits, as documented', () => {
    const logits = Float64Array.of(0.5, -1.25, 2, 0.1, 3, -3);
    const separate = new Float64Array(6);
    const lossesSeparate = new Float64Array(2);
    kernels.crossEntropyRows(lossesSeparate, separate, logits, Int32Array.of(2, 0), 2, 3);
    const aliased = Float64Array.from(logits);
    const lossesAliased = new Float64Array(2);
    kernels.crossEntropyRows(lossesAliased, aliased, aliased, Int32Array.of(2, 0), 2, 3);
    expect(Array.from(aliased)).toEqual(Array.from(separate));
    expect(Array.from(lossesAliased)).toEqual(Array.from(lossesSeparate));
  });
});

describe('log-sum-exp', () => {
  it('equals log Σ e^z on moderate values (direct formula) and stays finite at ±1000 (the shift, common practice)', () => {
    const row = [0.5, -1.25, 2, 0.1];
    expect(Math.abs(kernels.logSumExp(row, 0, 4) - Math.log(row.reduce((s, z) => s + Math.exp(z), 0)))).toBeLessThan(1e-15);
    // m = 1000; e^{999 − 1000} = e^−1 and e^{−2000} underflows: 1000 + log(1 + e^−1).
    expect(kernels.logSumExp(Float64Array.of(7, 1000, -1000, 999, 7), 1, 3)).toBe(1000 + Math.log(1 + Math.exp(-1)));
  });

  it('reads only the row it is given, at its offset', () => {
    const rows = Float32Array.of(1, 2, 3, 100, 100, 100);
    expect(kernels.logSumExp(rows, 0, 3)).toBe(3 + Math.log(Math.exp(-2) + Math.exp(-1) + 1));
    expect(kernels.logSumExp(rows, 3, 3)).toBe(100 + Math.log(3));
  });
});

describe('the index of the largest entry', () => {
  it("is the first of equals, skips NaN, and takes arrays far longer than a call's argument limit (a 150,000-word vocabulary)", () => {
    expect(indexOfLargest([3, 7, 7, -1])).toBe(1);
    expect(indexOfLargest([NaN, 2, NaN, 5])).toBe(3);
    expect(indexOfLargest([])).toBe(-1);
    const long = new Float32Array(1_000_000);
    long[765_432] = 1;
    // Math.max(...long) throws RangeError (Maximum call stack size exceeded) on such an array in V8.
    expect(() => Math.max(...long)).toThrowError(RangeError);
    expect(indexOfLargest(long)).toBe(765_432);
  });
});
