/**
 * Multi-sensor forecasting. Invented scenario: a cold-storage room with four temperature sensors, its compressor
 * defrosting every six hours (24 readings at 15 minutes), door openings in working hours. An LSTM forecasts all
 * four sensors one reading ahead; the yardstick is the seasonal-naive forecast (the reading one defrost cycle
 * earlier).
 *
 * Run: npx tsx examples/forecast-sensors/main.ts
 */
import { Random, Tape, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches } from '@weft/optim';
import { runIfMain, smallBudget } from '../shared.js';

const CYCLE = 24;

export function coldRoom(readings: number, seed = 'cold-room'): number[][] {
  const random = new Random(seed);
  const rows: number[][] = [];
  let drift = 0;
  for (let i = 0; i < readings; i++) {
    const phase = i % CYCLE;
    const defrost = phase < 3 ? 2.5 * (phase + 1) : 7.5 * Math.exp(-(phase - 2) / 2.5);
    const hour = (i / 4) % 24;
    const door = hour > 8 && hour < 17 && random.uniform() < 0.15 ? 1.2 : 0;
    drift = 0.97 * drift + 0.08 * random.normal();
    rows.push([0, 1, 2, 3].map((s) => -18 + 0.4 * s + defrost * (1 - 0.15 * s) + door * (s === 0 ? 1 : 0.4) + drift + 0.15 * random.normal()));
  }
  return rows;
}

export async function forecastSensors(): Promise<{ model: number; seasonalNaive: number }> {
  const rows = coldRoom(smallBudget() ? 1200 : 4000);
  const heldOut = Math.floor(rows.length * 0.2);
  const trainRows = rows.length - heldOut;
  const mean = [0, 1, 2, 3].map((s) => rows.slice(0, trainRows).reduce((t, r) => t + r[s], 0) / trainRows);
  const deviation = [0, 1, 2, 3].map((s) => Math.sqrt(rows.slice(0, trainRows).reduce((t, r) => t + (r[s] - mean[s]) ** 2, 0) / trainRows));
  const normalised = rows.map((r) => r.map((v, s) => (v - mean[s]) / deviation[s]));
  const model = buildModel({ input: { kind: 'values', width: 4 }, layers: [{ cell: 'lstm', hidden: 32 }], readout: { width: 4 } }, { seed: 1 });
  const trainer = new Trainer({
    model,
    data: streamBatches({ kind: 'values', values: normalised.slice(0, trainRows).flat(), features: 4 }, { streams: 4, window: 32 }),
    optimizer: new AdamRule({ rate: 0.01 }),
    epochs: smallBudget() ? 8 : 25,
    gradientNormLimit: 1,
  });
  while (!trainer.finished) trainer.step();
  // One pass over all readings; the output at reading t forecasts reading t + 1.
  const outputs = model.run(new Tape({ recording: false }), tensor(normalised.flat(), [rows.length, 1, 4])).outputs.data;
  let modelError = 0;
  let seasonalError = 0;
  let count = 0;
  for (let t = trainRows; t < rows.length; t++) {
    for (let s = 0; s < 4; s++) {
      const forecast = outputs[(t - 1) * 4 + s] * deviation[s] + mean[s];
      modelError += Math.abs(forecast - rows[t][s]);
      seasonalError += Math.abs(rows[t - CYCLE][s] - rows[t][s]);
      count++;
    }
  }
  const result = { model: modelError / count, seasonalNaive: seasonalError / count };
  console.log(`held-out MAE over ${heldOut} readings × 4 sensors: LSTM ${result.model.toFixed(3)} °C, seasonal-naive ${result.seasonalNaive.toFixed(3)} °C`);
  return result;
}

runIfMain(import.meta.url, forecastSensors);
