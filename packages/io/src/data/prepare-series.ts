/**
 * A table of series turned into a forecaster's training data and its verdict, in one place for the command, the
 * browser page and a user's program: the columns and the time column read, the three parts cut in time order, the
 * baselines fitted, the examples made (sliding windows, or long streams; see series-windows.ts), and everything
 * recorded in the weight file's metadata so that `createRowForecaster` applies it to new rows. What trains on the
 * examples is the caller's: it turns them into batches, and hands the model's outputs back to `validationFigure`
 * and `heldOut`, which score them in the data's units against the baselines.
 */
import { fail } from '@weft/core';
import { medianOfMembers } from '@weft/cells';
import type { WeightMetadata } from '../weight-file.js';
import { forecastBaselines, scoreForecaster } from './baselines.js';
import { conformalHalfWidth, scoreIntervals } from './intervals.js';
import { readSeries } from './series.js';
import { checkGaps, linesOf, seriesParts, tableNotes } from './series-checks.js';
import { columnStatistics, fieldPath, parseTable } from './table.js';
import { readTimeColumn } from './time-column.js';
import type { HeldOutReport } from './verdict.js';
import { forecastReport, forecastWords } from './verdict.js';
import { slidingWindows } from './series-windows.js';
import type { SeriesContext } from './series-windows.js';

/** How a series table is prepared (the command's flags; a user's program gives the same). */
export interface SeriesPreparation {
  /** Share of the rows for validation (stopping, keeping the best weights). */
  readonly validationShare: number;
  /** Share of the rows for the test, scored once for the verdict. */
  readonly testShare: number;
  /** Rows ahead: on sliding windows every row from 1 to it, on streams the row it names. */
  readonly horizon: number;
  /** Rows of a window (given), or of a stream's truncated-backpropagation window. */
  readonly window: number;
  /** Streams: steps back-propagated before each window. */
  readonly lookback: number;
  /** Streams: parallel streams; sliding windows: windows per batch (when given). */
  readonly streams: number;
  /** The seed of the training examples' shuffle. */
  readonly seed: string;
  /** The time column, by name (default: found by its name or values). */
  readonly timeColumn?: string;
  /** How the series becomes examples (default: sliding windows up to SLIDING_ROWS training rows). */
  readonly examples?: 'sliding' | 'streams';
  /** The settings given (by flag name: window, streams, epochs, patience, hidden); the others are chosen from the data. */
  readonly given?: ReadonlySet<string>;
  /** Sliding windows only: forecast the correction to an exponential smoothing forecast. */
  readonly hybrid?: boolean;
  /**
   * Sliding windows only: read the targets as logarithms ('yes'), never ('no', the default), or where the season's
   * swing grows with the level ('auto'; see series-windows.ts, which says why it is not the default).
   */
  readonly log?: 'auto' | 'yes' | 'no';
  /** Sliding windows only: read calendar positions of the time column (default true when its spacing is known). */
  readonly calendar?: boolean;
  /** The input columns (default: every numeric column). */
  readonly columns?: readonly string[];
  /** The columns to forecast (default: the input columns). */
  readonly targets?: readonly string[];
  /** Rows in a season for the seasonal baselines; null for none; undefined to find one. */
  readonly season?: number | null;
  /** Streams only: forecast the change (differences, log returns) instead of the level. */
  readonly transform?: 'none' | 'differences' | 'log-returns';
}

/** One training example of sliding windows: the window's numbers, row-major, and its targets. */
export interface WindowExample {
  /** [rows, input width], row-major. */
  readonly values: number[];
  /** One number per target and row ahead (rows ahead outer). */
  readonly target: number[];
}

/** The examples of sliding windows. */
export interface SeriesWindows {
  /** Sliding windows. */
  readonly kind: 'windows';
  /** Training windows (to shuffle). */
  readonly train: readonly WindowExample[];
  /** Validation windows, every row ahead in the validation part (for the validation loss). */
  readonly validation: readonly WindowExample[];
  /** The windows whose outputs `validationFigure` reads, in order. */
  readonly validationForecasts: readonly WindowExample[];
  /** The windows whose outputs `heldOut` reads, in order. */
  readonly test: readonly WindowExample[];
  /** Windows per batch. */
  readonly batch: number;
}

