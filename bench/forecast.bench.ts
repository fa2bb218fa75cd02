/**
 * Training a short series to its stopping point the way a newcomer does it: `weft train` with no flag on 200 rows
 * of a rising series with a 24-row season and noise (tests/helpers/series.ts), so sliding windows, the window,
 * batch, epochs and patience all chosen from the data; the baselines fitted and the weight file written too.
 * Reported in seconds per run, on the default backend (the command picks it).
 *
 * Decision these numbers led to: short series train on sliding windows by default; one training of this size took
 * 0.46 s here, so choosing between a plain and a hybrid model by training both (and the winner again) is affordable:
 * 0.95 s per run with that choice.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs, train } from '@weft/cli';
import { trainFlags } from '../packages/cli/src/train.js';
import { seasonalTrend } from '../tests/helpers/series.js';
import type { BenchCase } from './harness.js';

export const cases: BenchCase[] = [
  {
    id: 'train.forecast.short',
    unit: 's',
    defaultOnly: true,
    measureAsync: async (_backend, seconds) => {
      const folder = mkdtempSync(join(tmpdir(), 'weft-bench-forecast-'));
      const file = join(folder, 'short.csv');
      writeFileSync(file, `level\n${seasonalTrend(200).map((v) => v.toFixed(4)).join('\n')}\n`);
      const run = () => train(parseArgs('train', [file, '--quiet', '--start-over', '--out', join(folder, 'short.weft.json')], trainFlags), () => undefined);
      await run(); // warm-up
      let runs = 0;
      const started = performance.now();
      while (runs < 3 || performance.now() - started < seconds * 1000) {
        await run();
        runs++;
      }
      return runs / ((performance.now() - started) / 1000);
    },
    setup: () => () => undefined,
    value: (callsPerSecond) => 1 / callsPerSecond,
  },
];
