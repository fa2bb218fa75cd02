/**
 * Sliding windows (series-windows.ts) worked by hand from their definition: each value of a window taken relative
 * to its last row and divided by the column's root mean square one-row change over the training rows; each target
 * the change to the row 1…H ahead divided by that change's root mean square over the training rows (computed here
 * with mathjs, a general-purpose reference library); a hybrid reads the smoothing method's forecasts of the next row
 * (its forecasts from runSmoothing); and forecasts that are exactly right score 0 at every row ahead.
 */
import { describe, expect, it } from 'vitest';
import { mean, sqrt } from 'mathjs';
import { prepareSeries, runSmoothing } from '@weft/io';
import type { SeriesWindows } from '@weft/io';

const rows = 120;
// A rising, wavy series with no time column: y_t = 10 + 0.05 t² / 10 + sin(t / 2).
const y = Array.from({ length: rows }, (_, t) => 10 + (0.05 * t * t) / 10 + Math.sin(t / 2));
const text = `level\n${y.map((v) => v.toFixed(6)).join('\n')}\n`;
const values = y.map((v) => Number(v.toFixed(6)));
const options = { window: 3, lookback: 0, streams: 4, validationShare: 0.2, testShare: 0.1, horizon: 2, seed: '1', season: null, given: new Set(['window', 'streams']) };
const rms = (list: number[]) => sqrt(mean(list.map((v) => v * v))) as number;

describe('sliding windows', () => {
  it('take each window relative to its last row and each target as the change to every row ahead, scaled as defined', () => {
    const prepared = prepareSeries(text, 'level.csv', options);
    const windows = prepared.examples as SeriesWindows;
    expect(windows.kind).toBe('windows');
    const trainEnd = 84; // 120 rows less 24 validation and 12 test
    const deviation = rms(Array.from({ length: trainEnd - 1 }, (_, i) => values[i + 1] - values[i]));
    const ahead = [1, 2].map((h) => rms(Array.from({ length: trainEnd - h }, (_, t) => values[t + h] - values[t])));
    expect(prepared.metadata.window).toMatchObject({ rows: 3 });
    const recorded = prepared.metadata.window as { deviation: number[]; targetDeviation: number[] };
    expect(recorded.deviation[0]).toBeCloseTo(deviation, 12);
    recorded.targetDeviation.forEach((d, i) => expect(d).toBeCloseTo(ahead[i], 12));
    // The first training window ends at row 2; the last at row 81 (its row 2 ahead, 83, the last training row).
    expect(windows.train).toHaveLength(80);
    const t = 2;
    expect(windows.train[0].values.map((v) => Number(v.toFixed(12)))).toEqual([0, 1, 2].map((k) => Number(((values[k] - values[t]) / deviation).toFixed(12))));
    expect(windows.train[0].target[0]).toBeCloseTo((values[t + 1] - values[t]) / ahead[0], 12);
    expect(windows.train[0].target[1]).toBeCloseTo((values[t + 2] - values[t]) / ahead[1], 12);
    expect(prepared.outputWidth).toBe(2);
    expect(prepared.metadata.rowsAhead).toBe('all');
  });

  it('score forecasts that are exactly right as 0 at every row ahead, and the baselines above it', () => {
    const prepared = prepareSeries(text, 'level.csv', options);
    const windows = prepared.examples as SeriesWindows;
    const perfect = (set: SeriesWindows['test']) => set.flatMap((w) => w.target);
    // A test window's targets past the last row are 0 and never scored; every scored one is exact.
    const report = prepared.heldOut(perfect(windows.test), 2);
    expect(report.model.value).toBeCloseTo(0, 9);
    expect(report.model.byRowsAhead!.map((s) => s.rowsAhead)).toEqual([1, 2]);
    expect(report.baselines.every((b) => b.value > 0)).toBe(true);
    expect(prepared.validationFigure(perfect(windows.validationForecasts), 2)).toBeCloseTo(0, 9);
    // Three members, two exactly right and one far off: the median is exactly right.
    const members = windows.test.flatMap((w) => [...w.target, ...w.target.map((v) => v + 5), ...w.target]);
    expect(prepared.heldOut(members, 6).model.value).toBeCloseTo(0, 9);
  });

  it('read the hybrid smoothing method\'s forecast of the next row beside the values', () => {
    const prepared = prepareSeries(text, 'level.csv', { ...options, hybrid: true });
    const windows = prepared.examples as SeriesWindows;
    const recorded = prepared.metadata.window as { deviation: number[]; hybrid: { method: string }[] };
    const forecasts = new Float64Array(rows);
    runSmoothing(values, 84, recorded.hybrid[0] as Parameters<typeof runSmoothing>[2], 1, forecasts);
    // Each row of a window: the value, then the smoothing forecast made at it, both relative to the window's last value.
    const t = 2;
    [0, 1, 2].forEach((k) => expect(windows.train[0].values[2 * k + 1]).toBeCloseTo((forecasts[k] - values[t]) / recorded.deviation[0], 9));
  });

  it('read the targets as logarithms when asked, or (auto) where the season swings with the level, and refuse a value not above 0', () => {
    // Monthly, a season whose swing grows with the level (multiplicative), and one whose swing stays (additive).
    const swinging = Array.from({ length: 144 }, (_, t) => (100 + 2 * t) * (1 + 0.3 * Math.sin((2 * Math.PI * t) / 12)));
    const steady = Array.from({ length: 144 }, (_, t) => 100 + 2 * t + 30 * Math.sin((2 * Math.PI * t) / 12));
    const monthly = (ys: number[]) => `month,level\n${ys.map((v, t) => `${1990 + Math.floor(t / 12)}-${String((t % 12) + 1).padStart(2, '0')},${v.toFixed(4)}`).join('\n')}\n`;
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
    expect(logged.heldOut(windows.test.flatMap((x) => x.target), 1).model.value).toBeCloseTo(0, 6);
    const withZero = monthly(swinging.map((v, t) => (t === 5 ? 0 : v)));
    expect(() => prepareSeries(withZero, 'm.csv', { ...base, log: 'yes' })).toThrowError('Bad data at m.csv:7:9: expected a number > 0 in column "level" (--log yes reads its logarithm), received 0');
  });
});
