/**
 * A table of series turned into a forecaster's training data and its verdict, in one place for the command, the
 * browser page and a user's program: the columns and the time column read, the three parts cut in time order, the
 * baselines fitted, the examples made (sliding windows, or long streams; see series-windows.ts), and everything
 * recorded in the weight file's metadata so that `createRowForecaster` applies it to new rows. What trains on the
 * examples is the caller's: it turns them into batches, and hands the model's outputs back to `validationFigure`
 * and `heldOut`, which score them in the data's units against the baselines.
 *
 * Missing readings (missing.ts): skipped times are put back as rows of missing cells (skipped-times.ts); missing
 * cells are filled in each window and flagged, missing targets weigh nothing and are scored by no one; the note
 * says per column how many were missing and what was done.
 */
import { fail } from '@weft/core';
import { forecastBaselines } from './baselines.js';
import { readSeries } from './series.js';
import type { Series } from './series.js';
import { checkGaps, linesOf, seriesParts, tableNotes } from './series-checks.js';
import type { Table } from './table.js';
import { readTable } from './json-records.js';
import { calendarCopies, readTimeColumn } from './time-column.js';
import type { TimeColumn } from './time-column.js';
import { preparePanel, seriesIdColumn } from './panel.js';
import { insertSkippedTimes } from './skipped-times.js';
import { forecastWords } from './verdict.js';
import type { PanelPart, PreparedSeries, SeriesPreparation } from './series-types.js';
export type {
  ChosenSettings,
  ForecastIntervals,
  PanelPart,
  PreparedSeries,
  SeriesPreparation,
  SeriesStreams,
  SeriesWindows,
  WindowExample,
} from './series-types.js';
import { slidingWindows } from './series-windows.js';
import { streamsOf } from './series-streams.js';

/** At most this many training rows train on sliding windows by default; longer series on streams. */
export const SLIDING_ROWS = 10_000;

/** A target transform and its inverse, from the level now (y) and the level ahead (ahead) or the change (change). */
/**
 * Prepares a CSV/TSV text or JSON records of series (`file` names it in messages) for training and judging: one
 * series, or, with an id column (given, or found: panel.ts), many series and one model across them.
 */
export function prepareSeries(text: string, file: string, options: SeriesPreparation): PreparedSeries {
  const rule = options.missing ?? 'interpolate';
  if (!['interpolate', 'carry', 'segments', 'refuse'].includes(rule))
    fail('invalid_option', '--missing', 'interpolate, carry, segments or refuse', String(rule));
  if (options.gapLimit !== undefined && !(Number.isInteger(options.gapLimit) && options.gapLimit >= 1))
    fail('invalid_option', '--gap-limit', 'a whole number of rows ≥ 1', String(options.gapLimit));
  const given = readTable(text, file);
  const time = readTimeColumn(given, options.timeColumn, 'for --time-column');
  const id = seriesIdColumn(given, time, options);
  if (id !== null) return preparePanel(given, time, id, options, prepareTable);
  return prepareTable(given, time, options);
}

/**
 * The table's series as read: skipped times come back as rows of missing cells, before anything else reads the
 * rows, and columns that repeat the time column's calendar (a year, a month number) are not readings (left out,
 * said).
 */
function readTableSeries(given: Table, timeGiven: TimeColumn | null, options: SeriesPreparation, part: PanelPart | undefined) {
  const rule = options.missing ?? 'interpolate';
  const putBack = timeGiven === null ? null : insertSkippedTimes(given, timeGiven, rule === 'refuse');
  const table = putBack?.table ?? given;
  const time = putBack?.time ?? timeGiven;
  const copies = time === null || options.columns !== undefined ? [] : calendarCopies(table, time);
  const leaveOut = [...(time === null ? [] : [time.name]), ...copies, ...(part?.leaveOut ?? [])];
  const series = readSeries(table, {
    columns: options.columns,
    targets: options.targets,
    leaveOut,
    markers: options.missingMarkers,
    refuseMissing: rule === 'refuse',
    choices: { columns: 'with --columns', targets: 'for --target' },
  });
  return { putBack, table, time, copies, series };
}

/**
 * One series' table (and its time column) prepared; `part` when it is one of many series (panel.ts), with the
 * choices they share.
 */
