/**
 * The choices sliding windows make (data/window-choices.ts): the hybrid's smoothing method, the one whose forecasts
 * of the validation rows have the lowest MAE (checked against runSmoothing's forecasts of each method, scored here),
 * and the targets read as logarithms (Hyndman & Athanasopoulos, "Forecasting: Principles and Practice", 3rd ed.,
 * §8.3: a log turns a multiplicative season into an additive one; common practice).
 */
import { describe, expect, it } from 'vitest';
import { mean, sqrt } from 'mathjs';
import { fitSmoothing, prepareSeries, runSmoothing } from '@weft/io';
import type { SeriesWindows } from '@weft/io';
import { changeDeviations, chooseSmoothing } from '../../src/data/window-choices.js';

const options = {
  window: 3,
  lookback: 0,
  streams: 4,
  validationShare: 0.2,
  testShare: 0.1,
  horizon: 2,
  seed: '1',
  season: null,
  given: new Set(['window', 'streams']),
};
const rms = (list: number[]) => sqrt(mean(list.map((v) => v * v))) as number;

describe('the choices of sliding windows', () => {
  it('choose the smoothing method whose forecasts of the checked rows have the lowest MAE', () => {
    const series = Array.from({ length: 120 }, (_, t) => 50 + 0.3 * t + 8 * Math.sin((2 * Math.PI * t) / 12) + Math.sin(t * 1.7));
    const chosen = chooseSmoothing(series, 90, 108, [1], 12);
    const error = (method: 'simple' | 'damped' | 'additive' | 'multiplicative') => {
      const fit = fitSmoothing(series, 90, method, 12);
      if (fit === null) return Infinity;
      const forecasts = new Float64Array(120);
      runSmoothing(series, 90, fit, 1, forecasts);
      let sum = 0;
      for (let t = 89; t + 1 < 108; t++) sum += Math.abs(series[t + 1] - forecasts[t]);
      return sum;
    };
    const errors = {
      'simple smoothing': error('simple'),
      'a damped trend': error('damped'),
      'Holt-Winters additive': error('additive'),
      'Holt-Winters multiplicative': error('multiplicative'),
    };
    const best = Object.entries(errors).reduce((a, b) => (b[1] < a[1] ? b : a))[0];
    expect(chosen.name).toBe(best);
    expect(best.startsWith('Holt-Winters')).toBe(true);
  });

  it('read the targets as logarithms when asked, or (auto) where the season swings with the level, and refuse a value not above 0', () => {
    // Monthly, a season whose swing grows with the level (multiplicative), and one whose swing stays (additive).
    const swinging = Array.from({ length: 144 }, (_, t) => (100 + 2 * t) * (1 + 0.3 * Math.sin((2 * Math.PI * t) / 12)));
    const steady = Array.from({ length: 144 }, (_, t) => 100 + 2 * t + 30 * Math.sin((2 * Math.PI * t) / 12));
    const monthly = (ys: number[]) =>
      `month,level\n${ys.map((v, t) => `${1990 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')},${v.toFixed(4)}`).join('\n')}\n`;
    const base = { ...options, season: 12, given: new Set<string>(), horizon: 1 };
    expect((prepareSeries(monthly(swinging), 'm.csv', { ...base, log: 'auto' }).metadata.window as { log?: boolean[] }).log).toEqual([true]);
    expect((prepareSeries(monthly(steady), 'm.csv', { ...base, log: 'auto' }).metadata.window as { log?: boolean[] }).log).toBeUndefined();
    expect((prepareSeries(monthly(swinging), 'm.csv', base).metadata.window as { log?: boolean[] }).log).toBeUndefined();
    const logged = prepareSeries(monthly(swinging), 'm.csv', { ...base, log: 'yes' });
    const windows = logged.examples as SeriesWindows;
    const logs = swinging.map((v) => Math.log(Number(v.toFixed(4))));
    const deviation = (logged.metadata.window as { deviation: number[] }).deviation[0];
    const trainingRows = (logged.metadata.split as { trainingRows: number }).trainingRows;
    expect(deviation).toBeCloseTo(rms(Array.from({ length: trainingRows - 1 }, (_, i) => logs[i + 1] - logs[i])), 12);
    const w = (logged.metadata.window as { rows: number }).rows;
    expect(windows.train[0].values[0]).toBeCloseTo((logs[0] - logs[w - 1]) / deviation, 12);
    // Exactly right outputs in the log scale come back through exp as the values themselves.
    expect(
      logged.heldOut(
        windows.test.flatMap((x) => x.target),
        1,
      ).model.value,
    ).toBeCloseTo(0, 6);
    const withZero = monthly(swinging.map((v, t) => (t === 5 ? 0 : v)));
    expect(() => prepareSeries(withZero, 'm.csv', { ...base, log: 'yes' })).toThrowError(
      'Bad data at m.csv:7:9: expected a number > 0 in column "level" (--log yes reads its logarithm), received 0',
    );
  });

  it('scales each column by the root mean square of its one-row changes over the training rows, leaving out pairs with a gap (mathjs)', () => {
    const values = [
      [1, 10],
      [3, 10],
      [2, Number.NaN],
      [6, 10],
      [100, 50],
    ];
    // Training rows 0–3: column 0 changes by 2, −1 and 4; column 1's one pair without a gap changes by 0, so 1 is used.
    expect(changeDeviations(values, 4, 2)).toEqual([Number(sqrt(mean([4, 1, 16]) as number)), 1]);
  });
});
