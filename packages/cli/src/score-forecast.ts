/**
 * `weft score` on a forecast model: the model's forecast made at every row (through the runtime, as `weft run`
 * makes it) scored on the end of the series against the baselines fitted on the rows before, with the prediction
 * intervals of both; for a model of many series (metadata `panel`), every series of the file the model knows, each
 * on its own end, and the means over series (panel.ts), the baselines' intervals pooled over series as in training.
 */
import { fail } from '@weft/core';
import {
  baselineErrors,
  baselineIntervals,
  createRowForecaster,
  createTranslator,
  forecastBaselines,
  forecastMissing,
  forecastPanel,
  forecastReport,
  insertSkippedTimes,
  numberAt,
  readTable,
  readTimeColumn,
  scoreForecaster,
  scoreIntervals,
} from '@weft/io';
import { fieldPath, forecastWords, missingTest, panelReport, pooledBaselineWidths, seriesMetadata, seriesRows, withIntervals } from '@weft/io/internal';
import type { HeldOutReport, RowForecaster, Table, Translator } from '@weft/io';
import type { Runtime } from '@weft/io/runtime';
import { scoredCount } from './scored-part.js';
import type { ScoredPart } from './scored-part.js';
import { CommandError } from './errors.js';

/** One series scored: its report without intervals, and what its intervals need. */
interface SeriesScore {
  readonly report: HeldOutReport;
  /** Per target, the MASE scale. */
  readonly scales: readonly number[];
  /** Each baseline's errors before the scored rows (for intervals pooled across series). */
  baselineErrors(): { name: string; errors: number[][] }[];
  /** The report with the model's intervals and the baselines' (their half-widths given, or from their own errors). */
  withIntervals(baselineWidths?: readonly (readonly number[])[]): HeldOutReport;
  /** The level of the model's intervals, or null without them. */
  readonly level: number | null;
}

/** The season a model of many series was trained with (every series records the same), or null. */
function scoresSeason(meta: Record<string, unknown>): number | null {
  const season = (meta.panel as { series: { season?: unknown }[] }).series[0].season;
  return typeof season === 'number' ? season : null;
}

/** The forecast report of a file: one series, or every series of a model of many. */
export function scoreForecast(
  runtime: Runtime,
  meta: Record<string, unknown>,
  text: string,
  name: string,
  season: number | null | undefined,
  part: ScoredPart,
): HeldOutReport {
  const table = readTable(text, name);
  const panel = forecastPanel(meta);
  if (panel === null) return seriesScore(runtime, meta, table, name, season, part).withIntervals();
  const idAt = table.header.indexOf(panel.idColumn);
  if (idAt < 0)
    throw new CommandError(
      `${name}: no column ${JSON.stringify(panel.idColumn)}, which names the series the model forecasts; the input has ${table.header.join(', ')}`,
    );
  const timeName = typeof meta.timeColumn === 'string' && table.header.includes(meta.timeColumn) ? meta.timeColumn : undefined;
  const groups = seriesRows(table, { index: idAt, name: panel.idColumn }, timeName === undefined ? null : readTimeColumn(table, timeName));
  const known = [...groups.keys()].filter((id) => panel.ids.includes(id));
  const unknown = [...groups.keys()].filter((id) => !panel.ids.includes(id));
  if (known.length === 0)
    throw new CommandError(
      `${fieldPath(table, 0, idAt)}: none of the file's series is one the model was trained on (${panel.ids.slice(0, 6).join(', ')}${panel.ids.length > 6 ? ', …' : ''})`,
    );
  // Each series scored on its own part: its training run's test part (recorded per series) when this is the file trained on.
  const scores = known.map((id) => {
    const own = seriesMetadata(meta, id);
    const split = typeof own.split === 'object' && own.split !== null ? (own.split as Record<string, unknown>) : null;
    // The season training shared by every series (none when it recorded none), unless --season says.
    const shared = season !== undefined ? season : typeof own.season === 'number' ? own.season : null;
    return seriesScore(runtime, own, { ...table, rows: groups.get(id)!.map((r) => table.rows[r]) }, name, shared, { ...part, split });
  });
  const level = scores[0].level;
  const widths =
    level === null
      ? null
      : pooledBaselineWidths(
          scores.map((s) => s.baselineErrors()),
          scores.map((s) => s.scales),
          level,
        );
  const reports = scores.map((s, i) => s.withIntervals(widths?.[i]));
  const report = panelReport(
    known,
    reports,
    `each series' own scored part (${reports[0].what.replace(/, for .*$/, '')} in the first), ${known.length} series of ${name}`,
    [
      ...(unknown.length === 0
        ? []
        : [
            `left out ${unknown.length} series the model was not trained on: ${unknown
              .slice(0, 5)
              .map((id) => JSON.stringify(id))
              .join(', ')}${unknown.length > 5 ? ', …' : ''}`,
          ]),
      ...(reports[0].context ?? []).filter((line) => line.startsWith('warning')),
      `each series: ${reports[0].context?.find((line) => line.startsWith('the model'))?.replace(/; the baselines are fitted on .*$/, '') ?? 'the model runs through every row'}; the baselines are fitted on the rows before its scored ones`,
      season !== undefined
        ? `season: ${season === null ? 'none' : `${season} rows`} (as asked)`
        : `season: ${typeof scoresSeason(meta) === 'number' ? `${scoresSeason(meta)} rows` : 'none'}, as in training (one for every series)`,
    ],
  );
  return report;
}

