/**
 * The row forecaster of a windowed model (forecast-windows.ts, made by createRowForecaster): once it holds `rows`
 * rows, each forecast is the runtime's stream reset and stepped through the window, every value taken relative to
 * the window's last row over its column's deviation, and the output times the target's deviation added to the last
 * row's level; worked here by hand from the metadata's definition (forecaster.ts), with a second runtime.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { createRowForecaster, modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';

const description = { input: { kind: 'values' as const, width: 2 }, layers: [{ cell: 'lstm' as const, hidden: 5 }], readout: { width: 1 } };
const window = { rows: 3, deviation: [2, 0.5], targetDeviation: [1.5] };
const metadata = {
  task: 'forecast',
  columns: ['heat', 'flow'],
  targetColumns: ['heat'],
  horizon: 1,
  normalisation: { mean: [0, 0], deviation: [1, 1] },
  window,
};
const rows = Array.from({ length: 9 }, (_, t) => ({ heat: 18 + 2 * Math.sin(t / 2), flow: 3 + Math.cos(t) }));

async function runtimeOf(seed: number) {
  const model = buildModel(description, { seed });
  const random = new Random(`forecast-windows ${seed}`);
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
  return createRuntime(await writeWeightFile(model.description, modelTensors(model)));
}

describe('the row forecaster of a windowed model', () => {
  it('forecasts nothing before a full window, then the last level plus the output read through the window', async () => {
    const forecaster = createRowForecaster(await runtimeOf(1), metadata);
    const streams = (await runtimeOf(1)).streams(1);
    expect(forecaster.warmUp).toBe(3);
    rows.forEach((row, t) => {
      const got = forecaster.next(row);
      if (t < 2) {
        expect(got).toBeNull();
        return;
      }
      // By hand: reset, then the window's rows oldest first, each relative to the last row over the deviations.
      streams.reset();
      const last = rows[t];
      let out: Float32Array = new Float32Array(1);
      for (let k = t - 2; k <= t; k++) out = streams.step([(rows[k].heat - last.heat) / 2, (rows[k].flow - last.flow) / 0.5]);
      expect(Math.abs(got!.heat - (last.heat + out[0] * 1.5))).toBeLessThan(1e-9);
    });
  });

  it('starts again from an empty window after reset', async () => {
    const forecaster = createRowForecaster(await runtimeOf(2), metadata);
    const first = rows.slice(0, 3).map((row) => forecaster.next(row));
    forecaster.reset();
    const again = rows.slice(0, 3).map((row) => forecaster.next(row));
    expect(again).toEqual(first);
    expect(again[2]).not.toBeNull();
  });

  it('refuses a row with a value that is not a number, naming the column', async () => {
    const forecaster = createRowForecaster(await runtimeOf(3), metadata);
    expect(() => forecaster.nextValuesInto([1, Number.POSITIVE_INFINITY], new Float64Array(1))).toThrow(/values\.flow/);
  });
});