/** The examples of long streams: the series normalised, row-major, read by the caller in three readings. */
export interface SeriesStreams {
  /** Long streams. */
  readonly kind: 'streams';
  /** Every row's inputs, normalised per column, row-major. */
  readonly values: readonly number[];
  /** Numbers per row. */
  readonly features: number;
  /** The targets: input columns forecast `horizon` rows on, or explicit per-row values (a transform's changes). */
  readonly targets: {
    /** Indexes into a row of the columns forecast. */
    readonly columns: readonly number[];
  } | {
    /** Per row, `width` target numbers, row-major. */
    readonly values: readonly number[];
    /** Targets per row. */
    readonly width: number;
  };
  /** Rows ahead of each target. */
  readonly horizon: number;
  /** Rows [0, trainEnd) train; [trainEnd, testStart) validate; [testStart, rows) test. */
  readonly trainEnd: number;
  /** The first test row. */
  readonly testStart: number;
  /** Rows in the series. */
  readonly rows: number;
  /** Steps per truncated-backpropagation window. */
  readonly window: number;
  /** Steps back-propagated before each window. */
  readonly lookback: number;
  /** Parallel streams. */
  readonly streams: number;
}

/** The settings a preparation chose from the data (for settings not given), and why, for the first line. */
export interface ChosenSettings {
  /** Passes over the training examples (at most: see patience). */
  readonly epochs?: number;
  /** Validations without improvement before stopping. */
  readonly patience?: number;
  /** Hidden units per layer. */
  readonly hidden?: number;
  /** In words, for the first line of output. */
  readonly said: string;
}

/** A series table prepared for training and judging. */
export interface PreparedSeries {
  /** Numbers per step the model reads. */
  readonly inputWidth: number;
  /** Numbers per step it outputs (targets × rows ahead). */
  readonly outputWidth: number;
  /** The examples to train on. */
  readonly examples: SeriesWindows | SeriesStreams;
  /** What the weight file must record. */
  readonly metadata: WeightMetadata;
  /** What preparation did, for the user (columns left out, the time column, notes on the table). */
  readonly notes: readonly string[];
  /** Settings chosen from the data. */
  readonly chosen?: ChosenSettings;
  /**
   * The validation figure (MAE in the data's units for one target, mean MASE for several) from the model's outputs,
   * `width` numbers per example (members stacked side by side: their median is taken): on the windows of
   * `validationForecasts` in order, or on streams at every row of the validation reading.
   */
  validationFigure(outputs: ArrayLike<number>, width: number): number;
  /**
   * The model and every baseline on the test part, from the model's outputs as `validationFigure` takes them; with
   * `intervals`, the prediction intervals scored too (coverage, mean width, MSIS).
   */
  heldOut(outputs: ArrayLike<number>, width: number, intervals?: ForecastIntervals): HeldOutReport;
  /**
   * Split conformal half-widths at `level` from the validation part's errors (outputs as `validationFigure` takes
   * them): one per row ahead and target (rows ahead outer), Infinity where the part is too short for the level.
   */
  intervals(outputs: ArrayLike<number>, width: number, level: number): number[];
}

/** Prediction intervals of a forecast model: forecast ± halfWidth, per row ahead and target (rows ahead outer). */
export interface ForecastIntervals {
  /** The share of values they are meant to cover (0.95 for 95%). */
  readonly level: number;
  /** Half-widths in the data's units. */
  readonly halfWidth: readonly number[];
}

/** At most this many training rows train on sliding windows by default; longer series on streams. */
export const SLIDING_ROWS = 10_000;

/** A target transform and its inverse, from the level now (y) and the level ahead (ahead) or the change (change). */
const TRANSFORMS = {
  differences: { forward: (ahead: number, y: number) => ahead - y, inverse: (change: number, y: number) => y + change },
  'log-returns': { forward: (ahead: number, y: number) => Math.log(ahead / y), inverse: (change: number, y: number) => y * Math.exp(change) },
} as const;

