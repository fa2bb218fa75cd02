/**
 * Many series through the command: `weft train`, `weft run` and `weft score` on open data, vega-datasets 3.2.1's
 * data/unemployment-across-industries.json (npm, development dependency; monthly unemployment of 14 industries,
 * 2000-01 to 2010-02, as JSON records). With no flag at all, one model is trained across the 14 series and judged
 * per series against each series' own baselines (naive, seasonal naive, exponential smoothing, Theta: the methods
 * the M4 competition set beside every entry, Makridakis et al. 2020), the means of MASE over series compared; the
 * verdict is asserted honest whichever way it goes, and must agree with the README's statement. `weft score` must
 * repeat the figures from the runtime exactly, and `weft run` must print what the library's row forecasters give
 * for every row of every series. Bad input is refused in one line at its file:line:column or flag.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { mean } from 'mathjs';
import { parseArgs, train } from '@weft/cli';
import { createSeriesForecasters, readTable } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import { loadWeightFile } from '@weft/io/node';
import { score, scoreFlags } from '../src/score.js';
import { trainFlags } from '../src/train.js';
import { runFlags, runModel } from '../src/run.js';
import { commandFolder, expectOneLineError } from './command.js';

const unemployment = fileURLToPath(new URL('../../../node_modules/vega-datasets/data/unemployment-across-industries.json', import.meta.url));
const readme = fileURLToPath(new URL('../../../README.md', import.meta.url));
const { folder, weft } = commandFolder('weft-many-series-');

describe('many series through the command', () => {
  it("trains one model across the 14 industries with defaults only, judged per series against each one's own baselines, and says which wins as the README does", async () => {
    const out = join(folder, 'industries.weft.json');
    const lines: string[] = [];
    const outcome = await train(parseArgs('train', [unemployment, '--out', out], trainFlags), (line) => lines.push(line));
    const text = lines.join('\n');
    console.log(lines.filter((l) => l.startsWith('  ') || l.startsWith('verdict') || l.startsWith('many')).join('\n'));
    expect(text).toMatch(/^many series: 14 series named in column "series" \(found: its names share times/m);
    expect(text).toMatch(/^left out "year" and "month": they repeat the time column's calendar/m);
    const report = outcome.heldOut;
    expect(report.metric).toBe('MASE');
    expect(report.series).toHaveLength(14);
    // The model's figure and each baseline method's are the means over series of the series' own MASE (mathjs).
    expect(report.model.value).toBeCloseTo(mean(report.series!.map((s) => s.model)) as number, 12);
    for (const b of report.baselines)
      expect(b.value).toBeCloseTo(mean(report.series!.map((s) => s.baselines.find((x) => x.name === b.name)!.value)) as number, 12);
    expect(report.baselines.map((b) => b.name)).toEqual(
      expect.arrayContaining(['naive', 'seasonal naive', 'simple smoothing', 'Holt-Winters additive', 'Theta']),
    );
    // A line per series, each beside that series' best baseline.
    for (const s of report.series!) expect(text).toMatch(new RegExp(`^    ${s.id.replace(/[()]/g, '\\$&')} +[\\d.]+  ${s.best} [\\d.]+`, 'm'));
    const best = report.baselines.reduce((a, b) => (b.value < a.value ? b : a));
    const wins = report.model.value < best.value;
    expect(text).toMatch(
      wins
        ? new RegExp(`^verdict: the model beats every baseline: MASE [\\d.]+ against [\\d.]+ for the best baseline, ${best.name} `, 'm')
        : new RegExp(`^verdict: the model does NOT beat the baseline ${best.name}: MASE `, 'm'),
    );
    // The README states the same outcome against the same baseline.
    const stated = readFileSync(readme, 'utf8');
    expect(stated).toContain(wins ? `the model beats ${best.name}` : `the model does not beat ${best.name}`);
    // The 95% intervals: coverage printed and scored on every test value (14 series × 12 rows × 2 targets).
    expect(report.intervals?.count).toBe(14 * 12 * 2);
    expect(text).toMatch(
      /^ {2}prediction intervals at 95% \(split conformal on the validation part's errors, pooled over series in units of each one's scale\): coverage \d+\.\d% of 336 values, MSIS [\d.]+/m,
    );

    // weft score repeats every figure from the runtime: the baselines' to the bit, the model's to the rounding of its
    // f32 kernels (training scored the outputs of the model it trained; the runtime runs the weight file).
    const scored = JSON.parse(await score(parseArgs('score', [out, unemployment, '--format', 'json'], scoreFlags))) as typeof report & {
      intervals: { coverage: number; msis: number };
    };
    expect(scored.model.value).toBeCloseTo(report.model.value, 6);
    expect(scored.baselines).toEqual(JSON.parse(JSON.stringify(report.baselines)));
    scored.series!.forEach((s, i) => {
      expect(s.id).toBe(report.series![i].id);
      expect(s.model).toBeCloseTo(report.series![i].model, 6);
    });
    expect(scored.intervals.coverage).toBe(report.intervals!.coverage);
    expect(scored.intervals.msis).toBeCloseTo(report.intervals!.msis!, 6);

    // weft run prints, for every row of every series, what the library's row forecasters give (six digits).
    const printed = JSON.parse((await runModel(parseArgs('run', [out, unemployment, '--format', 'json'], runFlags)))!) as Record<string, string | number>[];
    const file = await loadWeightFile(out);
    const forecasters = createSeriesForecasters(await createRuntime(file), file.metadata);
    const table = readTable(readFileSync(unemployment, 'utf8'), unemployment);
    const at = (name: string) => table.header.indexOf(name);
    const made = new Float64Array(2);
    let compared = 0;
    table.rows.forEach((row, r) => {
      const forecaster = forecasters.get(row.fields[at('series')])!;
      const values = Float64Array.from([...forecaster.inputNames.map((c) => Number(row.fields[at(c)])), Date.parse(row.fields[at('date')])]);
      const ready = forecaster.nextValuesInto(values, made);
      expect(printed[r].series).toBe(row.fields[at('series')]);
      if (!ready) return expect(printed[r]['count in 1']).toBe('');
      expect(printed[r]['count in 1']).toBe(Number(made[0].toPrecision(6)));
      expect(printed[r]['rate in 1']).toBe(Number(made[1].toPrecision(6)));
      expect(printed[r]['count in 1 high']).toBe(Number((made[0] + forecaster.intervals!.halfWidth[0]).toPrecision(6)));
      compared++;
    });
    expect(compared).toBe(14 * (122 - 23));
    // --plot draws every series with its band, each captioned with how many of its values the band holds.
    const picture = join(folder, 'industries.svg');
    await runModel(parseArgs('run', [out, unemployment, '--plot', picture], runFlags), () => undefined);
    const svg = readFileSync(picture, 'utf8');
    for (const s of report.series!) expect(svg).toMatch(new RegExp(`>${s.id}: count: \\d+ of \\d+ values inside the band<`));
    expect(svg.match(/<polygon /g)!.length).toBeGreaterThanOrEqual(14);
  }, 120_000);

  it('refuses a short series when asked, series out of time order, an unknown series and an interval level outside (0, 1), in one line each', () => {
    const records = JSON.parse(readFileSync(unemployment, 'utf8')) as Record<string, unknown>[];
    const csv = (rows: readonly Record<string, unknown>[]) => `series,date,count\n${rows.map((r) => `${r.series},${r.date},${r.count}`).join('\n')}\n`;
    // Agriculture cut to its first 20 months.
    const short = records.filter((r) => r.series !== 'Agriculture' || String(r.date) < '2001-09');
    writeFileSync(join(folder, 'short.csv'), csv(short));
    const line = short.findIndex((r) => r.series === 'Agriculture') + 2;
    expectOneLineError(
      weft(['train', 'short.csv', '--short-series', 'refuse']),
      1,
      new RegExp(`^weft: Bad data at short\\.csv:${line}:1: expected at least \\d+ rows for series "Agriculture" \\(.*\\), received 20 rows$`),
    );
    const skipped = weft(['train', 'short.csv', '--epochs', '1', '--hybrid', 'no', '--out', 'short.weft.json']);
    expect(skipped.out).toMatch(/^left out 1 series shorter than the \d+ rows needed \(.*\): "Agriculture" \(20 rows from line \d+\)/m);
    // Construction's March 2000 row moved after its April row.
    const moved = [...records];
    const march = moved.findIndex((r) => r.series === 'Construction' && String(r.date).startsWith('2000-03'));
    [moved[march], moved[march + 1]] = [moved[march + 1], moved[march]];
    writeFileSync(join(folder, 'moved.csv'), csv(moved));
    expectOneLineError(
      weft(['train', 'moved.csv']),
      1,
      new RegExp(
        `^weft: Bad data at moved\\.csv:${march + 3}:\\d+: expected a time after line ${march + 2}'s "2000-04-01T0[78]:00:00\\.000Z" for series "Construction" \\(each series' rows in time order; series may take turns\\), received "2000-03-01T08:00:00\\.000Z"$`,
      ),
    );
    // A series the model was not trained on, at its cell.
    writeFileSync(join(folder, 'new.csv'), csv([...records.slice(0, 30), { series: 'Fishing', date: '2000-01-01T08:00:00.000Z', count: 5 }]));
    expectOneLineError(
      weft(['run', 'short.weft.json', 'new.csv']),
      1,
      /^weft: new\.csv:32:1: "Fishing" is not a series the model was trained on \("Government", "Mining and Extraction", .*\)$/,
    );
    expectOneLineError(weft(['train', 'short.csv', '--interval', '1.5']), 2, /^weft: --interval/);
    expectOneLineError(
      weft(['train', 'short.csv', '--id-column', 'region']),
      1,
      /^weft: Bad data at short\.csv:1:1: expected a column named "region" \(for --id-column\), received the columns series, date, count$/,
    );
  }, 120_000);
});
