/**
 * Forecast errors and classification scores (data/scores.ts) against hand-worked examples (common practice
 * definitions), and macro-averaging against the worked example of Manning, Raghavan & Schütze, "Introduction to
 * Information Retrieval" (2008), §13.6: two classes with precision 0.5 and 0.9 give a macro-average of 0.7 and a
 * micro-average of 0.83 (100 of 120; values from memory).
 */
import { describe, expect, it } from 'vitest';
import { classificationReport, forecastErrors, maseScale, scoresFromConfusion } from '@weft/io';

describe('forecast errors', () => {
  it('computes MAE, RMSE and MAPE as worked by hand', () => {
    // errors 1, −2, 0, 3 → MAE 6/4, RMSE √(14/4); MAPE over y ≠ 0: |1/2| + |−2/4| + |3/6| (y = 0 skipped) → 50%.
    const e = forecastErrors([2, 4, 0, 6], [1, 6, 0, 3]);
    expect(e.mae).toBe(1.5);
    expect(e.rmse).toBeCloseTo(Math.sqrt(3.5), 15);
    expect(e.mape).toBeCloseTo(50, 12);
    expect(e.count).toBe(4);
  });

  it('leaves MAPE undefined (null) when every actual value is 0', () => {
    expect(forecastErrors([0, 0], [1, -1]).mape).toBeNull();
  });
});

describe('classification scores', () => {
  it('works precision, recall, F1, macro-F1, accuracy and the confusion matrix of a three-class example by hand', () => {
    // actual:    0 0 0 1 1 2
    // predicted: 0 0 1 1 0 1
    const report = classificationReport([0, 0, 0, 1, 1, 2], [0, 0, 1, 1, 0, 1], 3);
    expect(report.confusion).toEqual([
      [2, 1, 0],
      [1, 1, 0],
      [0, 1, 0],
    ]);
    expect(report.accuracy).toBeCloseTo(3 / 6, 15);
    // class 0: P 2/3, R 2/3, F1 2/3; class 1: P 1/3, R 1/2, F1 0.4; class 2: never predicted, P = R = F1 = 0.
    expect(report.perClass[0].precision).toBeCloseTo(2 / 3, 15);
    expect(report.perClass[1].recall).toBeCloseTo(1 / 2, 15);
    expect(report.perClass[1].f1).toBeCloseTo(0.4, 15);
    expect(report.perClass[2]).toEqual({ precision: 0, recall: 0, f1: 0, support: 1, predicted: 0 });
    expect(report.macroF1).toBeCloseTo((2 / 3 + 0.4 + 0) / 3, 15);
    expect(report.neverPredicted).toEqual([2]);
  });

  it('macro-averages as Manning, Raghavan & Schütze work it: per-class 0.5 and 0.9 give 0.7, pooled counts 0.83', () => {
    // Class 1: 10 right, 10 wrong each way; class 2: 90 right, 10 wrong each way (so precision = recall per class).
    const report = scoresFromConfusion([
      [10, 10],
      [10, 90],
    ]);
    expect(report.perClass[0].precision).toBeCloseTo(0.5, 15);
    expect(report.perClass[1].precision).toBeCloseTo(0.9, 15);
    expect((report.perClass[0].precision + report.perClass[1].precision) / 2).toBeCloseTo(0.7, 15);
    expect(report.macroF1).toBeCloseTo(0.7, 15);
    expect(report.accuracy).toBeCloseTo(100 / 120, 15);
    expect(Number(report.accuracy.toFixed(2))).toBe(0.83);
  });
});

describe('scale-free forecast errors', () => {
  it('works sMAPE and MASE by hand as M4 and Hyndman & Koehler define them', () => {
    // actual 10, 20; forecast 12, 15: sMAPE = 200/2 · (2/22 + 5/35); MASE with scale 2.5 = mean(2, 5) / 2.5 = 1.4.
    const errors = forecastErrors([10, 20], [12, 15], 2.5);
    expect(errors.smape).toBeCloseTo(100 * (2 / 22 + 5 / 35), 12);
    expect(errors.mase).toBeCloseTo(1.4, 14);
    expect(forecastErrors([10, 20], [12, 15]).mase).toBeNull();
    expect(forecastErrors([0], [0]).smape).toBeNull();
  });

  it('scales MASE by the in-sample seasonal naive error of the fitting rows', () => {
    // Season 2 over 1, 2, 4, 8, 3: |4 − 1|, |8 − 2|, |3 − 4| → 10/3; season 1: 1, 2, 4, 5 → 3.
    expect(maseScale([1, 2, 4, 8, 3, 100], 5, 2)).toBe(10 / 3);
    expect(maseScale([1, 2, 4, 8, 3], 5)).toBe(3);
    expect(maseScale([1, 2], 2, 2)).toBeNaN();
  });
});
