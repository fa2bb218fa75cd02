/**
 * Series with holes, end to end through `weft train`, `weft score` and `weft run`:
 * - A generated hourly series with a known signal (a rising level, a 24-hour cycle and noise) and holes punched in
 *   runs of 1–10 rows (10% of rows, seeded): the model trained on it, forecasting from the series with its holes,
 *   scores within 10% of the same command on the complete series, both on the rows observed in the gappy copy.
 *   Measured over eight seeds of the generator: ratios 0.86–1.10, mean 1.00, seven of eight within 10% (the seed
 *   here, "holes", was the first one tried: 0.94). A long gap inside the test part costs every forecaster:
 *   Holt-Winters' MAE rose 10% on one seed.
 * - Open data: daily Seattle weather 2012–2015, vega-datasets 3.2.1 (npm, development dependency), file
 *   data/seattle-weather.csv (the package credits NOAA's daily climate records; from memory), with 10% of its
 *   readings removed (seeded) and written as empty cells or NA: `weft train` with defaults trains, its verdict
 *   counts only the observed test rows (the count asserted against the file), `weft score` repeats the figures from
 *   the runtime, and `weft run` gives a forecast at every row after the window, holes included, from a
 *   file and from standard input alike.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { parseArgs, train } from '@weft/cli';
import { createRowForecaster } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { loadWeightFile } from '@weft/io/node';
import { trainFlags } from '../packages/cli/src/train.js';
import { score, scoreFlags } from '../packages/cli/src/score.js';

const seattle = fileURLToPath(new URL('../node_modules/vega-datasets/data/seattle-weather.csv', import.meta.url));
const binary = fileURLToPath(new URL('../packages/cli/dist/main.js', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-missing-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

async function trainQuietly(argv: string[]) {
  const lines: string[] = [];
  const outcome = await train(parseArgs('train', argv, trainFlags), (line) => lines.push(line));
  return { outcome, text: lines.join('\n') };
}

/** The model's MAE over the test rows (the last 48) whose reading is present in `observed`, forecasting from `file`. */
async function maeOnObserved(weights: string, file: string, observed: readonly (number | null)[]): Promise<{ mae: number; count: number }> {
  const loaded = await loadWeightFile(weights);
  const forecaster = createRowForecaster(await createRuntime(loaded), loaded.metadata);
  const rows = readFileSync(file, 'utf8')
    .trim()
    .split('\n')
    .slice(1)
    .map((line) => line.split(','));
  const made = rows.map(([time, level], t) => forecaster.next({ time, level }, `${file} row ${t}`));
  let sum = 0;
  let count = 0;
  for (let t = rows.length - 48; t < rows.length; t++) {
    const actual = observed[t];
    if (actual === null) continue;
    sum += Math.abs(actual - made[t - 1]!.level);
    count++;
  }
  return { mae: sum / count, count };
}

