/**
 * Prediction intervals (intervals.ts): the split conformal half-width is the ⌈(n + 1)·level⌉-th smallest absolute
 * error (Angelopoulos & Bates 2021, as worked here by hand), Infinity with too few errors; on exchangeable errors
 * (seeded normal draws) the interval covers about `level` of new ones; the scaled interval score is the M4
 * competition's MSIS (Makridakis et al. 2020), worked by hand; each baseline's intervals are made the same way from
 * its own validation errors (worked by hand for naive) and reported beside the model's.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { baselineErrors, baselineIntervals, conformalHalfWidth, forecastBaselines, reportLines, verdict } from '@weft/io';
import { IntervalScoreSum } from '@weft/io/internal';
import type { SeriesSplit } from '@weft/io';

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

  it("give each baseline intervals from its own validation errors, scored on the test rows, and say which is best beside the model's", () => {
    // Naive on 0, 1, 3, 2, 4, 7, 5, 6, 10, 9: validation rows 5–7 (t = 4–6), test rows 8–9.
    const values = [0, 1, 3, 2, 4, 7, 5, 6, 10, 9].map((v) => [v]);
    const split: SeriesSplit = { values, targets: [0], horizon: 1, fitRows: 8, positions: [7, 8] };
    const fitted = forecastBaselines(split, { season: null });
    const naive = fitted.scores.findIndex((b) => b.name === 'naive');
    const scores = baselineIntervals(split, fitted, 0.5, 5)[naive];
    // Naive's validation errors: 7 − 4, 5 − 7, 6 − 5 → |3|, |2|, |1|; the ⌈4 · 0.5⌉ = 2nd smallest: 2.
    // Test: 10 from 6 ± 2 (outside), 9 from 10 ± 2 (inside): coverage 1/2, width 4.
    expect(scores.coverage).toBe(0.5);
    expect(scores.meanWidth).toBe(4);
    expect(scores.count).toBe(2);
    const report = {
      metric: 'MAE',
      lowerIsBetter: true,
      what: 'w',
      model: { name: 'model', description: '', value: 1 },
      baselines: [{ name: 'naive', description: '', value: 2, intervals: scores }],
      names: ['y'],
      intervals: { ...scores, msis: scores.msis! / 2 },
    };
    expect(reportLines(report)).toContain(
      `  the baselines' intervals, each made the same way from its own validation errors: lowest MSIS naive ${Number(scores.msis!.toPrecision(4))} (coverage 50.0%, mean width 4); the model's ${Number((scores.msis! / 2).toPrecision(4))} is lower (better) by 50.0%`,
    );
    expect(verdict(report)).toMatch(/^verdict: the model beats every baseline/);
    // The errors those intervals come from, given out for pooling (panel.ts), and half-widths given back.
    expect(baselineErrors(split, fitted, 5)[naive]).toEqual([[3, -2, 1]]);
    const given = baselineIntervals(
      split,
      fitted,
      0.5,
      5,
      fitted.scores.map(() => [1]),
    )[naive];
    // 6 ± 1 misses 10, 10 ± 1 holds 9: coverage 1/2, width 2.
    expect([given.coverage, given.meanWidth]).toEqual([0.5, 2]);
  });
});
