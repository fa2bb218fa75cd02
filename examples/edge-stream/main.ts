// An edge program: load a weight file and stream readings through the runtime, one at a time, allocating
// nothing per reading. Run after `npm run demo`: npx tsx examples/edge-stream/main.ts demo-output/greenhouse.weft.json
import { readFileSync } from 'node:fs';
import { createRuntime } from '@weft/io/runtime';
import { runIfMain } from '../shared.js';

export async function streamReadings(weightFile: string, readings: readonly (readonly number[])[]): Promise<number[]> {
  const runtime = await createRuntime(readFileSync(weightFile, 'utf8'));
  const meta = runtime.metadata as { normalisation: { mean: number[]; deviation: number[] } };
  const { mean, deviation } = meta.normalisation;
  const streams = runtime.streams(1);
  const input = new Float32Array(runtime.inputWidth);
  const forecasts: number[] = [];
  for (const reading of readings) {
    for (let j = 0; j < input.length; j++) input[j] = (reading[j] - mean[j]) / deviation[j];
    const output = streams.step(input);
    forecasts.push(output[0] * deviation[0] + mean[0]);
  }
  return forecasts;
}

runIfMain(import.meta.url, async () => {
  const file = process.argv[2] ?? 'demo-output/greenhouse.weft.json';
  // A day of invented readings: temperature, humidity, soil moisture, light every 15 minutes.
  const day = Array.from({ length: 96 }, (_, i) => [16 + 8 * Math.max(0, Math.sin((Math.PI * (i / 4 - 8)) / 14)), 80, 40, 40 * Math.max(0, Math.sin((Math.PI * (i / 4 - 6)) / 14))]);
  const forecasts = await streamReadings(file, day);
  for (let i = 0; i < 96; i += 12) console.log(`${String(i / 4).padStart(2)}:00  now ${day[i][0].toFixed(1)} °C  in two hours ${forecasts[i].toFixed(1)} °C`);
});
