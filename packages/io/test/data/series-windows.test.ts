/**
 * Sliding windows (series-windows.ts) worked by hand from their definition: each value of a window taken relative
 * to its last row and divided by the column's root mean square one-row change over the training rows; each target
 * the change to the row 1…H ahead divided by that change's root mean square over the training rows (computed here
 * with mathjs, a general-purpose reference library); a hybrid reads the smoothing method's forecasts of the next row
 * (its forecasts from runSmoothing); and forecasts that are exactly right score 0 at every row ahead.
 */
import { describe, expect, it } from 'vitest';
import { mean, sqrt } from 'mathjs';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { createRowForecaster, modelTensors, prepareSeries, readWeightFile, runSmoothing, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import type { SeriesWindows } from '@weft/io';

const rows = 120;
// A rising, wavy series with no time column: y_t = 10 + 0.05 t² / 10 + sin(t / 2).
const y = Array.from({ length: rows }, (_, t) => 10 + (0.05 * t * t) / 10 + Math.sin(t / 2));
const text = `level\n${y.map((v) => v.toFixed(6)).join('\n')}\n`;
const values = y.map((v) => Number(v.toFixed(6)));
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

  it("read the hybrid smoothing method's forecast of the next row beside the values", () => {
    const prepared = prepareSeries(text, 'level.csv', { ...options, hybrid: true });
    const windows = prepared.examples as SeriesWindows;
    const recorded = prepared.metadata.window as { deviation: number[]; hybrid: { method: string }[] };
    const forecasts = new Float64Array(rows);
    runSmoothing(values, 84, recorded.hybrid[0] as Parameters<typeof runSmoothing>[2], 1, forecasts);
    // Each row of a window: the value, then the smoothing forecast made at it, both relative to the window's last value.
    const t = 2;
    [0, 1, 2].forEach((k) => expect(windows.train[0].values[2 * k + 1]).toBeCloseTo((forecasts[k] - values[t]) / recorded.deviation[0], 9));
  });

  describe('with missing readings', () => {
    // Two columns, a time column, holes in both: the target's rows 50–52 and 90, the input's rows 10–29 (a long gap).
    const days = 160;
    const heat = Array.from({ length: days }, (_, t) => 20 + 5 * Math.sin((2 * Math.PI * t) / 7) + 0.02 * t);
    const wind = Array.from({ length: days }, (_, t) => 3 + Math.cos(t / 3));
    const heatGone = (t: number) => (t >= 50 && t <= 52) || t === 90 || t === 150;
    const windGone = (t: number) => t >= 10 && t < 30;
    const cell = (v: number, gone: boolean) => (gone ? 'NA' : v.toFixed(4));
    const gappy = `date,heat,wind\n${heat.map((v, t) => `${new Date(Date.UTC(2026, 0, 1 + t)).toISOString().slice(0, 10)},${cell(v, heatGone(t))},${cell(wind[t], windGone(t))}`).join('\n')}\n`;
    const settings = {
      window: 6,
      lookback: 0,
      streams: 8,
      validationShare: 0.2,
      testShare: 0.15,
      horizon: 1,
      seed: '1',
      season: 7,
      given: new Set(['window', 'streams']),
      targets: ['heat'],
      calendar: false,
    };

    it('fill each window from its own rows and those before it, flag the holes, weigh a missing target 0, and keep long gaps out of training', () => {
      const prepared = prepareSeries(gappy, 'gappy.csv', settings);
      const windows = prepared.examples as SeriesWindows;
      // Inputs: heat, wind, then a 0/1 flag for each (both had holes).
      expect(prepared.inputWidth).toBe(4);
      expect(prepared.metadata.missing).toMatchObject({ rule: 'interpolate', gapLimit: 3, flagged: [0, 1] });
      const deviation = (prepared.metadata.window as { deviation: number[] }).deviation;
      const value = (t: number) => Number(heat[t].toFixed(4));
      // The window ending at row 53 (rows 48–53) holds the gap 50–52, closed by row 53: interpolated 49 → 53.
      const flags = (w: { values: number[] }) => [0, 1, 2, 3, 4, 5].map((k) => w.values[4 * k + 2]);
      const at53 = windows.train.find((w) => flags(w).join() === '0,0,1,1,1,0');
      expect(at53).toBeDefined();
      const interpolatedAt51 = value(49) + ((value(53) - value(49)) * 2) / 4;
      expect(at53!.values[4 * 3]).toBeCloseTo((interpolatedAt51 - value(53)) / deviation[0], 12);
      expect([at53!.values[4 * 2 + 2], at53!.values[4 * 3 + 2], at53!.values[4 * 4 + 2], at53!.values[4 * 5 + 2]]).toEqual([1, 1, 1, 0]);
      // Training windows never hold a row of the 20-row gap (rows 10–29), nor end before a missing target.
      expect(windows.train.every((w) => w.values.every((_, i) => i % 4 !== 3 || w.values[i] === 0))).toBe(true);
      expect(windows.train.some((w) => w.targetWeights?.[0] === 0)).toBe(false);
      // Validation windows keep a target weight per value; the test windows include every row, gaps and all.
      expect(windows.validation.every((w) => w.targetWeights !== undefined)).toBe(true);
      expect(prepared.notes.some((n) => n.startsWith('missing readings: heat 5 of 160 (3%), wind 20 of 160 (13%)'))).toBe(true);
    });

    it('score exact forecasts as 0 on the observed rows, counting only them, and never read a forecast of a row never observed', () => {
      const prepared = prepareSeries(gappy, 'gappy.csv', settings);
      const windows = prepared.examples as SeriesWindows;
      const exact = windows.test.flatMap((w) => w.target);
      const report = prepared.heldOut(exact, 1);
      expect(report.model.value).toBeCloseTo(0, 9);
      // 24 test rows (0.15 of 160), one of them (row 150) never observed.
      expect(report.model.overall?.count).toBe(23);
      expect(report.baselines.every((b) => b.overall?.count === 23)).toBe(true);
      // A shadow set of outputs, absurd wherever the target is missing, gives the same figures.
      const absurd = windows.test.flatMap((w) => (w.targetWeights?.[0] === 0 ? [1e12] : w.target));
      expect(prepared.heldOut(absurd, 1)).toEqual(report);
      // A shadow copy of the data with absurd numbers behind every missing cell, marked missing, prepares and scores
      // the same: the examples, the metadata and every figure.
      const shadow = prepareSeries(gappy.replaceAll(',NA', ',-987654321'), 'gappy.csv', { ...settings, missingMarkers: ['-987654321'] });
      expect((shadow.examples as SeriesWindows).train).toEqual(windows.train);
      expect(shadow.metadata).toEqual({ ...prepared.metadata, missing: { ...(prepared.metadata.missing as object), markers: ['-987654321'] } });
      expect(shadow.heldOut(exact, 1)).toEqual(report);
    });

    it("give the runtime's row-by-row forecasts the scored figures to the bit, holes and all, forecasts made at a missing row included", async () => {
      // Two seasons of rows per window, so a missing last row is filled with the season's shape; row 150 is missing
      // and forecasts row 151.
      const prepared = prepareSeries(gappy, 'gappy.csv', { ...settings, window: 14 });
      const windows = prepared.examples as SeriesWindows;
      expect((prepared.metadata.window as { rows: number }).rows).toBe(14);
      const model = buildModel(
        { input: { kind: 'values', width: prepared.inputWidth }, layers: [{ cell: 'gru', hidden: 5 }], readout: { width: 1 } },
        { seed: 4 },
      );
      const random = new Random('gappy runtime');
      for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
      const runtime = await createRuntime(await readWeightFile(await writeWeightFile(model.description, modelTensors(model))));
      const w = (prepared.metadata.window as { rows: number }).rows;
      const outputs = windows.test.flatMap((x) => Array.from(runtime.run(Float32Array.from(x.values), w, 1).subarray(w - 1, w)));
      const report = prepared.heldOut(outputs, 1);
      const forecaster = createRowForecaster(runtime, prepared.metadata);
      const table = gappy
        .trim()
        .split('\n')
        .slice(1)
        .map((line) => line.split(','));
      let sum = 0;
      let count = 0;
      table.forEach((fields, t) => {
        const made = forecaster.next({ date: fields[0], heat: fields[1], wind: fields[2] }, `row ${t}`);
        if (t >= 136 - 1 && t + 1 < days && !heatGone(t + 1)) {
          sum += Math.abs(value(t + 1) - made!.heat);
          count++;
        }
      });
      function value(t: number) {
        return Number(heat[t].toFixed(4));
      }
      expect(count).toBe(23);
      expect(sum / count).toBe(report.model.overall?.mae);
    });
  });
});
