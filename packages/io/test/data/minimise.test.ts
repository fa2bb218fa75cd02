/**
 * Nelder–Mead (data/minimise.ts) on Rosenbrock's function f(x, y) = 100 (y − x²)² + (1 − x)², whose minimum 0 at
 * (1, 1) is known in closed form (Rosenbrock, The Computer Journal 3, 1960), from the usual start (−1.2, 1).
 */
import { describe, expect, it } from 'vitest';
import { minimise } from '@weft/io/internal';

describe('Nelder–Mead minimisation', () => {
  it("finds the minimum of Rosenbrock's function from (−1.2, 1)", () => {
    const result = minimise((p) => 100 * (p[1] - p[0] ** 2) ** 2 + (1 - p[0]) ** 2, [-1.2, 1], { evaluations: 2000, tolerance: 1e-16 });
    expect(Math.abs(result.point[0] - 1)).toBeLessThan(1e-4);
    expect(Math.abs(result.point[1] - 1)).toBeLessThan(1e-4);
    expect(result.value).toBeLessThan(1e-8);
  });

  it('spends no more evaluations than it is given and treats a NaN as worse than anything', () => {
    const result = minimise((p) => (p[0] < 0 ? NaN : (p[0] - 2) ** 2), [1], { evaluations: 25 });
    expect(result.evaluations).toBeLessThanOrEqual(26);
    expect(result.point[0]).toBeGreaterThan(0);
    expect(Math.abs(result.point[0] - 2)).toBeLessThan(0.05);
  });
});
