/**
 * The report of many series and their pooled intervals (panel-report.ts): the split conformal half-width (Vovk,
 * Gammerman & Shafer 2005: the ⌈(n + 1)·level⌉-th smallest absolute error) of errors pooled over series in units of
 * each one's scale, worked by hand; means over series checked against mathjs' mean (npm, test reference).
 */
import { describe, expect, it } from 'vitest';
import { mean } from 'mathjs';
import { forecastReport } from '@weft/io';
import { panelReport, pooledBaselineWidths, pooledHalfWidths } from '@weft/io/internal';

describe('the report of many series', () => {
  it('pools the validation errors of every series in units of its own scale for the half-widths, worked by hand', () => {
    // Scaled errors 1, 2, 3 and 1, 2, 3 (the second series' are ten times larger, its scale ten): six errors; at level
    // 0.5 the ⌈7 × 0.5⌉ = 4th smallest is 2, so the half-widths are 2 and 20.
    expect(pooledHalfWidths([[[1, -2, 3]], [[10, 20, -30]]], [[1], [10]], 0.5)).toEqual([[2], [20]]);
    // A baseline one series lacks is pooled over the series that have it.
    const widths = pooledBaselineWidths(
      [
        [
          { name: 'naive', errors: [[1, 2, 3]] },
          { name: 'seasonal naive', errors: [[4, 4, 4]] },
        ],
        [{ name: 'naive', errors: [[30, 20, 10]] }],
      ],
      [[1], [10]],
      0.5,
    );
    expect(widths).toEqual([[[2], [4]], [[20]]]);
  });

  it('reports means of MASE over series, each series beside its own baselines', () => {
    const report = (model: number, naive: number, theta: number) =>
      forecastReport({
        what: 'w',
        model: { perTarget: [], overall: { mae: 1, rmse: 1, mape: null, smape: 10, mase: model, count: 4 } },
        baselines: [
          { name: 'naive', description: '', perTarget: [], overall: { mae: 1, rmse: 1, mape: null, smape: 12, mase: naive, count: 4 } },
          { name: 'Theta', description: '', perTarget: [], overall: { mae: 1, rmse: 1, mape: null, smape: 11, mase: theta, count: 4 } },
        ],
        names: ['sales'],
        context: [],
      });
    const joined = panelReport(['north', 'south'], [report(0.5, 0.8, 0.6), report(2, 1.5, 1.9)], 'the end of each', []);
    expect(joined.metric).toBe('MASE');
    expect(joined.model.value).toBe(mean([0.5, 2]));
    expect(joined.baselines.map((b) => [b.name, b.value])).toEqual([
      ['naive', mean([0.8, 1.5])],
      ['Theta', mean([0.6, 1.9])],
    ]);
    expect(joined.series).toEqual([
      {
        id: 'north',
        model: 0.5,
        baselines: [
          { name: 'naive', value: 0.8 },
          { name: 'Theta', value: 0.6 },
        ],
        best: 'Theta',
      },
      {
        id: 'south',
        model: 2,
        baselines: [
          { name: 'naive', value: 1.5 },
          { name: 'Theta', value: 1.9 },
        ],
        best: 'naive',
      },
    ]);
  });
});
