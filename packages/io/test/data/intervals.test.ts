/**
 * Prediction intervals (intervals.ts): the split conformal half-width is the ⌈(n + 1)·level⌉-th smallest absolute
 * error (Angelopoulos & Bates 2021, as worked here by hand), Infinity with too few errors; on exchangeable errors
 * (seeded normal draws) the interval covers about `level` of new ones; the scaled interval score is the M4
 * competition's MSIS (Makridakis et al. 2020), worked by hand.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { IntervalScoreSum, conformalHalfWidth } from '@weft/io';

describe('prediction intervals', () => {
  it('take the ⌈(n + 1)·level⌉-th smallest absolute error, and none from too few errors', () => {
    const errors = [0.5, -3, 1, 2, -0.25, 4, 1.5, -2.5, 0.75];
    // n = 9: level 0.8 → ⌈8⌉ = 8th smallest of 0.25, 0.5, 0.75, 1, 1.5, 2, 2.5, 3, 4 → 3.
    expect(conformalHalfWidth(errors, 0.8)).toBe(3);
    // level 0.5 → ⌈5⌉ = 5th → 1.5; level 0.95 → ⌈9.5⌉ = 10 > 9 → too few.
    expect(conformalHalfWidth(errors, 0.5)).toBe(1.5);
    expect(conformalHalfWidth(errors, 0.95)).toBe(Infinity);
    expect(() => conformalHalfWidth(errors, 95)).toThrowError(/^Invalid option at interval level: expected a share between 0 and 1/);
  });

  it('cover about the level asked of new exchangeable errors', () => {
    const random = new Random('conformal');
    const calibration = Array.from({ length: 999 }, () => random.normal());
    const half = conformalHalfWidth(calibration, 0.9);
    const sum = new IntervalScoreSum(0.9);
    for (let i = 0; i < 20000; i++) sum.add(random.normal(), -half, half, 1);
    // For standard normal errors the 90% half-width is 1.645 (common practice); coverage within sampling error.
    expect(half).toBeGreaterThan(1.5);
    expect(half).toBeLessThan(1.8);
    expect(sum.result().coverage).toBeGreaterThan(0.88);
    expect(sum.result().coverage).toBeLessThan(0.92);
  });

  it('score as M4 scored intervals: width plus 2/α times the miss, over the scale', () => {
    const sum = new IntervalScoreSum(0.95);
    sum.add(10, 8, 12, 2); // inside: width 4 → 4 / 2 = 2
    sum.add(7, 8, 12, 2); // below by 1: 4 + 40 · 1 = 44 → 22
    sum.add(13.5, 8, 12, 2); // above by 1.5: 4 + 40 · 1.5 = 64 → 32
    const scores = sum.result();
    expect(scores.coverage).toBeCloseTo(1 / 3, 15);
    expect(scores.meanWidth).toBe(4);
    expect(scores.msis).toBeCloseTo((2 + 22 + 32) / 3, 12);
    expect(scores.count).toBe(3);
  });
});
