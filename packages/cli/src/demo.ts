/**
 * `npm run demo`: the main job end to end on bundled demo data. Readings from the sensors of an invented
 * community greenhouse (demo/greenhouse.csv, made by demo/make-greenhouse.ts) train a GRU to forecast the air
 * temperature over the next two hours (every 15-minute row up to 8 ahead), with settings chosen from the data; the
 * weight file is saved, loaded back into the inference runtime, and its forecasts on the test days (the last tenth,
 * used for neither training nor stopping) are printed beside what happened.
 */
import { mkdirSync, readFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadWeightFile } from '@weft/io/node';
import { createRuntime } from '@weft/io/runtime';
import { parseArgs } from './args.js';
import { createRowForecaster, parseTable } from '@weft/io';
import { train, trainFlags } from './train.js';

const data = fileURLToPath(new URL('../demo/greenhouse.csv', import.meta.url));
const folder = resolve(process.argv[2] ?? 'demo-output');
// The tests set a short budget; by default the epochs are chosen from the data.
const epochs = process.env.WEFT_DEMO_EPOCHS;

async function demo(): Promise<void> {
  mkdirSync(folder, { recursive: true });
  const out = join(folder, 'greenhouse.weft.json');
  console.log('weft demo: forecasting a greenhouse two hours ahead');
  console.log(`data: ${data}`);
  console.log('  invented readings every 15 minutes for 42 days: air temperature, humidity, soil moisture, light\n');
  const flags = [
    '--target',
    'air_temperature_c',
    '--horizon',
    '8',
    '--cell',
    'gru',
    ...(epochs === undefined ? [] : ['--epochs', epochs]),
    '--start-over',
    '--out',
    out,
  ];
  console.log(`$ weft train greenhouse.csv ${flags.slice(0, -2).join(' ')} --out ${out}`);
  const outcome = await train(parseArgs('train', [data, ...flags], trainFlags));

  // Load the saved file back into the runtime and forecast the test days from it.
  const file = await loadWeightFile(out);
  const runtime = await createRuntime(file);
  // The forecaster applies what training recorded (the columns' scaling, a window if it trained on windows), so
  // the forecasts come out in °C.
  const forecaster = createRowForecaster(runtime, file.metadata as Record<string, unknown>);
  const table = parseTable(readFileSync(data, 'utf8'), { file: data });
  const columns = forecaster.readNames.map((c) => table.header.indexOf(c));
  const target = forecaster.outputNames[0];
  const targetColumn = table.header.indexOf(target);
  const horizon = Number((file.metadata as { horizon: number }).horizon);
  const firstTest = table.rows.length - (outcome.prepared.metadata.split as { testRows: number }).testRows;
  const row: Record<string, string> = {};
  const samples: string[] = [];
  for (let r = 0; r + horizon < table.rows.length; r++) {
    forecaster.readNames.forEach((c, j) => (row[c] = table.rows[r].fields[columns[j]]));
    const forecast = forecaster.next(row)?.[target];
    if (forecast === undefined || r + horizon < firstTest || (r + horizon - firstTest) % 40 !== 0 || samples.length >= 10) continue;
    const now = Number(table.rows[r].fields[targetColumn]);
    const actual = Number(table.rows[r + horizon].fields[targetColumn]);
    samples.push(
      `  ${table.rows[r].fields[0].padEnd(17)}  ${now.toFixed(2).padStart(6)}  ${actual.toFixed(2).padStart(12)}  ${forecast.toFixed(2).padStart(8)}`,
    );
  }
  console.log('\nsome forecasts from the saved weight file, loaded into the runtime (test days, °C):');
  console.log(`  ${'time'.padEnd(17)}  ${'now'.padStart(6)}  ${'actual in 2h'.padStart(12)}  ${'forecast'.padStart(8)}`);
  for (const line of samples) console.log(line);
  console.log(`\nfiles: weight file ${outcome.out}\n       checkpoint  ${outcome.checkpoint}\n       loss curve  ${outcome.curve}`);
  console.log(`next:  weft inspect ${outcome.out}`);
  console.log('\nThese forecasts are estimates from invented data; see the README before letting any model drive decisions.');
}

demo().catch((error: unknown) => {
  console.error(`demo failed: ${(error as Error).message}`);
  process.exitCode = 1;
});
