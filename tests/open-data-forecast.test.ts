/**
 * A real open dataset: monthly atmospheric CO₂ at Mauna Loa, 1958–2020 (parts per million).
 * Package: vega-datasets 3.2.1 (npm, development dependency), file data/co2-concentration.csv.
 * Original source: Scripps CO2 Program, Scripps Institution of Oceanography, UC San Diego
 * (scrippsco2.ucsd.edu, primary Mauna Loa record), licensed CC BY 4.0 — attribution as that licence asks:
 * "Data from the Scripps CO2 Program" (C. D. Keeling, S. C. Piper et al.).
 *
 * A GRU learns the month-to-month change from the changes before it; its forecast for each held-out month (the
 * last ten years) is last month's value plus the predicted change. It must beat the seasonal-naive forecast
 * (the value twelve rows earlier), the usual yardstick for a monthly series with a yearly cycle.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { Tape, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';

// The package's exports map does not list its data files, so read the file from the installed package folder.
const csvPath = fileURLToPath(new URL('../node_modules/vega-datasets/data/co2-concentration.csv', import.meta.url));

describe('forecasting an open dataset (Mauna Loa CO₂ via vega-datasets)', () => {
  it('beats the seasonal-naive MAE on the last ten years', () => {
    const lines = readFileSync(csvPath, 'utf8').trim().split('\n').slice(1);
    const values = lines.map((line) => Number(line.split(',')[1]));
    expect(values.length).toBeGreaterThan(700);
    expect(values.every(Number.isFinite)).toBe(true);
    const changes = values.slice(1).map((v, i) => v - values[i]);
    const heldOut = 120;
    const trainCount = changes.length - heldOut;
    const mean = changes.slice(0, trainCount).reduce((s, v) => s + v, 0) / trainCount;
    const deviation = Math.sqrt(changes.slice(0, trainCount).reduce((s, v) => s + (v - mean) ** 2, 0) / trainCount);
    const normalised = changes.map((c) => (c - mean) / deviation);
    const model = buildModel({ input: { kind: 'values', width: 1 }, layers: [{ cell: 'gru', hidden: 24 }], readout: { width: 1 } }, { seed: 1 });
    const trainer = new Trainer({
      model,
      data: streamBatches({ kind: 'values', values: normalised.slice(0, trainCount), features: 1 }, { streams: 4, window: 24 }),
      optimizer: new AdamRule({ rate: 0.01 }),
      epochs: 60,
      gradientNormLimit: 1,
    });
    while (!trainer.finished) trainer.step();
    // One pass over the whole series: the output at change t forecasts change t + 1.
    const predicted = model.run(new Tape({ recording: false }), tensor(normalised, [normalised.length, 1, 1])).outputs.data;
    let modelError = 0;
    let seasonal = 0;
    for (let k = changes.length - heldOut; k < changes.length; k++) {
      // Change k is values[k + 1] − values[k]; its forecast came out at position k − 1.
      const month = k + 1;
      const forecast = values[month - 1] + (predicted[k - 1] * deviation + mean);
      modelError += Math.abs(forecast - values[month]);
      seasonal += Math.abs(values[month - 12] - values[month]);
    }
    const modelMae = modelError / heldOut;
    const seasonalMae = seasonal / heldOut;
    console.log(`Mauna Loa CO₂, last ${heldOut} months: GRU MAE ${modelMae.toFixed(3)} ppm, seasonal-naive MAE ${seasonalMae.toFixed(3)} ppm`);
    expect(modelMae).toBeLessThan(seasonalMae);
  });
});