function seriesScore(
  runtime: Runtime,
  meta: Record<string, unknown>,
  given: Table,
  name: string,
  season: number | null | undefined,
  part: ScoredPart,
): SeriesScore {
  const translator = createTranslator(meta);
  const { table, at, values } = readScored(meta, given, translator, name);
  const horizon = Number(meta.horizon);
  const targets = translator.outputNames.map((t) => translator.inputNames.indexOf(t));
  const rows = values.length;
  if (rows < horizon + 4) throw new CommandError(`${name}: ${rows} rows are too few to score forecasts ${horizon} rows ahead`);
  const time = readTimeColumn(table, typeof meta.timeColumn === 'string' && table.header.includes(meta.timeColumn) ? meta.timeColumn : undefined);
  const { scored, warning, same } = scoredCount(rows, part, 'series', { all: 'rows', test: 'testRows', fitted: ['trainingRows', 'validationRows'] });
  const testStart = rows - scored;
  checkScoredRows(table, horizon, scored, season, part);
  const forecaster = createRowForecaster(runtime, meta);
  const rowsAhead = forecaster.rowsAhead;
  const forecasts = forecastsAtEveryRow(forecaster, translator, table, values, at, name);
  if (forecasts[rows - scored - horizon] === null || forecasts[rows - scored - rowsAhead[0]] === null) {
    fail(
      'invalid_option',
      '--test',
      `a share whose first scored row has the model's ${forecaster.warmUp} rows of window before it`,
      `${part.share ?? 'the recorded test part'} (${scored} of ${rows} rows)`,
    );
  }
  const positions: number[] = [];
  for (let t = testStart - horizon; t < rows - horizon; t++) positions.push(t);
  const split = { values, targets, horizon, fitRows: testStart, positions, ...(rowsAhead.length > 1 ? { rowsAhead } : {}) };
  const baselines = forecastBaselines(split, { season, spacing: time?.spacing ?? null });
  const lines = `lines ${table.rows[testStart].line}–${table.rows[rows - 1].line} (${scored} rows)`;
  const step = (h: number) => rowsAhead.indexOf(h) * targets.length;
  const forecastAt = (t: number, k: number, h: number) => (forecasts[t] as Float64Array)[step(h) + k];
  const report = forecastReport({
    what: `${forecastWords(
      positions.length,
      translator.outputNames,
      rowsAhead,
      positions.reduce((n, t) => n + targets.filter((j) => !Number.isNaN(values[t + horizon][j])).length, 0),
    )}, for ${same ? "the training run's test part, " : ''}${lines} of ${name}`,
    model: scoreForecaster(split, forecastAt, baselines.scales),
    baselines: baselines.scores,
    names: translator.outputNames,
    context: [
      ...(warning === null ? [] : [warning]),
      `${forecaster.warmUp > 1 ? `the model forecasts from the last ${forecaster.warmUp} rows at each row` : `the model's state starts at zero on line ${table.rows[0].line} and runs through every row`}; the baselines are fitted on lines ${table.rows[0].line}–${table.rows[testStart - 1].line}, the rows before the scored ones`,
      `${baselines.season.reason}${season === undefined ? ' (--season to choose another, or none)' : ''}`,
      ...baselines.leftOut.map((l) => `left out: ${l}`),
    ],
  });
  // The baselines' intervals from their errors on the rows before the scored ones, as many as the training run's
  // validation part (a tenth of the rows when the file does not say).
  const recorded = Number((meta.split as { validationRows?: unknown } | undefined)?.validationRows);
  const from = Math.max(0, testStart - (Number.isInteger(recorded) && recorded > 0 ? recorded : Math.max(1, Math.round(rows / 10))));
  return {
    report,
    scales: baselines.scales,
    baselineErrors: () => baselineErrors(split, baselines, from).map((errors, b) => ({ name: baselines.scores[b].name, errors })),
    // The model's own prediction intervals (recorded by weft train) and the baselines', scored on the same rows.
    withIntervals: (baselineWidths) =>
      forecaster.intervals === null
        ? report
        : withIntervals(
            report,
            scoreIntervals(split, forecastAt, forecaster.intervals, baselines.scales),
            baselineIntervals(split, baselines, forecaster.intervals.level, from, baselineWidths),
          ),
    level: forecaster.intervals?.level ?? null,
  };
}