describe('series with missing readings', () => {
  it('train on a series with holes in runs of 1–10 rows to within 10% of the same command on the complete series', async () => {
    const rows = 480;
    const random = new Random('signal holes');
    const level = Array.from({ length: rows }, (_, t) => 10 + 0.01 * t + 3 * Math.sin((2 * Math.PI * t) / 24) + 0.5 * random.normal());
    const gone = new Array<boolean>(rows).fill(false);
    const holes = new Random('holes holes');
    let missing = 0;
    while (missing < 0.1 * rows) {
      const length = 1 + holes.integer(10);
      const start = 1 + holes.integer(rows - length - 1);
      for (let t = start; t < start + length && missing < 0.1 * rows; t++) {
        if (gone[t]) continue;
        gone[t] = true;
        missing++;
      }
    }
    const time = (t: number) => new Date(Date.UTC(2026, 0, 1, t)).toISOString().slice(0, 16);
    const complete = join(folder, 'complete.csv');
    const gappy = join(folder, 'gappy.csv');
    writeFileSync(complete, `time,level\n${level.map((v, t) => `${time(t)},${v.toFixed(4)}`).join('\n')}\n`);
    writeFileSync(gappy, `time,level\n${level.map((v, t) => `${time(t)},${gone[t] ? 'NA' : v.toFixed(4)}`).join('\n')}\n`);
    const observed = level.map((v, t) => (gone[t] ? null : Number(v.toFixed(4))));
    await trainQuietly([complete, '--quiet', '--out', join(folder, 'complete.weft.json')]);
    const { outcome, text } = await trainQuietly([gappy, '--out', join(folder, 'gappy.weft.json')]);
    expect(text).toMatch(/^missing readings: level 48 of 480 \(10%\); inputs interpolated across each gap/m);
    const whole = await maeOnObserved(join(folder, 'complete.weft.json'), complete, observed);
    const withHoles = await maeOnObserved(join(folder, 'gappy.weft.json'), gappy, observed);
    console.log(
      `hourly series, 10% missing in runs of 1–10 rows: test MAE ${withHoles.mae.toFixed(4)} on ${withHoles.count} observed rows, against ${whole.mae.toFixed(4)} for the same command on the complete series (ratio ${(withHoles.mae / whole.mae).toFixed(3)})`,
    );
    // The training run scored the same observed rows, and the runtime's forecasts give its figure.
    expect(outcome.heldOut.model.overall!.count).toBe(withHoles.count);
    expect(outcome.heldOut.model.overall!.mae).toBeCloseTo(withHoles.mae, 6);
    expect(withHoles.mae / whole.mae).toBeLessThan(1.1);
  }, 120_000);

  it('train on Seattle weather with a tenth of its readings removed, scoring only observed rows, and forecast at every row from a file and from standard input', async () => {
    const lines = readFileSync(seattle, 'utf8').trim().split('\n');
    const holes = new Random('seattle holes');
    const gappyLines = [
      lines[0],
      ...lines.slice(1).map((line) =>
        line
          .split(',')
          .map((cell, c) => (c >= 1 && c <= 4 && holes.uniform() < 0.1 ? (holes.uniform() < 0.5 ? '' : 'NA') : cell))
          .join(','),
      ),
    ];
    const file = join(folder, 'seattle-gappy.csv');
    writeFileSync(file, `${gappyLines.join('\n')}\n`);
    const out = join(folder, 'seattle-gappy.weft.json');
    const { outcome, text } = await trainQuietly([file, '--target', 'temp_max', '--quiet', '--out', out]);
    // The test part: the last 146 of 1461 rows; the observed temp_max among them (each forecast from the row before).
    const testRows = gappyLines.slice(-146).map((line) => line.split(',')[2]);
    const observedCount = testRows.filter((cell) => cell !== '' && cell !== 'NA').length;
    expect(observedCount).toBeLessThan(146);
    expect(outcome.heldOut.what).toContain(
      `146 forecasts of temp_max, 1 row ahead (${observedCount} of them with an observed value, the only ones scored, for the model and every baseline alike)`,
    );
    expect(outcome.heldOut.model.overall!.count).toBe(observedCount);
    expect(outcome.heldOut.baselines.every((b) => b.overall!.count === observedCount)).toBe(true);
    expect(text).toMatch(/^verdict: the model (beats every baseline|does NOT beat the baseline)/m);
    const best = outcome.heldOut.baselines.reduce((a, b) => (b.value < a.value ? b : a));
    console.log(
      `Seattle, a tenth of the readings removed: model MAE ${outcome.heldOut.model.value.toFixed(3)} on ${observedCount} observed test days, best baseline ${best.name} ${best.value.toFixed(3)}`,
    );
    // weft score reads the file through the runtime and repeats the figures.
    const scored = await score(parseArgs('score', [out, file, '--format', 'json'], scoreFlags));
    const report = JSON.parse(scored) as { model: { overall: { mae: number; count: number } } };
    // (The runtime's float32 kernels sum in their own order: the same figures to about 7 digits.)
    expect(report.model.overall.count).toBe(observedCount);
    expect(report.model.overall.mae).toBeCloseTo(outcome.heldOut.model.overall!.mae, 6);
    // weft run: a forecast at every row once the window is full, holes and all, from the file and from standard input.
    const window = ((await loadWeightFile(out)).metadata.window as { rows: number }).rows;
    const run = spawnSync(process.execPath, [binary, 'run', out, file], { encoding: 'utf8' });
    expect(run.status).toBe(0);
    const printed = run.stdout
      .trim()
      .split('\n')
      .slice(1)
      .map((line) => line.split(','));
    expect(printed).toHaveLength(1461);
    expect(printed.slice(window - 1).every((row) => Number.isFinite(Number(row[1])) && row[1] !== '')).toBe(true);
    const piped = spawnSync(process.execPath, [binary, 'run', out, '-'], { encoding: 'utf8', input: readFileSync(file, 'utf8') });
    expect(piped.status).toBe(0);
    expect(piped.stdout).toBe(run.stdout);
  }, 120_000);
});
