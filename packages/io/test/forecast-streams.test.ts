/**
 * The row forecaster of a stream model (forecast-streams.ts, made by createRowForecaster): it steps once per row
 * exactly as the translator and runtime do by hand, and with a target transform adds the forecast change, in real
 * units, to the target's last level, worked here by hand from the metadata's definition.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { buildModel } from '@weft/cells';
import { createRowForecaster, createTranslator, modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';

const description = { input: { kind: 'values' as const, width: 2 }, layers: [{ cell: 'gru' as const, hidden: 6 }], readout: { width: 1 } };
const base = { task: 'forecast', columns: ['heat', 'flow'], targetColumns: ['heat'], horizon: 1, normalisation: { mean: [20, 3], deviation: [4, 1.5] } };
const rows = Array.from({ length: 12 }, (_, t) => ({ heat: 20 + 3 * Math.sin(t / 2), flow: 3 + Math.cos(t) }));

async function runtimeOf(seed: number) {
  const model = buildModel(description, { seed });
  const random = new Random(`forecast-streams ${seed}`);
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
  return createRuntime(await writeWeightFile(model.description, modelTensors(model)));
}

describe('the row forecaster of a stream model', () => {
  it('steps once per row, as the translator and runtime do by hand', async () => {
    const forecaster = createRowForecaster(await runtimeOf(1), base);
    const runtime = await runtimeOf(1);
    const translator = createTranslator(base);
    const streams = runtime.streams(1);
    expect(forecaster.warmUp).toBe(1);
    for (const row of rows) expect(forecaster.next(row)).toEqual(translator.outputs(streams.step(translator.inputs(row))));
  });

  it('adds the forecast change (its normalisation undone) to the last level under a target transform', async () => {
    const metadata = { ...base, targetTransform: { kind: 'differences', mean: [0.1], deviation: [0.5] } };
    const forecaster = createRowForecaster(await runtimeOf(2), metadata);
    const streams = (await runtimeOf(2)).streams(1);
    for (const row of rows) {
      const got = forecaster.next(row)!.heat;
      const out = streams.step([(row.heat - 20) / 4, (row.flow - 3) / 1.5]);
      expect(Math.abs(got - (row.heat + out[0] * 0.5 + 0.1))).toBeLessThan(1e-9);
    }
  });
});
