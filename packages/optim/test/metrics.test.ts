import { describe, expect, it } from 'vitest';
import { classificationMetrics, regressionMetrics } from '@weft/optim';

describe('metrics outside the tape', () => {
  it('give cross-entropy in nats, its perplexity e^loss and the arg-max accuracy over weighted rows (worked by hand)', () => {
    // Row 0: logits (0, ln 3) → p(1) = 3/4, target 1, loss ln(4/3), right; row 1: uniform over 2, target 0, loss ln 2,
    // arg-max 0 (first of equals), right; row 2 weighted 0, left out.
    const logits = Float64Array.of(0, Math.log(3), 0, 0, 9, -9);
    const m = classificationMetrics(logits, Int32Array.of(1, 0, 1), Float64Array.of(1, 1, 0), 3, 2);
    const loss = (Math.log(4 / 3) + Math.log(2)) / 2;
    expect(Math.abs(m.crossEntropy - loss)).toBeLessThan(1e-15);
    expect(Math.abs(m.perplexity - Math.exp(loss))).toBeLessThan(1e-15);
    expect([m.accuracy, m.count]).toEqual([1, 2]);
  });

  it('give the mean squared and mean absolute error over weighted rows, and zeros for no rows', () => {
    const m = regressionMetrics(Float64Array.of(1, 2, 3, 4), Float64Array.of(0, 2, 5, 4), Float64Array.of(1, 3), 2, 2);
    // Row 0 differences (1, 0), weight 1; row 1 (−2, 0), weight 3: Σ w·d² = 1 + 12, Σ w·|d| = 1 + 6, count 2 + 6.
    expect(m).toEqual({ meanSquaredError: 13 / 8, meanAbsoluteError: 7 / 8, count: 8 });
    expect(regressionMetrics(Float64Array.of(1), Float64Array.of(0), Float64Array.of(0), 1, 1)).toEqual({
      meanSquaredError: 0,
      meanAbsoluteError: 0,
      count: 0,
    });
  });

  it('give the errors over weighted values when there is one weight per value, leaving out values weighted 0', () => {
    // Differences (1, 0, −2, 5): the 5 weighs 0 (never observed); Σ w·d² = 1 + 0 + 2·4, Σ w·|d| = 1 + 0 + 2·2, Σ w = 4.
    const m = regressionMetrics(Float64Array.of(1, 2, 3, 9), Float64Array.of(0, 2, 5, 4), Float64Array.of(1, 1, 2, 0), 2, 2);
    expect(m).toEqual({ meanSquaredError: 9 / 4, meanAbsoluteError: 5 / 4, count: 4 });
  });
});
