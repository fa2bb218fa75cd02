/**
 * Forecast baselines (data/baselines.ts): the linear baseline against mathjs least squares (lusolve on the
 * normal equations; mathjs is a general-purpose reference library) on seeded random data, to 1e-9; naive and
 * seasonal naive against hand-worked values (the methods as Hyndman & Athanasopoulos, "Forecasting: Principles
 * and Practice", ch. 5, define them), MASE scaled as Hyndman & Koehler (2006) define it; open data: the S&P 500
 * daily closes of vega-datasets 3.2.1 (npm; data/sp500-2000.csv, with its volume column), where the linear
 * baseline must be no worse than 1% above the naive forecast's MAE (a daily index is close to a random walk, whose best
 * forecast is the value now; common practice) despite columns ~1e3 beside ~1e9.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { lusolve, mean, multiply, transpose } from 'mathjs';
import { Random, WeftError } from '@weft/core';
import { bestBaseline, fitLinear, forecastBaselines, parseTable, readSeries, scoreForecaster } from '@weft/io';
import type { SeriesSplit } from '@weft/io';

describe('the linear baseline', () => {
  it('matches mathjs least squares on the normal equations to 1e-9 on random data', () => {
    const random = new Random('linear baseline');
    const values = Array.from({ length: 120 }, () => [random.between(-3, 3), random.between(-1, 1), random.between(0, 10)]);
    const split: SeriesSplit = { values, targets: [2, 0], horizon: 2, fitRows: 100, positions: [100, 101] };
    const weights = fitLinear(split);
    split.targets.forEach((j, k) => {
      const x: number[][] = [];
      const y: number[][] = [];
      for (let t = 2; t + 2 < 100; t++) {
        x.push([1, ...values[t], ...values[t - 1], ...values[t - 2]]);
        y.push([values[t + 2][j]]);
      }
      const xt = transpose(x);
      const reference = (lusolve(multiply(xt, x), multiply(xt, y)) as number[][]).map((r) => r[0]);
      reference.forEach((w, i) => expect(Math.abs(weights[k][i] - w)).toBeLessThan(1e-9));
    });
  });

  it('is no more than 1% worse than the naive forecast on the S&P 500 daily closes with their volumes', () => {
    const file = fileURLToPath(new URL('../../../../node_modules/vega-datasets/data/sp500-2000.csv', import.meta.url));
    const series = readSeries(parseTable(readFileSync(file, 'utf8'), { file: 'sp500-2000.csv' }), { targets: ['close'] });
    expect(series.columns).toEqual(['open', 'high', 'low', 'close', 'adjclose', 'volume']);
    const rows = series.values.length;
    const fitRows = Math.round(rows * 0.9);
    const positions = Array.from({ length: rows - fitRows }, (_, i) => fitRows - 1 + i);
    const { scores } = forecastBaselines({ values: series.values, targets: [3], horizon: 1, fitRows, positions }, { season: null });
    const naive = scores.find((s) => s.name === 'naive')!.overall.mae;
    const linear = scores.find((s) => s.name === 'linear')!.overall.mae;
    console.log(`S&P 500 closes, last ${positions.length} days: naive MAE ${naive.toFixed(3)}, linear MAE ${linear.toFixed(3)}`);
    // Measured: 23.639 against 23.938 (1.2% below naive): no worse than naive by more than 1%, and no miracle.
    expect(linear / naive).toBeLessThan(1.01);
    expect(linear / naive).toBeGreaterThan(0.95);
  });
});

describe('forecast baselines', () => {
  const values = [[1], [2], [4], [8], [3], [6], [9]];
  const split: SeriesSplit = { values, targets: [0], horizon: 1, fitRows: 5, positions: [4, 5] };

  it("scores naive and seasonal naive as worked by hand, with MASE on the fitting rows' seasonal naive scale", () => {
    const { scores, scales } = forecastBaselines(split, { season: 2 });
    const byName = Object.fromEntries(scores.map((s) => [s.name, s.overall]));
    // naive: |6 − 3| and |9 − 6| → 3; seasonal naive, season 2: row t+1 from row t−1: |6 − 8|, |9 − 3| → 4.
    expect(byName.naive.mae).toBe(3);
    expect(byName['seasonal naive'].mae).toBe(4);
    // Scale: |4 − 1|, |8 − 2|, |3 − 4| over the 5 fitting rows → 10/3; MASE of naive 3 / (10/3) = 0.9.
    expect(scales[0]).toBe(10 / 3);
    expect(byName.naive.mase).toBeCloseTo(0.9, 14);
    expect(scores.map((s) => s.name)).toEqual([
      'naive',
      'seasonal naive',
      'simple smoothing',
      'Holt',
      'damped trend',
      'Holt-Winters additive',
      'Holt-Winters multiplicative',
      'Theta',
      'linear',
    ]);
    expect(bestBaseline(scores).overall.mase).toBe(Math.min(...scores.map((s) => s.overall.mase!)));
  });

  it('scores no one on a target never observed, and forecasts from what was last seen at a row without a value', () => {
    // Rows 1 (a fitting row) and 6 (a scored target row) are missing.
    const gappy: SeriesSplit = { values: [[1], [NaN], [4], [8], [3], [6], [NaN]], targets: [0], horizon: 1, fitRows: 5, positions: [4, 5] };
    const { scores, scales } = forecastBaselines(gappy, { season: 2 });
    const byName = Object.fromEntries(scores.map((s) => [s.name, s.overall]));
    // Only row 5 (6) is scored: naive from row 4 (3) → 3; seasonal naive from row 3 (8) → 2.
    expect(scores.every((s) => s.overall.count === 1)).toBe(true);
    expect(byName.naive.mae).toBe(3);
    expect(byName['seasonal naive'].mae).toBe(2);
    // Scale over the pairs two rows apart that both have a value: |4 − 1|, |3 − 4| → 2 (the pair 8, NaN left out).
    expect(scales[0]).toBe(2);
    // A forecaster that is absurd wherever the target was never observed scores the same as a sane one.
    const sane = scoreForecaster(gappy, (t) => gappy.values[t][0] + 1, scales);
    const absurd = scoreForecaster(gappy, (t) => (Number.isNaN(gappy.values[t + 1][0]) ? 1e300 : gappy.values[t][0] + 1), scales);
    expect(absurd).toEqual(sane);
  });

  it('says why the seasonal methods are left out when there is no season', () => {
    const { scores, leftOut } = forecastBaselines(split, { season: null });
    expect(scores.map((s) => s.name)).not.toContain('seasonal naive');
    expect(leftOut).toEqual(['the seasonal methods (seasonal naive, Holt-Winters): no season']);
  });

  it('refuses a season as long as the fitting rows, naming the option', () => {
    let error: unknown;
    try {
      forecastBaselines(split, { season: 5 });
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).message).toBe(
      'Invalid option at season: expected a whole number of rows in [1, 4] (shorter than the fitting rows), received 5',
    );
  });

  it('scores every row ahead on the same target rows: naive as worked by hand, each method as its own one-horizon run, pooled as their mean', () => {
    const random = new Random('rows ahead');
    const values = Array.from({ length: 90 }, (_, t) => [20 + 0.1 * t + 3 * Math.sin((2 * Math.PI * t) / 6) + random.normal() * 0.2]);
    // Target rows 80–89 (positions t with t + 3 in them), forecast 1, 2 and 3 rows ahead.
    const positions = Array.from({ length: 10 }, (_, i) => 77 + i);
    const split: SeriesSplit = { values, targets: [0], horizon: 3, fitRows: 80, positions, rowsAhead: [1, 2, 3] };
    const all = forecastBaselines(split, { season: 6 });
    for (const name of ['naive', 'seasonal naive', 'Holt-Winters additive', 'Theta', 'linear']) {
      const scored = all.scores.find((b) => b.name === name)!;
      expect(scored.byRowsAhead!.map((s) => s.rowsAhead)).toEqual([1, 2, 3]);
      [1, 2, 3].forEach((h, i) => {
        // The same target rows forecast h rows before them, as a split of one horizon.
        const alone = forecastBaselines(
          { values, targets: [0], horizon: h, fitRows: 80, positions: positions.map((t) => t + 3 - h) },
          { season: 6 },
        ).scores.find((b) => b.name === name)!;
        expect(scored.byRowsAhead![i].overall.mae).toBeCloseTo(alone.overall.mae, 12);
        if (name === 'naive')
          expect(alone.overall.mae).toBeCloseTo(mean(positions.map((t) => Math.abs(values[t + 3][0] - values[t + 3 - h][0]))) as number, 12);
      });
      // Every row ahead has the same count, so the pooled MAE is their mean (mathjs).
      expect(scored.overall.mae).toBeCloseTo(mean(scored.byRowsAhead!.map((s) => s.overall.mae)) as number, 12);
    }
    expect(() => forecastBaselines({ ...split, rowsAhead: [4] })).toThrowError(/split\.rowsAhead\[0\]: expected a whole number in \[1, 3\]/);
  });
});
