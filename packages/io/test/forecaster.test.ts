/**
 * Row forecasters (forecaster.ts; a stream model's in forecast-streams.test.ts): a windowed model forecasts, once it has a window of rows, what the same runtime gives for that window read
 * relative to its last row from a zero state, worked here by hand from the metadata's definition; it refuses a
 * malformed `window` record naming the field, and a row without a number naming the column.
 */
import { execFileSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { median } from 'mathjs';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { stackMembers } from '@weft/cells/internal';
import {
  calendarInputs,
  createRowForecaster,
  createSeriesForecasters,
  fitSmoothing,
  modelTensors,
  readWeightFile,
  runSmoothing,
  writeWeightFile,
} from '@weft/io';
import { seriesMetadata } from '@weft/io/internal';
import { createRuntime } from '@weft/io/runtime';

const description = { input: { kind: 'values' as const, width: 2 }, layers: [{ cell: 'gru' as const, hidden: 6 }], readout: { width: 1 } };
const base = { task: 'forecast', columns: ['heat', 'flow'], targetColumns: ['heat'], horizon: 1, normalisation: { mean: [20, 3], deviation: [4, 1.5] } };

async function runtimeOf(seed: number) {
  const model = buildModel(description, { seed });
  const random = new Random(`forecaster ${seed}`);
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
  return createRuntime(await readWeightFile(await writeWeightFile(model.description, modelTensors(model))));
}

const rows = Array.from({ length: 12 }, (_, t) => ({ heat: 20 + 3 * Math.sin(t / 2), flow: 3 + Math.cos(t) }));

describe('forecasting row by row', () => {
  it('forecasts from the last rows of its window alone, relative to the last row, once it has them', async () => {
    const window = { rows: 4, deviation: [0.5, 2], targetDeviation: [0.25] };
    const forecaster = createRowForecaster(await runtimeOf(2), { ...base, window });
    const runtime = await runtimeOf(2);
    expect(forecaster.warmUp).toBe(4);
    rows.forEach((row, t) => {
      const made = forecaster.next(row);
      if (t < 3) {
        expect(made).toBeNull();
        return;
      }
      // By hand: rows t − 3 … t, each minus row t and divided by its column's deviation, run from a zero state.
      const input = new Float32Array(8);
      for (let k = 0; k < 4; k++) {
        input[2 * k] = (rows[t - 3 + k].heat - row.heat) / 0.5;
        input[2 * k + 1] = (rows[t - 3 + k].flow - row.flow) / 2;
      }
      const out = runtime.run(input, 4, 1);
      expect(made!.heat).toBeCloseTo(row.heat + out[3] * 0.25, 5);
    });
    forecaster.reset();
    expect(forecaster.next(rows[0])).toBeNull();
  });

  it('reads the smoothing forecasts beside the values in a hybrid and forecasts the correction to the last one', async () => {
    const heat = rows.map((r) => r.heat);
    const fit = fitSmoothing(heat, 12, 'damped')!;
    const { meanSquaredError: _unused, ...parameters } = fit;
    const smoothed = new Float64Array(12);
    runSmoothing(heat, 12, parameters, 1, smoothed);
    const window = { rows: 3, deviation: [0.5, 2], targetDeviation: [0.25], hybrid: [parameters] };
    const hybridDescription = { ...description, input: { kind: 'values' as const, width: 3 } };
    const model = buildModel(hybridDescription, { seed: 4 });
    const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
    const forecaster = createRowForecaster(await createRuntime(file), { ...base, window });
    const runtime = await createRuntime(file);
    rows.forEach((row, t) => {
      const made = forecaster.next(row);
      if (t < 2) return expect(made).toBeNull();
      const input = new Float32Array(9);
      for (let k = 0; k < 3; k++) {
        const r = rows[t - 2 + k];
        input.set([(r.heat - row.heat) / 0.5, (r.flow - row.flow) / 2, (smoothed[t - 2 + k] - row.heat) / 0.5], 3 * k);
      }
      const out = runtime.run(input, 3, 1);
      expect(made!.heat).toBeCloseTo(smoothed[t] + out[2] * 0.25, 5);
    });
  });

  it("reads each row's calendar position from the time column after its values, and names a time that does not parse", async () => {
    const window = { rows: 3, deviation: [0.5, 2], targetDeviation: [0.25], calendar: ['month of year'] };
    const model = buildModel({ ...description, input: { kind: 'values' as const, width: 4 } }, { seed: 5 });
    const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
    const meta = { ...base, timeColumn: 'month', window };
    const forecaster = createRowForecaster(await createRuntime(file), meta);
    const runtime = await createRuntime(file);
    expect(forecaster.readNames).toEqual(['heat', 'flow', 'month']);
    const month = (t: number) => `2024-${String(t + 1).padStart(2, '0')}`;
    rows.forEach((row, t) => {
      const made = forecaster.next({ ...row, month: month(t) });
      if (t < 2) return expect(made).toBeNull();
      const input = new Float32Array(12);
      for (let k = 0; k < 3; k++) {
        const r = rows[t - 2 + k];
        input.set([(r.heat - row.heat) / 0.5, (r.flow - row.flow) / 2], 4 * k);
        calendarInputs(['month of year'], Date.UTC(2024, t - 2 + k, 1), input, 4 * k + 2);
      }
      const out = runtime.run(input, 3, 1);
      expect(made!.heat).toBeCloseTo(row.heat + out[2] * 0.25, 5);
    });
    expect(() => forecaster.next({ ...rows[0], month: 'Smarch' }, 'readings.csv:14:1')).toThrowError(
      'Bad data at readings.csv:14:1.month: expected a time in column "month" (the model reads where in the calendar each row falls), received "Smarch"',
    );
    expect(() => createRowForecaster(runtime, { ...meta, timeColumn: undefined })).toThrowError(
      /^Bad weight file at metadata\.timeColumn: expected the name of the time column/,
    );
  });

  it('forecasts each series of many with its own scales and its own 0/1 series input, worked by hand', async () => {
    // Two series of one model reading heat, flow and a 0/1 input per series: 4 inputs a row.
    const wide = buildModel({ ...description, input: { kind: 'values', width: 4 } }, { seed: 3 });
    const runtime = await createRuntime(await readWeightFile(await writeWeightFile(wide.description, modelTensors(wide))));
    const own = (scale: number) => ({
      normalisation: base.normalisation,
      window: { rows: 3, deviation: [0.5 * scale, 2 * scale], targetDeviation: [0.25 * scale] },
    });
    const meta = {
      ...base,
      panel: {
        idColumn: 'site',
        idInputs: true,
        series: [
          { id: 'north', ...own(1) },
          { id: 'south', ...own(10) },
        ],
      },
      intervals: { level: 0.9, halfWidth: [1, 10] },
    };
    const forecasters = createSeriesForecasters(runtime, meta);
    expect([...forecasters.keys()]).toEqual(['north', 'south']);
    expect(forecasters.get('south')!.intervals).toEqual({ level: 0.9, halfWidth: [10] });
    const south = rows.slice(0, 3).map((r) => ({ heat: 10 * r.heat, flow: 10 * r.flow }));
    const made = south.map((row) => forecasters.get('south')!.next(row));
    // By hand: the window relative to its last row, over the south's deviations, then 0, 1 (the south's input).
    const input = new Float32Array(12);
    for (let k = 0; k < 3; k++) input.set([(south[k].heat - south[2].heat) / 5, (south[k].flow - south[2].flow) / 20, 0, 1], 4 * k);
    const out = runtime.run(input, 3, 1);

    expect(made[2]!.heat).toBeCloseTo(south[2].heat + out[2] * 2.5, 4);
    // The same series through seriesMetadata and createRowForecaster gives the same bits.
    const alone = createRowForecaster(runtime, seriesMetadata(meta, 'south'));
    expect(south.map((row) => alone.next(row))[2]).toEqual(made[2]);
    expect(() => seriesMetadata(meta, 'east')).toThrowError(
      'Bad data at series "east": expected a series the model was trained on ("north", "south"), received an unknown id',
    );
    expect(() => createRowForecaster(runtime, meta)).toThrowError(
      /^Invalid argument at createRowForecaster\.metadata: expected the metadata of a model of one series/,
    );
  });

  it('refuses a malformed window record naming the field, and a row without a number naming the column', async () => {
    const runtime = await runtimeOf(3);
    expect(() => createRowForecaster(runtime, { ...base, window: { rows: 4, deviation: [1], targetDeviation: [1] } })).toThrowError(
      'Bad weight file at metadata.window.deviation: expected 2 finite numbers > 0 (one per column), received [1]',
    );
    expect(() => createRowForecaster(runtime, { ...base, window: { rows: 0, deviation: [1, 1], targetDeviation: [1] } })).toThrowError(
      /^Bad weight file at metadata\.window\.rows: expected a whole number ≥ 1, received 0$/,
    );
    const forecaster = createRowForecaster(runtime, { ...base, window: { rows: 2, deviation: [1, 1], targetDeviation: [1] } });
    expect(() => forecaster.next({ heat: 'warm', flow: 1 }, 'readings.csv:4:1')).toThrowError(
      'Bad data at readings.csv:4:1.heat: expected a finite number, received "warm"',
    );
  });

  it('forecasts every row up to its horizon at once, each row ahead from its own block of outputs and deviation', async () => {
    const window = { rows: 3, deviation: [0.5, 2], targetDeviation: [0.25, 0.5, 0.75] };
    const model = buildModel({ ...description, readout: { width: 3 } }, { seed: 6 });
    const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
    const meta = { ...base, horizon: 3, rowsAhead: 'all', window };
    const forecaster = createRowForecaster(await createRuntime(file), meta);
    const runtime = await createRuntime(file);
    expect(forecaster.rowsAhead).toEqual([1, 2, 3]);
    const out = new Float64Array(3);
    rows.forEach((row, t) => {
      const ready = forecaster.nextInto(row, out);
      expect(ready).toBe(t >= 2);
      if (!ready) return;
      const input = new Float32Array(6);
      for (let k = 0; k < 3; k++) input.set([(rows[t - 2 + k].heat - row.heat) / 0.5, (rows[t - 2 + k].flow - row.flow) / 2], 2 * k);
      const last = runtime.run(input, 3, 1).subarray(6, 9);
      [0.25, 0.5, 0.75].forEach((d, s) => expect(out[s]).toBeCloseTo(row.heat + last[s] * d, 5));
    });
    // `next` gives the farthest row ahead: the last of what nextInto wrote for the same rows.
    forecaster.reset();
    for (const row of rows.slice(0, 3)) forecaster.nextInto(row, out);
    forecaster.reset();
    rows.slice(0, 2).forEach((row) => expect(forecaster.next(row)).toBeNull());
    expect(forecaster.next(rows[2])).toEqual({ heat: out[2] });
    expect(() => createRowForecaster(runtime, { ...meta, window: { ...window, targetDeviation: [1] } })).toThrowError(
      /metadata\.window\.targetDeviation: expected 3 finite numbers > 0 \(one per target and row ahead/,
    );
  });

  it("forecasts the median of stacked members, the median mathjs takes of each member's own forecast", async () => {
    const window = { rows: 3, deviation: [0.5, 2], targetDeviation: [0.25] };
    const members = [7, 8, 9].map((seed) => {
      const m = buildModel(description, { seed });
      const random = new Random(`member ${seed}`);
      for (const p of m.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
      return m;
    });
    const stacked = stackMembers(members);
    const meta = { ...base, window };
    const together = createRowForecaster(await createRuntime(await readWeightFile(await writeWeightFile(stacked.description, modelTensors(stacked)))), {
      ...meta,
      members: 3,
    });
    expect(together.members).toBe(3);
    const alone = await Promise.all(
      members.map(async (m) => createRowForecaster(await createRuntime(await readWeightFile(await writeWeightFile(m.description, modelTensors(m)))), meta)),
    );
    rows.forEach((row) => {
      const made = together.next(row);
      const each = alone.map((f) => f.next(row));
      if (made === null) return expect(each.every((e) => e === null)).toBe(true);
      expect(made.heat).toBeCloseTo(median(each.map((e) => e!.heat)) as number, 5);
    });
    const runtime = await runtimeOf(3);
    expect(() => createRowForecaster(runtime, { ...meta, members: 2 })).toThrowError(
      /^Bad weight file at metadata\.members: expected a count of members whose 1 × 1 forecasts make the model's 1 outputs, received 2$/,
    );
  });

  it('allocates nothing per row given as numbers and a time, holes included, for one series and for many (node --expose-gc, collections counted with a 1 MB young generation)', () => {
    const probe = fileURLToPath(new URL('./forecaster-probe.mjs', import.meta.url));
    for (const mode of ['one', 'many']) {
      const output = execFileSync(process.execPath, ['--expose-gc', '--max-semi-space-size=1', probe, mode], { encoding: 'utf8' });
      const { collections, rows, control } = JSON.parse(output.trim().split('\n').at(-1)!) as { collections: number; rows: number; control: number };
      console.log(
        `${collections} collections over ${rows} rows of a windowed hybrid ensemble reading calendar positions${mode === 'many' ? ', three series taking turns with series inputs' : ''}, one reading in seven missing; ${control} over the same rows when each also makes one small object`,
      );
      // The control proves the count can see an allocation of one small object per row.
      expect(control).toBeGreaterThan(0);
      expect(collections).toBe(0);
    }
  });

  it('takes missing readings where the model records a rule: markers and NaN filled in the window as recorded, a flag input per column with holes', async () => {
    // Inputs: heat, flow, and a 0/1 flag for heat; interpolation inside the window, the last value carried at its end.
    const flagged = { input: { kind: 'values' as const, width: 3 }, layers: [{ cell: 'gru' as const, hidden: 6 }], readout: { width: 1 } };
    const model = buildModel(flagged, { seed: 8 });
    const runtime = await createRuntime(await readWeightFile(await writeWeightFile(model.description, modelTensors(model))));
    const window = { rows: 3, deviation: [0.5, 2], targetDeviation: [0.25] };
    const meta = { ...base, window, missing: { rule: 'interpolate', gapLimit: 2, flagged: [0], fallback: [20, 3], markers: ['?'] } };
    const forecaster = createRowForecaster(runtime, meta);
    expect(forecaster.takesMissing).toBe(true);
    const given = [
      { heat: '20', flow: 1 },
      { heat: 'NA', flow: 2 },
      { heat: '?', flow: 3 },
      { heat: '23', flow: 4 },
      { heat: '', flow: 5 },
    ];
    const made = given.map((row, t) => forecaster.next(row, `row ${t}`));
    // By hand, the window ending at row 3 (rows 1–3): heat 21, 22 interpolated from 20 (before it) to 23; flags 1, 1, 0.
    const byHand = (heat: number[], flow: number[], flags: number[]) => {
      const input = new Float32Array(9);
      for (let k = 0; k < 3; k++) {
        input[3 * k] = (heat[k] - heat[2]) / 0.5;
        input[3 * k + 1] = (flow[k] - flow[2]) / 2;
        input[3 * k + 2] = flags[k];
      }
      const out = runtime.run(input, 3, 1);
      return heat[2] + out[2] * 0.25;
    };
    expect(made[3]!.heat).toBeCloseTo(byHand([21, 22, 23], [2, 3, 4], [1, 1, 0]), 5);
    // The window ending at row 4 (rows 2–4): row 2 interpolated (22), row 4 carried from 23.
    expect(made[4]!.heat).toBeCloseTo(byHand([22, 23, 23], [3, 4, 5], [1, 0, 1]), 5);
    expect(() => forecaster.next({ heat: 'warm', flow: 1 }, 'row 5')).toThrowError(
      'Bad data at row 5.heat: expected a finite number or a missing-reading marker, received "warm"',
    );
    // A model without the record refuses a missing reading, saying why.
    const old = createRowForecaster(await runtimeOf(2), { ...base, window });
    expect(old.takesMissing).toBe(false);
    expect(() => old.next({ heat: 'NA', flow: 1 }, 'row 0')).toThrowError(
      'Bad data at row 0.heat: expected a finite number (this model records no rule for missing readings: retrain it with this version), received "NA"',
    );
  });

  it("reads a logged column's logarithm and sends its forecast back through exp, refusing a value not above 0", async () => {
    const window = { rows: 3, deviation: [0.05, 2], targetDeviation: [0.02], log: [true, false] };
    const forecaster = createRowForecaster(await runtimeOf(15), { ...base, window });
    const runtime = await runtimeOf(15);
    rows.forEach((row, t) => {
      const made = forecaster.next(row);
      if (t < 2) return expect(made).toBeNull();
      const input = new Float32Array(6);
      for (let k = 0; k < 3; k++) input.set([(Math.log(rows[t - 2 + k].heat) - Math.log(row.heat)) / 0.05, (rows[t - 2 + k].flow - row.flow) / 2], 2 * k);
      const out = runtime.run(input, 3, 1);
      expect(made!.heat).toBeCloseTo(Math.exp(Math.log(row.heat) + out[2] * 0.02), 5);
    });
    expect(() => forecaster.next({ heat: -1, flow: 1 }, 'readings.csv:9:1')).toThrowError(
      'Bad data at readings.csv:9:1.heat: expected a number > 0 (the model reads its logarithm), received -1',
    );
    expect(() => createRowForecaster(runtime, { ...base, window: { ...window, log: [true] } })).toThrowError(
      /^Bad weight file at metadata\.window\.log: expected 2 true or false \(one per column\)/,
    );
  });
});
