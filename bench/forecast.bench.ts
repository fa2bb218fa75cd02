/**
 * Training a short series to its stopping point the way a newcomer does it: `weft train` with no flag on 200 rows
 * of a rising series with a 24-row season and noise (tests/helpers/series.ts), so sliding windows, the window,
 * batch, epochs and patience all chosen from the data; the baselines fitted and the weight file written too.
 * Reported in seconds per run, on the default backend (the command picks it).
 *
 * Decision these numbers led to: short series train on sliding windows by default; one training of this size took
 * 0.46 s here, so choosing between a plain and a hybrid model by training both (and the winner again) is affordable:
 * 0.95 s per run with that choice.
 *
 * `train.forecast.panel`: the same, with no flag, on a table of 14 series (vega-datasets' monthly unemployment of 14
 * industries, JSON records, 1,708 rows): one model across every series, trained to its stopping point, each series'
 * baselines fitted, the plain and the hybrid model both tried. Seconds per run.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs, train } from '@weft/cli';
import { trainFlags } from '../packages/cli/src/train.js';
import { fileURLToPath } from 'node:url';
import { seasonalTrend } from '../tests/helpers/series.js';
import type { BenchCase } from './harness.js';

/** Runs per second of `run`, after one warm-up run: at least three runs, and at least `seconds` seconds of them. */
async function runsPerSecond(run: () => Promise<unknown>, seconds: number): Promise<number> {
  await run();
  let runs = 0;
  const started = performance.now();
  while (runs < 3 || performance.now() - started < seconds * 1000) {
    await run();
    runs++;
  }
  return runs / ((performance.now() - started) / 1000);
}

export const cases: BenchCase[] = [
  {
    id: 'train.forecast.short',
    unit: 's',
    defaultOnly: true,
    measureAsync: async (_backend, seconds) => {
      const folder = mkdtempSync(join(tmpdir(), 'weft-bench-forecast-'));
      const file = join(folder, 'short.csv');
      writeFileSync(
        file,
        `level\n${seasonalTrend(200)
          .map((v) => v.toFixed(4))
          .join('\n')}\n`,
      );
      return runsPerSecond(
        () => train(parseArgs('train', [file, '--quiet', '--start-over', '--out', join(folder, 'short.weft.json')], trainFlags), () => undefined),
        seconds,
      );
    },
    setup: () => () => undefined,
    value: (callsPerSecond) => 1 / callsPerSecond,
  },
  {
    id: 'train.forecast.panel',
    unit: 's',
    defaultOnly: true,
    measureAsync: async (_backend, seconds) => {
      const folder = mkdtempSync(join(tmpdir(), 'weft-bench-panel-'));
      const file = fileURLToPath(new URL('../node_modules/vega-datasets/data/unemployment-across-industries.json', import.meta.url));
      return runsPerSecond(
        () => train(parseArgs('train', [file, '--quiet', '--start-over', '--out', join(folder, 'industries.weft.json')], trainFlags), () => undefined),
        seconds,
      );
    },
    setup: () => () => undefined,
    value: (callsPerSecond) => 1 / callsPerSecond,
  },
];