/** Prepares a CSV/TSV text of series (`file` names it in messages) for training and judging. */
export function prepareSeries(text: string, file: string, options: SeriesPreparation): PreparedSeries {
  const table = parseTable(text, { file });
  const time = readTimeColumn(table, options.timeColumn, 'for --time-column');
  const series = readSeries(table, { columns: options.columns, targets: options.targets, leaveOut: time === null ? [] : [time.name], choices: { columns: 'with --columns', targets: 'for --target' } });
  const columns = series.columns.map((name) => table.header.indexOf(name));
  const targets = series.targets.map((name) => table.header.indexOf(name));
  const leftOut = series.leftOut.filter((text) => time === null || !text.startsWith(`${time.name} (`));
  const rows = table.rows.length;
  const values = series.values;
  const horizon = options.horizon;
  const { trainEnd, testStart } = seriesParts(rows, options);
  if (options.season !== undefined && options.season !== null && !(options.season < testStart)) {
    // The fitting rows end at this line: a season must fit in them.
    fail('invalid_option', `${file}:${table.rows[testStart - 1].line}:1 (--season)`, `a season shorter than the ${testStart} training and validation rows (of ${rows}), which end at this line`, String(options.season));
  }
  const targetIndexes = targets.map((t) => columns.indexOf(t));
  const positions: number[] = [];
  for (let t = testStart - horizon; t < rows - horizon; t++) positions.push(t);
  const split = { values, targets: targetIndexes, horizon, fitRows: testStart, positions };
  const baselines = forecastBaselines(split, { season: options.season, spacing: time?.spacing ?? null });
  if (time !== null) checkGaps(table, time, baselines.season.season);
  const targetNames = targets.map((c) => table.header[c]);
  const partsLine = `parts of ${file}, in time order: training ${linesOf(table, 0, trainEnd)}; validation, for stopping and keeping weights, ${linesOf(table, trainEnd, testStart)}; test, scored once at the end, ${linesOf(table, testStart, rows)}`;
  const notes = [
    ...(options.columns === undefined && leftOut.length > 0 ? [`left out columns that hold no numbers: ${leftOut.join('; ')}`] : []),
    ...(time === null ? [] : [`time column: ${time.name}${time.spacing === null ? ' (irregular spacing: no season from it)' : ` (rows ${time.spacing.unit} apart)`}`]),
    ...tableNotes(table, time, series.columns),
  ];
  const metadata = {
    task: 'forecast' as const,
    columns: columns.map((c) => table.header[c]),
    targetColumns: targetNames,
    horizon,
    ...(time === null ? {} : { timeColumn: time.name }),
    split: { kind: 'series', rows, trainingRows: trainEnd, validationRows: testStart - trainEnd, testRows: rows - testStart },
    ...(baselines.season.season === null ? {} : { season: baselines.season.season }),
  };
  const context = [partsLine, `${baselines.season.reason}${options.season === undefined ? ' (--season to choose another, or none)' : ''}`, ...baselines.leftOut.map((l) => `left out: ${l}`)];
  // Sliding windows by default for series up to SLIDING_ROWS training rows, unless a setting that applies to streams
  // alone (a transform, a lookback) asks for streams.
  const examples = options.examples ?? (trainEnd <= SLIDING_ROWS && (options.transform ?? 'none') === 'none' && options.lookback === 0 ? 'sliding' : 'streams');
  // Sliding windows forecast every row up to the horizon at once; streams the row `horizon` ahead.
  const rowsAhead = examples === 'sliding' ? Array.from({ length: horizon }, (_, i) => i + 1) : [horizon];
  const what = `${forecastWords(positions.length, targetNames, rowsAhead)}, for the test ${linesOf(table, testStart, rows)} of ${file}, used for neither training nor stopping`;
  const common = { table, file, values, columns, targetIndexes, trainEnd, testStart, horizon, options, split, baselines, notes, metadata, context, what, time };
  if (examples === 'sliding') return slidingWindows({ ...common, season: baselines.season.season });
  if (options.hybrid === true) fail('invalid_option', '--hybrid', `sliding windows (--examples sliding; the default up to ${SLIDING_ROWS.toLocaleString('en')} training rows, and not with --transform or --lookback)`, 'streams');
  if (trainEnd < options.streams * options.window + horizon) {
    fail('invalid_option', file, `at least ${options.streams * options.window + horizon} training rows for ${options.streams} streams of ${options.window}-row windows ${horizon} row${horizon === 1 ? '' : 's'} ahead; lower --streams or --window, or the --validation and --test shares`, `${rows} rows, which leave ${Math.max(0, trainEnd)} training rows (after ${testStart - trainEnd} for validation and ${rows - testStart} for the test)`);
  }
  return streamsOf(common);
}

type Common = SeriesContext;