export function prepareTable(given: Table, timeGiven: TimeColumn | null, options: SeriesPreparation, part?: PanelPart): PreparedSeries {
  const file = given.file;
  const rule = options.missing ?? 'interpolate';
  const { putBack, table, time, copies, series } = readTableSeries(given, timeGiven, options, part);
  const columns = series.columns.map((name) => table.header.indexOf(name));
  const targets = series.targets.map((name) => table.header.indexOf(name));
  const leftOut = series.leftOut.filter((text) => time === null || !text.startsWith(`${time.name} (`));
  const rows = table.rows.length;
  const values = series.values;
  const horizon = options.horizon;
  const { trainEnd, testStart } = seriesParts(rows, options);
  if (options.season !== undefined && options.season !== null && !(options.season < testStart)) {
    // The fitting rows end at this line: a season must fit in them.
    fail(
      'invalid_option',
      `${file}:${table.rows[testStart - 1].line}:1 (--season)`,
      `a season shorter than the ${testStart} training and validation rows (of ${rows}), which end at this line`,
      String(options.season),
    );
  }
  const targetIndexes = targets.map((t) => columns.indexOf(t));
  const positions: number[] = [];
  for (let t = testStart - horizon; t < rows - horizon; t++) positions.push(t);
  const split = { values, targets: targetIndexes, horizon, fitRows: testStart, positions };
  const baselines = forecastBaselines(split, { season: options.season, spacing: time?.spacing ?? null });
  if (time !== null) checkGaps(table, time, baselines.season.season);
  const targetNames = targets.map((c) => table.header[c]);
  const partsLine = `parts of ${file}, in time order: training ${linesOf(table, 0, trainEnd)}; validation, for stopping and keeping weights, ${linesOf(table, trainEnd, testStart)}; test, scored once at the end, ${linesOf(table, testStart, rows)}`;
  // Sliding windows by default for series up to SLIDING_ROWS training rows, unless a setting that applies to streams
  // alone (a transform, a lookback) asks for streams.
  const examples = options.examples ?? (trainEnd <= SLIDING_ROWS && (options.transform ?? 'none') === 'none' && options.lookback === 0 ? 'sliding' : 'streams');
  const notes = preparationNotes({ table, time, series, leftOut, copies, putBack, rule: examples === 'sliding' ? rule : 'streams', options });
  const metadata = {
    task: 'forecast' as const,
    columns: columns.map((c) => table.header[c]),
    targetColumns: targetNames,
    horizon,
    ...(time === null ? {} : { timeColumn: time.name }),
    split: { kind: 'series', rows, trainingRows: trainEnd, validationRows: testStart - trainEnd, testRows: rows - testStart },
    ...(baselines.season.season === null ? {} : { season: baselines.season.season }),
  };
  const context = [
    partsLine,
    `${baselines.season.reason}${options.season === undefined ? ' (--season to choose another, or none)' : ''}`,
    ...baselines.leftOut.map((l) => `left out: ${l}`),
  ];
  // Sliding windows forecast every row up to the horizon at once; streams the row `horizon` ahead.
  const rowsAhead = examples === 'sliding' ? Array.from({ length: horizon }, (_, i) => i + 1) : [horizon];
  let observed = 0;
  for (const t of positions) for (const j of targetIndexes) if (!Number.isNaN(values[t + horizon][j])) observed++;
  const what = `${forecastWords(positions.length, targetNames, rowsAhead, observed)}, for the test ${linesOf(table, testStart, rows)} of ${file}, used for neither training nor stopping`;
  const common = {
    table,
    file,
    values,
    columns,
    targetIndexes,
    trainEnd,
    testStart,
    horizon,
    options,
    split,
    baselines,
    notes,
    metadata,
    context,
    what,
    time,
    missing: series.missing,
    ...(part === undefined ? {} : { panel: part }),
  };
  if (examples === 'sliding') return slidingWindows({ ...common, season: baselines.season.season });
  checkStreams(options, series.missing, { file, rows, trainEnd, testStart });
  return streamsOf(common);
}