/**
 * The file's rows as the model reads them: a model that takes missing readings reads the file as training did
 * (skipped times put back as rows of missing cells, the markers read as missing, never scored); the columns the
 * model reads, and their numbers.
 */
function readScored(meta: Record<string, unknown>, given: Table, translator: Translator, name: string): { table: Table; at: number[]; values: number[][] } {
  const missing = forecastMissing(meta, translator.inputNames.length);
  const givenTime =
    missing === null
      ? null
      : readTimeColumn(given, typeof meta.timeColumn === 'string' && given.header.includes(meta.timeColumn) ? meta.timeColumn : undefined);
  const table = givenTime === null ? given : insertSkippedTimes(given, givenTime).table;
  const isMissing = missing === null ? null : missingTest(missing.markers);
  const at = translator.inputNames.map((c) => {
    const i = table.header.indexOf(c);
    if (i < 0) throw new CommandError(`${name}: no column ${JSON.stringify(c)}, which the model reads (it reads ${translator.inputNames.join(', ')})`);
    return i;
  });
  const values = table.rows.map((row, r) => at.map((c) => (isMissing?.(row.fields[c]) ? NaN : numberAt(table, r, c))));
  return { table, at, values };
}

/**
 * The model's forecasts made at every row, in real units (a stream's state running from the first row; a windowed
 * model's from the rows of its window): forecasts[t][s × targets + k] is target k, rowsAhead[s] rows after row t;
 * null before the model's first forecast.
 */
function forecastsAtEveryRow(
  forecaster: RowForecaster,
  translator: Translator,
  table: Table,
  values: readonly number[][],
  at: readonly number[],
  name: string,
): (Float64Array | null)[] {
  const timeName = forecaster.readNames.length > forecaster.inputNames.length ? forecaster.readNames[forecaster.readNames.length - 1] : null;
  const timeAt = timeName === null ? -1 : table.header.indexOf(timeName);
  if (timeName !== null && timeAt < 0)
    throw new CommandError(`${name}: no column ${JSON.stringify(timeName)}, the times the model reads its calendar inputs from`);
  const row: Record<string, number | string> = {};
  const width = forecaster.rowsAhead.length * translator.outputNames.length;
  return values.map((v, r) => {
    translator.inputNames.forEach((c, j) => (row[c] = v[j]));
    if (timeName !== null) row[timeName] = table.rows[r].fields[timeAt];
    const made = new Float64Array(width);
    return forecaster.nextInto(row, made, fieldPath(table, r, at[0])) ? made : null;
  });
}

/** The scored rows: at least the horizon of them, at least 3 before them to fit the baselines on, and a season that fits in those. */
function checkScoredRows(table: Table, horizon: number, scored: number, season: number | null | undefined, part: ScoredPart): void {
  const rows = table.rows.length;
  if (scored < horizon)
    fail('invalid_option', '--test', `a share leaving at least ${horizon} scored rows (the horizon) of the ${rows}`, `${part.share} (${scored} rows)`);
  const testStart = rows - scored;
  if (testStart < 3)
    fail('invalid_option', '--test', `a share leaving at least 3 rows to fit the baselines on, of the ${rows}`, `${part.share} (${testStart} rows)`);
  if (season !== undefined && season !== null && !(season < testStart)) {
    fail(
      'invalid_option',
      `${table.file}:${table.rows[testStart - 1].line}:1 (--season)`,
      `a season shorter than the ${testStart} rows before the scored ones, which end at this line`,
      String(season),
    );
  }
}
