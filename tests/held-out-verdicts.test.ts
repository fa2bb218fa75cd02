/**
 * The verdict `weft train` prints, on data where the answer is known from outside the project:
 * - Open data: daily Seattle weather 2012–2015, vega-datasets 3.2.1 (npm, development dependency), file
 *   data/seattle-weather.csv (the package credits NOAA's daily climate records; from memory). The README's command
 *   forecasts the next day's maximum temperature; the verdict must name the best of the baselines a forecaster
 *   computes first, whichever way it goes, and the test part must be the last tenth of the file's lines.
 * - A rising series with a 24-row season (tests/helpers/series.ts): the season is found and printed, and a briefly
 *   trained model loses to the seasonal baselines and is told so, by `weft train` and by `weft score` alike.
 * - Open data, monthly atmospheric CO₂ at Mauna Loa (vega-datasets 3.2.1, data/co2-concentration.csv; Scripps CO2
 *   Program, CC BY 4.0 — "Data from the Scripps CO2 Program"): with no flag at all, a short series trains on
 *   sliding windows and calendar inputs chosen from the data, its five skipped months put back as missing rows, and
 *   must come within 10% of the best smoothing method (measured 0.321 against Holt-Winters' 0.307, a loss the
 *   verdict states; before the months were put back, 0.332 against a misaligned Holt-Winters' 0.355; before sliding
 *   windows the same command was 22× a seasonal ARIMA), and `weft score` repeats the verdict from the runtime.
 * - The test rows are never used for stopping: the same file with its test rows replaced by noise trains to the
 *   same kept step and the same weights.
 * - A random walk with drift, generated here: the best forecast of a random walk is the value now (persistence;
 *   common practice), and the held-out part drifts above the training range, so the model must lose to some
 *   baseline, and the verdict must say so and name it.
 * - A rising series, generated here: its held-out levels lie above every level trained on, which a model of the
 *   level cannot reach; with --transform differences it forecasts the change and comes close to persistence
 *   (common practice: difference a trending series before modelling it).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { parseArgs, train } from '@weft/cli';
import { score, scoreFlags } from '../packages/cli/src/score.js';
import { trainFlags } from '../packages/cli/src/train.js';
import { runFlags, runModel } from '../packages/cli/src/run.js';
import { createRowForecaster } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { seasonalNoise, seasonalTrend } from './helpers/series.js';
import { loadModelFile, loadWeightFile } from '@weft/io/node';

/** The model a weight file holds, ready to run on the tape. */
const modelOf = (path: string) => loadModelFile(path);