/** The notes of a series' preparation: columns left out, times put back, missing readings, the time column. */
function preparationNotes({
  table,
  time,
  series,
  leftOut,
  copies,
  putBack,
  rule,
  options,
}: {
  table: Table;
  time: TimeColumn | null;
  series: Series;
  leftOut: readonly string[];
  copies: readonly string[];
  putBack: { note: string | null } | null;
  /** The missing-reading rule as the note names it ('streams' on streams). */
  rule: string;
  options: SeriesPreparation;
}): string[] {
  const rows = table.rows.length;
  const holes = series.missing.some((n) => n > 0);
  return [
    ...(options.columns === undefined && leftOut.length > 0 ? [`left out columns that hold no numbers: ${leftOut.join('; ')}`] : []),
    ...(copies.length === 0
      ? []
      : [
          `left out ${copies.map((c) => JSON.stringify(c)).join(' and ')}: ${copies.length === 1 ? 'it repeats' : 'they repeat'} the time column's calendar (--columns to read ${copies.length === 1 ? 'it' : 'them'})`,
        ]),
    ...(putBack?.note === null || putBack === null ? [] : [putBack.note]),
    ...series.notes,
    ...(holes ? [missingNote(series.columns, series.missing, rows, rule, options.gapLimit, series.targets)] : []),
    ...(time === null
      ? []
      : [`time column: ${time.name}${time.spacing === null ? ' (irregular spacing: no season from it)' : ` (rows ${time.spacing.unit} apart)`}`]),
    ...tableNotes(table, time, series.columns),
  ];
}

/** What streams cannot do: a transform over missing readings, the hybrid, too few training rows for the streams asked. */
function checkStreams(options: SeriesPreparation, missing: readonly number[], at: { file: string; rows: number; trainEnd: number; testStart: number }): void {
  const { file, rows, trainEnd, testStart } = at;
  const horizon = options.horizon;
  const holes = missing.some((n) => n > 0);
  if (holes && (options.transform ?? 'none') !== 'none')
    fail(
      'invalid_option',
      '--transform',
      `none for a series with missing readings (a change from or to a missing reading is unknown); or fill the gaps first`,
      `${options.transform} with ${missing.reduce((a, b) => a + b, 0)} missing readings`,
    );
  if (options.hybrid === true)
    fail(
      'invalid_option',
      '--hybrid',
      `sliding windows (--examples sliding; the default up to ${SLIDING_ROWS.toLocaleString('en')} training rows, and not with --transform or --lookback)`,
      'streams',
    );
  if (trainEnd < options.streams * options.window + horizon) {
    fail(
      'invalid_option',
      file,
      `at least ${options.streams * options.window + horizon} training rows for ${options.streams} streams of ${options.window}-row windows ${horizon} row${horizon === 1 ? '' : 's'} ahead; lower --streams or --window, or the --validation and --test shares`,
      `${rows} rows, which leave ${Math.max(0, trainEnd)} training rows (after ${testStart - trainEnd} for validation and ${rows - testStart} for the test)`,
    );
  }
}

/** What was missing and what was done, in one line. */
function missingNote(
  columns: readonly string[],
  missing: readonly number[],
  rows: number,
  rule: string,
  gapLimit: number | undefined,
  targets: readonly string[],
): string {
  const counts = columns.flatMap((name, j) => (missing[j] > 0 ? [`${name} ${missing[j]} of ${rows} (${Math.round((100 * missing[j]) / rows)}%)`] : []));
  const inputs =
    rule === 'streams'
      ? 'inputs carried from the last value (streams read row by row; the state carries across every gap)'
      : rule === 'segments'
        ? 'no training window holds a missing input (every gap cuts the series; the runtime carries the last value)'
        : `inputs ${rule === 'interpolate' ? "interpolated across each gap (carried where a gap reaches the window's last row)" : 'carried from the last value'}, gaps longer than ${gapLimit === undefined ? 'half the window' : `${gapLimit} rows`} kept out of training windows`;
  const targetHoles = columns.some((name, j) => missing[j] > 0 && targets.includes(name));
  return `missing readings: ${counts.join(', ')}; ${inputs}, with a 0/1 "was missing" input per column with holes${targetHoles ? '; a missing target weighs 0 in the loss and is scored by no one' : ''} (--missing, --gap-limit)`;
}
