// An edge program: load a weight file and stream named readings through the runtime, one at a time, with the
// file's own metadata doing the normalisation and the de-normalisation (createTranslator), so each forecast comes
// out named and in real units, whatever column it is. The loop itself (numbers in through inputsFromNumbers, a
// stream step into a buffer, outputsInto) allocates nothing per reading (packages/io/test/translate.test.ts counts
// the collections over 100,000 readings of that loop: none); the named readings and records here cost a little.
// Run after `npm run demo`: npx tsx examples/edge-stream/main.ts demo-output/greenhouse.weft.json
import { readFileSync } from 'node:fs';
import { createTranslator } from '@weft/io/translate';
import { createRuntime } from '@weft/io/runtime';
import { runIfMain } from '../shared.js';

export type Reading = Readonly<Record<string, number>>;

export async function streamReadings(weightFile: string, readings: readonly Reading[]): Promise<Record<string, number>[]> {
  const runtime = await createRuntime(readFileSync(weightFile, 'utf8'));
  const translator = createTranslator(runtime.metadata);
  const streams = runtime.streams(1);
  // Buffers made once: the reading's numbers, the model's inputs and outputs, the targets in real units.
  const values = new Float64Array(translator.inputNames.length);
  const input = new Float32Array(translator.inputNames.length);
  const output = new Float32Array(runtime.outputWidth);
  const targets = new Float64Array(translator.outputNames.length);
  return readings.map((reading) => {
    translator.inputNames.forEach((name, j) => (values[j] = reading[name]));
    streams.step(translator.inputsFromNumbers(values, input), output);
    translator.outputsInto(output, targets);
    // The named record handed back (the one thing made per reading).
    return Object.fromEntries(translator.outputNames.map((name, k) => [name, targets[k]]));
  });
}

runIfMain(import.meta.url, async () => {
  const file = process.argv[2] ?? 'demo-output/greenhouse.weft.json';
  // A day of invented greenhouse readings every 15 minutes.
  const day = Array.from({ length: 96 }, (_, i) => ({
    air_temperature_c: 16 + 8 * Math.max(0, Math.sin((Math.PI * (i / 4 - 8)) / 14)),
    humidity_pct: 80,
    soil_moisture_pct: 40,
    light_klux: 40 * Math.max(0, Math.sin((Math.PI * (i / 4 - 6)) / 14)),
  }));
  const forecasts = await streamReadings(file, day);
  for (let i = 0; i < 96; i += 12) {
    const forecast = Object.entries(forecasts[i])
      .map(([name, value]) => `${name} ${value.toFixed(1)}`)
      .join(', ');
    console.log(`${String(i / 4).padStart(2)}:00  now ${day[i].air_temperature_c.toFixed(1)} °C  in two hours: ${forecast}`);
  }
});