/** Long streams: every column normalised by its training rows' mean and deviation; a transform's changes as targets. */
function streamsOf(input: Omit<Common, 'season'>): PreparedSeries {
  const { table, values, columns, targetIndexes, trainEnd, testStart, horizon, options, split, baselines } = input;
  const rows = values.length;
  const { mean, deviation } = columnStatistics(values.slice(0, trainEnd), columns.length);
  const normalised = values.flatMap((row) => row.map((v, j) => (v - mean[j]) / deviation[j]));
  // With a transform, the model learns the change over `horizon` rows (row s holds the change from s − h to s).
  const transform = options.transform ?? 'none';
  let change: { mean: number[]; deviation: number[]; rows: number[][] } | null = null;
  if (transform !== 'none') {
    if (transform === 'log-returns') {
      values.forEach((row, r) => targetIndexes.forEach((j) => {
        if (!(row[j] > 0)) fail('bad_data', fieldPath(table, r, columns[j]), `a number > 0 in column ${JSON.stringify(table.header[columns[j]])} (log returns need positive values)`, String(row[j]));
      }));
    }
    const f = TRANSFORMS[transform].forward;
    const raw = values.map((row, s) => targetIndexes.map((j) => (s < horizon ? 0 : f(row[j], values[s - horizon][j]))));
    const statistics = columnStatistics(raw.slice(horizon, trainEnd), targetIndexes.length);
    change = { ...statistics, rows: raw.map((row) => row.map((v, k) => (v - statistics.mean[k]) / statistics.deviation[k])) };
  }
  const targetCount = targetIndexes.length;
  const combined = new Float64Array(targetCount);
  /** The model's forecast, in real units, made at each row of a reading from the first row (forecasts[k][t]). */
  const forecastsOf = (outputs: ArrayLike<number>, width: number, end: number): Float64Array[] => {
    const forecasts = targetIndexes.map(() => new Float64Array(end));
    // Members stacked into one model give one block of targets each: their median is the forecast.
    const members = width / targetCount;
    const scratch = new Float64Array(members);
    for (let i = 0, t = 0; i + width <= outputs.length; i += width, t++) {
      medianOfMembers(outputs, i, members, targetCount, combined, scratch);
      targetIndexes.forEach((j, k) => {
        forecasts[k][t] = change === null
          ? combined[k] * deviation[j] + mean[j]
          : TRANSFORMS[transform as 'differences' | 'log-returns'].inverse(combined[k] * change.deviation[k] + change.mean[k], values[t][j]);
      });
    }
    return forecasts;
  };
  const names = targetIndexes.map((j) => table.header[columns[j]]);
  return {
    inputWidth: columns.length,
    outputWidth: targetCount,
    examples: {
      kind: 'streams',
      values: normalised,
      features: columns.length,
      targets: change === null ? { columns: targetIndexes } : { values: change.rows.flat(), width: targetCount },
      horizon,
      trainEnd,
      testStart,
      rows,
      window: options.window,
      lookback: options.lookback,
      streams: options.streams,
    },
    metadata: {
      ...input.metadata,
      normalisation: { mean, deviation },
      ...(change === null ? {} : { targetTransform: { kind: transform, mean: change.mean, deviation: change.deviation } }),
    },
    notes: input.notes,
    validationFigure: (outputs, width) => {
      const forecasts = forecastsOf(outputs, width, testStart);
      const scored: number[] = [];
      for (let t = trainEnd - horizon; t < testStart - horizon; t++) scored.push(t);
      const errors = scoreForecaster({ ...split, positions: scored }, (at, k) => forecasts[k][at], baselines.scales).overall;
      return targetCount > 1 ? errors.mase ?? NaN : errors.mae;
    },
    heldOut: (outputs, width, intervals) => {
      const forecasts = forecastsOf(outputs, width, rows);
      const scored = scoreForecaster(split, (at, k) => forecasts[k][at], baselines.scales);
      const report = forecastReport({ what: input.what, model: scored, baselines: baselines.scores, names, context: input.context });
      return intervals === undefined ? report : { ...report, intervals: scoreIntervals(split, (at, k) => forecasts[k][at], intervals, baselines.scales) };
    },
    intervals: (outputs, width, level) => {
      const forecasts = forecastsOf(outputs, width, testStart);
      return targetIndexes.map((j, k) => {
        const errors: number[] = [];
        for (let t = trainEnd - horizon; t < testStart - horizon; t++) errors.push(values[t + horizon][j] - forecasts[k][t]);
        return conformalHalfWidth(errors, level);
      });
    },
  };
}
