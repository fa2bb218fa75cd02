/**
 * Least squares by QR with scaled columns (data/least-squares.ts) against mathjs's own QR decomposition (mathjs is
 * a general-purpose reference library): w = R⁻¹ Qᵀ y, computed by mathjs `qr` and `usolve`.
 */
import { describe, expect, it } from 'vitest';
import { multiply, qr, transpose, usolve } from 'mathjs';
import { Random } from '@weft/core';
import { leastSquares } from '@weft/io/internal';

function referenceWeights(x: number[][], y: number[]): number[] {
  const { Q, R } = qr(x) as unknown as { Q: number[][]; R: number[][] };
  const columns = x[0].length;
  const qty = (multiply(transpose(Q), y) as number[]).slice(0, columns);
  const r = R.slice(0, columns).map((row) => row.slice(0, columns));
  return (usolve(r, qty) as number[][]).map((v) => v[0]);
}

describe('least squares by QR', () => {
  it('matches mathjs QR to 1e-9 relative on columns of size 1 and 1e9', () => {
    const random = new Random('scaled columns');
    const x = Array.from({ length: 200 }, () => [1, random.between(-2, 2), 1e9 * random.between(0.5, 1.5), random.between(900, 1100)]);
    const y = x.map((row) => 3 + 0.5 * row[1] + 2e-9 * row[2] - 0.01 * row[3] + 0.1 * random.normal());
    const w = leastSquares(x.flat(), y, x.length, 4);
    const reference = referenceWeights(x, y);
    reference.forEach((v, i) => expect(Math.abs(w[i] - v)).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(v), Math.abs(w[i]))));
  });

  it('recovers exact weights of a noiseless fit whose columns differ by nine orders of magnitude', () => {
    const x = Array.from({ length: 50 }, (_, t) => [1, t, 1e9 + 1e7 * Math.sin(t)]);
    const y = x.map((row) => 4 - 0.25 * row[1] + 3e-8 * row[2]);
    const w = leastSquares(x.flat(), y, x.length, 3);
    expect(Math.abs(w[0] - 4)).toBeLessThan(1e-6);
    expect(Math.abs(w[1] + 0.25)).toBeLessThan(1e-9);
    expect(Math.abs(w[2] - 3e-8) / 3e-8).toBeLessThan(1e-7);
  });

  it('gives a repeated column weight 0 and still fits exactly', () => {
    const x = Array.from({ length: 30 }, (_, t) => [1, t, t, 7]);
    const y = x.map((row) => 2 * row[1] + 1);
    const w = leastSquares(x.flat(), y, x.length, 4);
    expect(w[2]).toBe(0);
    for (const t of [0, 5, 20]) expect(w[0] + w[1] * t + w[2] * t + w[3] * 7).toBeCloseTo(2 * t + 1, 9);
  });
});