const seattle = fileURLToPath(new URL('../node_modules/vega-datasets/data/seattle-weather.csv', import.meta.url));
const folder = mkdtempSync(join(tmpdir(), 'weft-verdicts-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

async function trainQuietly(argv: string[]) {
  const lines: string[] = [];
  const outcome = await train(parseArgs('train', argv, trainFlags), (line) => lines.push(line));
  return { outcome, text: lines.join('\n') };
}

describe('the held-out verdict', () => {
  it("names the best of a forecaster's baselines on next-day maximum temperature in Seattle, whichever way the verdict goes (the README command)", async () => {
    const { outcome, text } = await trainQuietly([seattle, '--target', 'temp_max', '--quiet', '--out', join(folder, 'seattle.weft.json')]);
    const report = outcome.heldOut;
    console.log(
      text
        .split('\n')
        .filter((l) => l.startsWith('  ') || l.startsWith('verdict'))
        .join('\n'),
    );
    expect(report.baselines.map((b) => b.name)).toEqual(['naive', 'simple smoothing', 'Holt', 'damped trend', 'Theta', 'linear']);
    const best = report.baselines.reduce((a, b) => (b.value < a.value ? b : a));
    if (report.model.value < best.value)
      expect(text).toMatch(new RegExp(`^verdict: the model beats every baseline: MAE [\\d.]+ against [\\d.]+ for the best baseline, ${best.name} `, 'm'));
    else expect(text).toMatch(new RegExp(`^verdict: the model does NOT beat the baseline ${best.name}: MAE `, 'm'));
    // The test part is the last tenth of the 1461 days, counted against the file's lines; every one is forecast.
    const lines = readFileSync(seattle, 'utf8').trim().split('\n');
    expect(lines).toHaveLength(1462);
    expect(report.what).toBe(
      `146 forecasts of temp_max, 1 row ahead, for the test lines 1317–1462 (146 rows) of ${seattle}, used for neither training nor stopping`,
    );
    expect(report.model.overall!.count).toBe(146);
  }, 60_000);

  it('finds the 24-row season of a rising series and says plainly that a briefly trained model loses to it, in train and score alike', async () => {
    const file = join(folder, 'seasonal.csv');
    writeFileSync(
      file,
      `level\n${seasonalTrend(480)
        .map((v) => v.toFixed(4))
        .join('\n')}\n`,
    );
    const out = join(folder, 'seasonal.weft.json');
    const { outcome, text } = await trainQuietly([
      file,
      '--examples',
      'streams',
      '--hidden',
      '8',
      '--epochs',
      '2',
      '--streams',
      '4',
      '--window',
      '24',
      '--out',
      out,
    ]);
    expect(text).toMatch(
      /^season of 24 rows from the autocorrelation of the differenced series: autocorrelation of the differences 0\.\d+, above the 90% limit 0\.\d+ \(--season to choose another, or none\)$/m,
    );
    const seasonal = outcome.heldOut.baselines.find((b) => b.name === 'seasonal naive')!;
    expect(seasonal.value).toBeLessThan(outcome.heldOut.model.value);
    const verdict = /^verdict: the model does NOT beat the baseline (seasonal naive|Holt-Winters additive|Holt-Winters multiplicative): MAE /m;
    expect(text).toMatch(verdict);
    const scored = score(parseArgs('score', [out, file], scoreFlags));
    const scoredText = await scored;
    expect(scoredText).toMatch(/^season of 24 rows from the autocorrelation of the differenced series: /m);
    expect(scoredText).toMatch(verdict);
  }, 60_000);

  it('forecasts monthly CO₂ with no flag within 10% of the best smoothing method, its skipped months put back, and says plainly which way the verdict goes', async () => {
    const co2 = fileURLToPath(new URL('../node_modules/vega-datasets/data/co2-concentration.csv', import.meta.url));
    const out = join(folder, 'co2.weft.json');
    const { outcome, text } = await trainQuietly([co2, '--target', 'CO2', '--out', out]);
    expect(text.split('\n')[0]).toBe(
      'sliding windows: 569 training examples of 24 rows (two seasons of 12 rows), 32 per batch, up to 112 epochs, patience 5, 32 hidden, reading the month of year (chosen from the data; flags override, --examples streams reads the series as streams)',
    );
    // The file skips five months (1958 and 1964): they come back as missing rows, so every season lines up.
    expect(text).toMatch(/^inserted 5 rows of missing readings at 3 skipped times in column "Date", the longest 3 months before line 71$/m);
    const smoothing = outcome.heldOut.baselines.filter((b) => /smoothing|Holt|damped|Theta/.test(b.name));
    const best = smoothing.reduce((a, b) => (b.value < a.value ? b : a));
    console.log(
      `CO₂, last ${outcome.heldOut.model.overall!.count} months: model MAE ${outcome.heldOut.model.value}, best smoothing ${best.name} ${best.value} (${(outcome.heldOut.model.value / best.value).toFixed(3)}×)`,
    );
    // Measured 0.321 against Holt-Winters' 0.307 (1.048×): the model loses, and the verdict says so.
    expect(outcome.heldOut.model.value).toBeLessThan(1.1 * best.value);
    const overall = outcome.heldOut.baselines.reduce((a, b) => (b.value < a.value ? b : a));
    if (outcome.heldOut.model.value < overall.value) expect(text).toMatch(/^verdict: the model beats every baseline: MAE /m);
    else expect(text).toMatch(new RegExp(`^verdict: the model does NOT beat the baseline ${overall.name}: MAE `, 'm'));
    // The runtime on the saved file gives the same test MAE, to f32 rounding.
    const scored = JSON.parse(await score(parseArgs('score', [out, co2, '--format', 'json'], scoreFlags))) as {
      model: { value: number };
      bestBaseline: string;
    };
    expect(Math.abs(scored.model.value - outcome.heldOut.model.value)).toBeLessThanOrEqual(1e-5 * outcome.heldOut.model.value);
    expect(scored.bestBaseline).toBe(overall.name);
  }, 60_000);

  it('trains monthly CO₂ with --hybrid on top of the smoothing method best on the validation part, within 5% of every baseline, in train and score alike', async () => {
    const co2 = fileURLToPath(new URL('../node_modules/vega-datasets/data/co2-concentration.csv', import.meta.url));
    const out = join(folder, 'co2-hybrid.weft.json');
    const { outcome, text } = await trainQuietly([co2, '--target', 'CO2', '--hybrid', 'yes', '--out', out]);
    expect(text.split('\n')[0]).toMatch(/^sliding windows on top of Holt-Winters (additive|multiplicative): /);
    const best = outcome.heldOut.baselines.reduce((a, b) => (b.value < a.value ? b : a));
    console.log(`CO₂ with --hybrid: model MAE ${outcome.heldOut.model.value}, best baseline ${best.name} ${best.value}`);
    // Measured 0.321 against Holt-Winters' 0.307 once the skipped months are put back (0.328 against 0.355 before).
    expect(outcome.heldOut.model.value).toBeLessThan(1.05 * best.value);
    expect(text).toMatch(
      outcome.heldOut.model.value < best.value
        ? /^verdict: the model beats every baseline: MAE /m
        : new RegExp(`^verdict: the model does NOT beat the baseline ${best.name}: MAE `, 'm'),
    );
    const scored = JSON.parse(await score(parseArgs('score', [out, co2, '--format', 'json'], scoreFlags))) as { model: { value: number } };
    expect(Math.abs(scored.model.value - outcome.heldOut.model.value)).toBeLessThanOrEqual(1e-5 * outcome.heldOut.model.value);
    await expect(trainQuietly([co2, '--target', 'CO2', '--hybrid', 'yes', '--examples', 'streams', '--out', join(folder, 'x.weft.json')])).rejects.toThrow(
      'Invalid option at --hybrid: expected sliding windows (--examples sliding;',
    );
  }, 60_000);

  it('tries the plain model and the hybrid on the validation part by default and trains the better one, exactly as tried', async () => {
    const file = join(folder, 'rising-480.csv');
    writeFileSync(
      file,
      `level\n${seasonalTrend(480)
        .map((v) => v.toFixed(4))
        .join('\n')}\n`,
    );
    const out = join(folder, 'rising-480.weft.json');
    const { outcome, text } = await trainQuietly([file, '--out', out]);
    const tried =
      /^tried both on the validation part: sliding windows on top of (.+) MAE ([\d.]+), plain ([\d.]+): training the (hybrid|plain model) \(--hybrid yes or no to choose\)$/m.exec(
        text,
      );
    expect(tried).not.toBeNull();
    const [, , hybridFigure, plainFigure, winner] = tried!;
    expect(winner).toBe(Number(hybridFigure) < Number(plainFigure) ? 'hybrid' : 'plain model');
    const saved = await loadWeightFile(out);
    expect((saved.metadata.window as { hybrid?: unknown }).hybrid !== undefined).toBe(winner === 'hybrid');
    // The run repeats the winner's trial bit for bit: its validation figure is the one printed.
    const figure = outcome.prepared.task === 'forecast' ? outcome.prepared.validationFigure!(await modelOf(out)) : NaN;
    expect(Number(figure.toPrecision(4))).toBe(Number(winner === 'hybrid' ? hybridFigure : plainFigure));
    const plain = await trainQuietly([file, '--hybrid', 'no', '--out', join(folder, 'rising-plain.weft.json')]);
    expect(plain.text).not.toMatch(/^tried both/m);
  }, 60_000);

  it('stacks an ensemble of hybrid members into one file whose forecasts the runtime and weft run reproduce bit for bit, every row ahead', async () => {
    const file = join(folder, 'ensemble.csv');
    writeFileSync(
      file,
      `level\n${seasonalTrend(200)
        .map((v) => v.toFixed(4))
        .join('\n')}\n`,
    );
    const out = join(folder, 'ensemble.weft.json');
    const { outcome, text } = await trainQuietly([file, '--ensemble', '3', '--hybrid', 'yes', '--horizon', '2', '--epochs', '6', '--out', out]);
    expect(text).toMatch(/^member 3 of 3 \(seed 1\/3\): \d+ steps, kept step \d+, validation MAE [\d.]+$/m);
    const saved = await loadWeightFile(out);
    expect(saved.metadata.members).toBe(3);
    expect(saved.metadata.rowsAhead).toBe('all');
    // Three members of 32 units, two rows ahead each: 96 units, 6 outputs.
    expect(saved.model).toMatchObject({ layers: [{ hidden: 96 }], readout: { width: 6 } });
    // weft score reads the file through the runtime and scores the test part as train did.
    const scored = JSON.parse(await score(parseArgs('score', [out, file, '--format', 'json'], scoreFlags))) as {
      model: { value: number; byRowsAhead: { rowsAhead: number }[] };
    };
    expect(Math.abs(scored.model.value - outcome.heldOut.model.value)).toBeLessThanOrEqual(1e-5 * outcome.heldOut.model.value);
    expect(scored.model.byRowsAhead.map((s) => s.rowsAhead)).toEqual([1, 2]);
    // The intervals weft train recorded, scored by weft score from the file on the same rows: the same figures.
    const trainedIntervals = outcome.heldOut.intervals!;
    expect((scored as unknown as { intervals: typeof trainedIntervals }).intervals.coverage).toBe(trainedIntervals.coverage);
    expect((scored as unknown as { intervals: typeof trainedIntervals }).intervals.count).toBe(40);
    // weft run prints what a program's row forecaster on the runtime computes, to every printed digit.
    const printed = JSON.parse((await runModel(parseArgs('run', [out, file, '--format', 'json'], runFlags), () => undefined))!) as Record<
      string,
      number | string
    >[];
    const forecaster = createRowForecaster(await createRuntime(saved), saved.metadata as Record<string, unknown>);
    const made = new Float64Array(2);
    const values = new Float64Array(1);
    seasonalTrend(200).forEach((v, t) => {
      values[0] = Number(v.toFixed(4));
      const ready = forecaster.nextValuesInto(values, made);
      expect([printed[t]['level in 1'], printed[t]['level in 2']]).toEqual(ready ? [Number(made[0].toPrecision(6)), Number(made[1].toPrecision(6))] : ['', '']);
    });
    await expect(trainQuietly([file, '--ensemble', '0', '--out', join(folder, 'none.weft.json')])).rejects.toThrow(/--ensemble/);
  }, 60_000);

  // 8,760 hourly rows on sliding windows take about 30 s on the default backend; the JavaScript pass of the suite
  // leaves this verdict out (its figures depend on no backend: backend.test.ts checks that the two train alike).
  it.skipIf(process.env.WEFT_BACKEND === 'javascript')(
    'finds the daily season of the hourly Seattle normals from the time column and names the best baseline 6 hours ahead',
    async () => {
      const hourly = fileURLToPath(new URL('../node_modules/vega-datasets/data/seattle-weather-hourly-normals.csv', import.meta.url));
      const { outcome, text } = await trainQuietly([hourly, '--target', 'temperature', '--horizon', '6', '--out', join(folder, 'hourly.weft.json')]);
      expect(text).toMatch(/^season of 24 rows from the time column \(rows hours apart\): /m);
      const best = outcome.heldOut.baselines.reduce((a, b) => (b.value < a.value ? b : a));
      console.log(`hourly Seattle normals, 1 to 6 h ahead: model MAE ${outcome.heldOut.model.value}, best ${best.name} ${best.value}`);
      // Sliding windows over every hour up to 6 ahead, on top of Holt-Winters: measured 0.0469 against Holt-Winters
      // additive's 0.0444 (1.055×). On streams, the default before for a series this long, the model scored 0.77.
      expect(text.split('\n')[0]).toMatch(
        /^sliding windows: \d+ training examples of 48 rows \(two seasons of 24 rows\), forecasting rows 1 to 6 ahead at once, /,
      );
      expect(outcome.heldOut.model.value).toBeLessThan(1.2 * best.value);
      // The 95% intervals' coverage is printed, and flagged when it strays more than 5 points from 95%.
      const coverage = outcome.heldOut.intervals!.coverage;
      console.log(`hourly Seattle normals: 95% intervals hold ${coverage} of ${outcome.heldOut.intervals!.count}`);
      expect(text).toMatch(
        Math.abs(coverage - 0.95) > 0.05
          ? /^ {2}prediction intervals at 95% .*; more than 5 points from the 95% asked/m
          : /^ {2}prediction intervals at 95% .*MSIS [\d.]+$/m,
      );
      expect(text).toMatch(
        outcome.heldOut.model.value < best.value
          ? /^verdict: the model beats every baseline/m
          : new RegExp(`^verdict: the model does NOT beat the baseline ${best.name}: MAE `, 'm'),
      );
    },
    60_000,
  );

  it('holds 93–97% of 2,000 test values in the 95% intervals of a series with known noise, in train and score alike', async () => {
    const file = join(folder, 'noise.csv');
    writeFileSync(
      file,
      `level\n${seasonalNoise(10_000)
        .map((v) => v.toFixed(4))
        .join('\n')}\n`,
    );
    const out = join(folder, 'noise.weft.json');
    const { outcome, text } = await trainQuietly([file, '--test', '0.2', '--hybrid', 'no', '--epochs', '2', '--hidden', '16', '--out', out]);
    const intervals = outcome.heldOut.intervals!;
    console.log(`known noise: coverage ${intervals.coverage} of ${intervals.count}, mean width ${intervals.meanWidth} (the noise's own 95% width is 1.96)`);
    expect(intervals.count).toBe(2000);
    expect(intervals.coverage).toBeGreaterThanOrEqual(0.93);
    expect(intervals.coverage).toBeLessThanOrEqual(0.97);
    // No interval can be narrower than the noise's: 2 × 1.96 × 0.5 = 1.96 (common practice: the normal's 97.5% point).
    expect(intervals.meanWidth).toBeGreaterThan(1.8);
    expect(text).toMatch(/^ {2}prediction intervals at 95% \(split conformal on the validation part's errors\): coverage 9[3-7]\.\d% of 2000 values/m);
    const scored = JSON.parse(await score(parseArgs('score', [out, file, '--format', 'json'], scoreFlags))) as { intervals: { coverage: number } };
    expect(scored.intervals.coverage).toBe(intervals.coverage);
    await expect(trainQuietly([file, '--interval', '1.5', '--out', join(folder, 'x.weft.json')])).rejects.toThrow(/--interval/);
  }, 60_000);

  it('scores more test windows than fit in one batch in their own order, as weft score does from the runtime', async () => {
    // 1,800 rows, a fifth for the test: 360 windows, two batches of evaluation (a shuffled order once scrambled them).
    const file = join(folder, 'long-windows.csv');
    writeFileSync(
      file,
      `level\n${seasonalTrend(1800)
        .map((v) => v.toFixed(4))
        .join('\n')}\n`,
    );
    const out = join(folder, 'long-windows.weft.json');
    const { outcome } = await trainQuietly([file, '--test', '0.2', '--hybrid', 'no', '--epochs', '2', '--hidden', '8', '--out', out]);
    expect(outcome.heldOut.model.overall!.count).toBe(360);
    const scored = JSON.parse(await score(parseArgs('score', [out, file, '--format', 'json'], scoreFlags))) as {
      model: { value: number; overall: { count: number } };
    };
    expect(scored.model.overall.count).toBe(360);
    expect(Math.abs(scored.model.value - outcome.heldOut.model.value)).toBeLessThanOrEqual(1e-5 * outcome.heldOut.model.value);
  }, 60_000);

  it('refuses a series too short for two seasons and the horizon in its training rows, naming the minimum', async () => {
    const file = join(folder, 'short.csv');
    writeFileSync(
      file,
      `level\n${seasonalTrend(60)
        .map((v) => v.toFixed(4))
        .join('\n')}\n`,
    );
    await expect(trainQuietly([file, '--season', '24', '--out', join(folder, 'short.weft.json')])).rejects.toThrow(
      `Invalid option at ${file}: expected at least 49 training rows for a series with a season of 24 rows (two seasons and the horizon): about 62 rows in all with the --validation and --test shares, received 60 rows, which leave 48 training rows`,
    );
  });

  it('never uses the test rows for stopping, from sliding windows or streams: noise in place of them keeps the kept step and every weight', async () => {
    const values = seasonalTrend(480);
    const clean = join(folder, 'clean.csv');
    const noisy = join(folder, 'noisy.csv');
    writeFileSync(clean, `level\n${values.map((v) => v.toFixed(4)).join('\n')}\n`);
    const random = new Random('noise');
    // The test part is the last 48 rows (a tenth of 480).
    writeFileSync(noisy, `level\n${values.map((v, t) => (t >= 432 ? 1000 * random.normal() : v).toFixed(4)).join('\n')}\n`);
    for (const examples of ['sliding', 'streams']) {
      const flags = ['--examples', examples, '--hidden', '8', '--epochs', '6', '--streams', '4', '--window', '24', '--validate-every', '5', '--quiet'];
      const a = await trainQuietly([clean, ...flags, '--out', join(folder, `clean-${examples}.weft.json`)]);
      const b = await trainQuietly([noisy, ...flags, '--out', join(folder, `noisy-${examples}.weft.json`)]);
      expect(b.outcome.summary.keptStep).toBe(a.outcome.summary.keptStep);
      expect(b.outcome.summary.bestValidation).toEqual(a.outcome.summary.bestValidation);
      const [wa, wb] = await Promise.all([
        loadWeightFile(join(folder, `clean-${examples}.weft.json`)),
        loadWeightFile(join(folder, `noisy-${examples}.weft.json`)),
      ]);
      expect(wb.tensors.map((t) => t.name)).toEqual(wa.tensors.map((t) => t.name));
      wa.tensors.forEach((t, i) => expect(Array.from(wb.tensors[i].values)).toEqual(Array.from(t.values)));
      // The test MAE differs: the noise is scored.
      expect(b.outcome.heldOut.model.value).toBeGreaterThan(10 * a.outcome.heldOut.model.value);
    }
  }, 60_000);

  it('says plainly that the model loses to the best baseline of a random walk, and names it', async () => {
    const random = new Random('walk');
    let level = 0;
    const rows = Array.from({ length: 1200 }, () => {
      level += 0.05 + random.normal();
      return level.toFixed(4);
    });
    const file = join(folder, 'walk.csv');
    writeFileSync(file, `level\n${rows.join('\n')}\n`);
    const { outcome, text } = await trainQuietly([
      file,
      '--examples',
      'streams',
      '--validation',
      '0.25',
      '--hidden',
      '16',
      '--epochs',
      '5',
      '--quiet',
      '--out',
      join(folder, 'walk.weft.json'),
    ]);
    const report = outcome.heldOut;
    const best = report.baselines.reduce((a, b) => (b.value < a.value ? b : a));
    expect(report.model.value).toBeGreaterThan(best.value);
    expect(text).toContain(`verdict: the model does NOT beat the baseline ${best.name}: MAE `);
    expect(text).toMatch(/; use the baseline, or train longer \(--epochs, --patience\), on more data, or with other settings$/m);
  }, 60_000);

  it('forecasts a rising series far better as differences than as levels', async () => {
    const rows = Array.from({ length: 1200 }, (_, t) => (0.05 * t + 2 * Math.sin(t / 5)).toFixed(4));
    const file = join(folder, 'rising.csv');
    writeFileSync(file, `level\n${rows.join('\n')}\n`);
    const levels = await trainQuietly([file, '--examples', 'streams', '--validation', '0.2', '--quiet', '--out', join(folder, 'levels.weft.json')]);
    const changes = await trainQuietly([file, '--validation', '0.2', '--transform', 'differences', '--quiet', '--out', join(folder, 'changes.weft.json')]);
    const persistence = changes.outcome.heldOut.baselines.find((b) => b.name === 'naive')!.value;
    console.log(`rising series MAE: levels ${levels.outcome.heldOut.model.value}, differences ${changes.outcome.heldOut.model.value}, naive ${persistence}`);
    expect(changes.outcome.heldOut.model.value).toBeLessThan(0.3 * levels.outcome.heldOut.model.value);
    expect(changes.outcome.heldOut.model.value).toBeLessThan(1.2 * persistence);
  }, 60_000);
});
