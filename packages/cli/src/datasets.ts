/**
 * Turning the user's files into training data, and remembering how (the metadata a weight file needs to be run on
 * new data with nothing else):
 * - a CSV of numeric series → next-value forecasting `horizon` rows ahead, values normalised per column;
 * - a text file → next-character (or next-word) prediction;
 * - a labelled CSV of sequences → sequence classification.
 * Validation data is the last share of a series or text (time order kept), or a seeded random share of sequences.
 *
 * Why one file of this length: the three tasks' preparations (forecast, text, classify) produce one shape (Prepared,
 * HeldOutReport) and share their normalisation and held-out splits; side by side they stay alike.
 */
import { Random, fail } from '@weft/core';
import { medianOfMembers } from '@weft/cells';
import type { ModelDescription, SequenceModel } from '@weft/cells';
import { figuresOn, forEachOutputBatch, sequenceBatches, streamBatches, wholeStream } from '@weft/optim';
import type { Batch, DataSource, LabelledSequence } from '@weft/optim';
import { UNKNOWN_TOKEN, buildVocabulary, chooseLogistic, predictLogistic, summaryFeatures, textBaselines, classificationReport, columnNamed, columnStatistics, decimal, fieldPath, forecastBaselines, parseTable, readSeries, readStepTable, readTimeColumn, scoreForecaster } from '@weft/io';
import { calendarFor, calendarInputs, fitSmoothing, forecastReport, forecastWords, runSmoothing } from '@weft/io';
import type { ClassificationReport, HeldOutReport, SmoothingMethod, SmoothingParameters, Table, TimeColumn, WeightMetadata } from '@weft/io';

export type { Contender, HeldOutReport } from '@weft/io';
import { CommandError } from './errors.js';

export type Task = 'forecast' | 'text' | 'classify';

export interface Prepared {
  readonly task: Task;
  readonly input: ModelDescription['input'];
  readonly outputWidth: number;
  readonly train: DataSource;
  readonly validation: DataSource;
  readonly metadata: WeightMetadata;
  /** Lines to show the user about what preparation did (columns left out, and why). */
  readonly notes?: readonly string[];
  /** The model and every baseline on the test part, in the data's own units. */
  readonly heldOut: (model: SequenceModel) => HeldOutReport;
  /** The model's figure on the validation part, in the test figure's units (for ranking runs without the test). */
  readonly validationFigure?: (model: SequenceModel) => number;
  /** Settings chosen from the data for flags that were not given. */
  readonly chosen?: ChosenSettings;
}

export interface PrepareOptions {
  readonly window: number;
  readonly lookback: number;
  readonly streams: number;
  /** Share of the data for validation (stopping, keeping the best weights). */
  readonly validationShare: number;
  /** Share of the data for the test, scored once for the verdict. */
  readonly testShare: number;
  readonly horizon: number;
  /** The time column of a series, by name (default: found by its name or values). */
  readonly timeColumn?: string;
  /** How a series becomes training examples (default: sliding windows up to SLIDING_ROWS training rows). */
  readonly examples?: 'sliding' | 'streams';
  /** The flags given on the command line (others may be chosen from the data). */
  readonly given?: ReadonlySet<string>;
  /** Sliding windows only: forecast the correction to an exponential smoothing forecast (see slidingWindows). */
  readonly hybrid?: boolean;
  /** Sliding windows only: read calendar positions of the time column (default true when its spacing is known). */
  readonly calendar?: boolean;
  readonly columns?: string[];
  readonly targets?: string[];
  readonly tokens: 'characters' | 'words';
  readonly embedding: number;
  readonly batch: number;
  readonly seed: string;
  /** Rows in a season for the seasonal-naive baseline; null for none; undefined to detect one. */
  readonly season?: number | null;
  /** Forecast the change instead of the level: differences y(t+h) − y(t), or log returns ln(y(t+h) / y(t)). */
  readonly transform?: 'none' | 'differences' | 'log-returns';
}

/** A target transform and its inverse, from the level now (y) and the level ahead (ahead) or the change (change). */
export const TRANSFORMS = {
  differences: { forward: (ahead: number, y: number) => ahead - y, inverse: (change: number, y: number) => y + change },
  'log-returns': { forward: (ahead: number, y: number) => Math.log(ahead / y), inverse: (change: number, y: number) => y * Math.exp(change) },
} as const;

/** The three parts of a series, by target row: training [0, trainEnd), validation [trainEnd, testStart), test [testStart, rows). */
export interface SeriesParts {
  readonly rows: number;
  readonly trainEnd: number;
  readonly testStart: number;
}

/**
 * Cuts `rows` rows into training, validation and test parts, in time order, by the shares asked; every part gets at
 * least one row, the test part at least the horizon (else a one-line error naming --test).
 */
export function seriesParts(rows: number, options: Pick<PrepareOptions, 'validationShare' | 'testShare' | 'horizon'>): SeriesParts {
  const test = Math.max(1, Math.round(rows * options.testShare));
  const validation = Math.max(1, Math.round(rows * options.validationShare));
  if (test < options.horizon) {
    fail('invalid_option', '--test', `a share leaving at least ${options.horizon} test rows (the horizon) of the ${rows}: ${Math.ceil((100 * options.horizon) / rows) / 100} or more`, `${options.testShare} (${test} row${test === 1 ? '' : 's'})`);
  }
  return { rows, trainEnd: rows - test - validation, testStart: rows - test };
}

/** Lines a to b of a table, as "lines 2–145 (144 rows)". */
function linesOf(table: Table, from: number, to: number): string {
  return `lines ${table.rows[from].line}–${table.rows[to - 1].line} (${to - from} row${to - from === 1 ? '' : 's'})`;
}

/**
 * A series' times must increase down the file: a repeated time (several series side by side?) or one that goes
 * back is an error at its file:line:column, never a silently pooled or shuffled series.
 */
function checkTimes(table: Table, time: TimeColumn): void {
  const at = (r: number) => fieldPath(table, r, time.index);
  const shown = (r: number) => JSON.stringify(table.rows[r].fields[time.index].trim().slice(0, 40));
  if (time.repeated >= 0 && (time.backwards < 0 || time.repeated < time.backwards)) {
    const r = time.repeated;
    const first = time.times.indexOf(time.times[r]);
    fail('bad_data', at(r), `a time after line ${table.rows[r - 1].line}'s in column ${JSON.stringify(time.name)}, as a series has one row per time (several series in one table? forecast one series per file, or classify them with --task classify --id-column NAME)`, `${shown(r)} again (as on line ${table.rows[first].line})`);
  }
  if (time.backwards >= 0) {
    const r = time.backwards;
    fail('bad_data', at(r), `a time after line ${table.rows[r - 1].line}'s ${shown(r - 1)} in column ${JSON.stringify(time.name)} (sort the file by time)`, shown(r));
  }
}

/**
 * A gap in a regular series longer than a season (rows missing) is an error at the row after it: the seasonal
 * baselines and the windows would silently misalign.
 */
function checkGaps(table: Table, time: TimeColumn, season: number | null): void {
  if (time.spacing === null || season === null) return;
  const gaps: number[] = [];
  for (let r = 1; r < time.times.length; r++) gaps.push(time.times[r] - time.times[r - 1]);
  const sorted = [...gaps].sort((a, b) => a - b);
  const median = sorted[Math.floor(sorted.length / 2)];
  const r = gaps.findIndex((g) => g > season * median * 1.05) + 1;
  if (r > 0) {
    fail('bad_data', fieldPath(table, r, time.index), `a time at most a season (${season} rows, ${time.spacing.unit} apart) after line ${table.rows[r - 1].line}'s in column ${JSON.stringify(time.name)}; fill the missing rows, or forecast the parts apart`, `${JSON.stringify(table.rows[r].fields[time.index].trim().slice(0, 40))}, ${Math.round(gaps[r - 1] / median)} rows' time later`);
  }
}

/** Notes on a table that may hold several series or counters, so nothing is pooled without a word. */
function tableNotes(table: Table, time: TimeColumn | null, numeric: readonly string[], file: string): string[] {
  const notes: string[] = [];
  if (time !== null) checkTimes(table, time);
  for (const name of numeric) {
    const c = table.header.indexOf(name);
    const first = decimal(table.rows[0]?.fields[c] ?? '');
    if (table.rows.length > 2 && table.rows.every((row, r) => decimal(row.fields[c]) === first + r)) {
      notes.push(`note: column ${JSON.stringify(name)} counts the rows (${first}, ${first + 1}, ${first + 2}, …): it is probably an index, not a reading; leave it out with --columns`);
    }
  }
  // A text column that names series: its values stand in blocks (series one after another) or take turns
  // (series interleaved row by row); a label that merely repeats (the day's weather) does neither.
  table.header.forEach((name, c) => {
    if (c === time?.index || numeric.includes(name) || table.rows.length < 4) return;
    const cells = table.rows.map((row) => row.fields[c].trim());
    const distinct = new Set(cells).size;
    let runs = 1;
    for (let r = 1; r < cells.length; r++) if (cells[r] !== cells[r - 1]) runs++;
    const inTurns = cells.every((v, r) => r < distinct || v === cells[r - distinct]);
    if (distinct > 1 && distinct <= table.rows.length / 3 && (runs === distinct || inTurns)) {
      notes.push(`note: column ${JSON.stringify(name)} names ${distinct} repeating values: if each names a series, the table holds several series and weft would pool them into one; pick one series's rows, or classify the sequences with --task classify --id-column ${name}`);
    }
  });
  return notes;
}

export function prepareForecast(text: string, file: string, options: PrepareOptions): Prepared {
  const table = parseTable(text, { file });
  const time = readTimeColumn(table, options.timeColumn, 'for --time-column');
  const series = readSeries(table, { columns: options.columns, targets: options.targets, leaveOut: time === null ? [] : [time.name], choices: { columns: 'with --columns', targets: 'for --target' } });
  const columns = series.columns.map((name) => table.header.indexOf(name));
  const targets = series.targets.map((name) => table.header.indexOf(name));
  const leftOut = series.leftOut.filter((text) => time === null || !text.startsWith(`${time.name} (`));
  const rows = table.rows.length;
  const values = series.values;
  const horizon = options.horizon;
  const parts = seriesParts(rows, options);
  const { trainEnd, testStart } = parts;
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
    ...tableNotes(table, time, series.columns, file),
  ];
  const common = {
    task: 'forecast' as const,
    columns: columns.map((c) => table.header[c]),
    targetColumns: targetNames,
    horizon,
    ...(time === null ? {} : { timeColumn: time.name }),
    split: { kind: 'series', rows, trainingRows: trainEnd, validationRows: testStart - trainEnd, testRows: rows - testStart },
    ...(baselines.season.season === null ? {} : { season: baselines.season.season }),
  };
  const context = [partsLine, `${baselines.season.reason}${options.season === undefined ? ' (--season to choose another, or none)' : ''}`, ...baselines.leftOut.map((l) => `left out: ${l}`)];
  const examplesAsked = options.examples ?? (trainEnd <= SLIDING_ROWS && (options.transform ?? 'none') === 'none' && options.lookback === 0 ? 'sliding' : 'streams');
  // Sliding windows forecast every row up to the horizon at once; streams the row `horizon` ahead.
  const rowsAheadWords = examplesAsked === 'sliding' ? Array.from({ length: horizon }, (_, i) => i + 1) : [horizon];
  const testWhat = `${forecastWords(positions.length, targetNames, rowsAheadWords)}, for the test ${linesOf(table, testStart, rows)} of ${file}, used for neither training nor stopping`;
  // Sliding windows by default for series up to SLIDING_ROWS training rows, unless a flag that applies to streams
  // alone (--transform, --lookback) asks for streams.
  const examples = examplesAsked;
  if (examples === 'sliding') {
    return slidingWindows({ table, file, values, columns, targetIndexes, trainEnd, testStart, horizon, season: baselines.season.season, options, split, baselines, notes, metadata: common, context, what: testWhat, time });
  }
  if (options.hybrid === true) throw new CommandError('--hybrid needs sliding windows (--examples sliding; the default up to 10,000 training rows, and not with --transform or --lookback)', 2);
  if (trainEnd < options.streams * options.window + horizon) {
    throw new CommandError(`${file}: ${rows} rows leave ${Math.max(0, trainEnd)} training rows (after ${testStart - trainEnd} for validation and ${rows - testStart} for the test), too few for ${options.streams} streams of ${options.window}-row windows ${horizon} row${horizon === 1 ? '' : 's'} ahead (${options.streams * options.window + horizon} rows); lower --streams or --window, or the --validation and --test shares`);
  }
  const { mean, deviation } = columnStatistics(values.slice(0, trainEnd), columns.length);
  const normalised = values.map((row) => row.map((v, j) => (v - mean[j]) / deviation[j]));
  const flat = (from: number, to: number) => normalised.slice(from, to).flat();
  // With a transform, the model learns the change over `horizon` rows (row s holds the change from s − h to s).
  const transform = options.transform ?? 'none';
  let change: { mean: number[]; deviation: number[]; rows: number[][] } | null = null;
  if (transform !== 'none') {
    if (transform === 'log-returns') {
      values.forEach((row, r) => targetIndexes.forEach((j, k) => {
        if (!(row[j] > 0)) fail('bad_data', fieldPath(table, r, targets[k]), `a number > 0 in column ${JSON.stringify(table.header[targets[k]])} (log returns need positive values)`, String(row[j]));
      }));
    }
    const f = TRANSFORMS[transform].forward;
    const raw = values.map((row, s) => targetIndexes.map((j) => (s < horizon ? 0 : f(row[j], values[s - horizon][j]))));
    const statistics = columnStatistics(raw.slice(horizon, trainEnd), targetIndexes.length);
    change = { ...statistics, rows: raw.map((row) => row.map((v, k) => (v - statistics.mean[k]) / statistics.deviation[k])) };
  }
  const targetOptions = (from: number, to: number) => change === null
    ? { targetColumns: targetIndexes }
    : { targets: change.rows.slice(from, to).flat(), targetWidth: targetIndexes.length };
  const train = streamBatches({ kind: 'values', values: flat(0, trainEnd), features: columns.length, ...targetOptions(0, trainEnd), horizon }, { streams: options.streams, window: options.window, lookback: options.lookback });
  // Validation and test read the series from its first row as one stream (the runtime's forecast at each row, as
  // `weft run` makes it), every row before their own first target carrying state only.
  const reading = (end: number, firstTarget: number) => wholeStream(
    { kind: 'values', values: flat(0, end), features: columns.length, ...targetOptions(0, end), horizon },
    { window: options.window, scoredFrom: firstTarget - horizon },
  );
  const validation = reading(testStart, trainEnd);
  const test = reading(rows, testStart);
  return {
    task: 'forecast',
    input: { kind: 'values', width: columns.length },
    outputWidth: targets.length,
    train,
    validation,
    metadata: {
      ...common,
      normalisation: { mean, deviation },
      ...(change === null || transform === 'none' ? {} : { targetTransform: { kind: transform, mean: change.mean, deviation: change.deviation } }),
    },
    notes,
    validationFigure: (model) => {
      const forecasts = forecastsOn(model, validation, testStart);
      const scoredPositions: number[] = [];
      for (let t = trainEnd - horizon; t < testStart - horizon; t++) scoredPositions.push(t);
      const errors = scoreForecaster({ ...split, positions: scoredPositions }, (at, k) => forecasts[k][at], baselines.scales).overall;
      return targetNames.length > 1 ? errors.mase ?? NaN : errors.mae;
    },
    heldOut: (model) => {
      const forecasts = forecastsOn(model, test, rows);
      const scored = scoreForecaster(split, (at, k) => forecasts[k][at], baselines.scales);
      return forecastReport({ what: testWhat, model: scored, baselines: baselines.scores, names: targetNames, context });
    },
  };

  /** The model's forecast, in real units, made at each row of a source read from the first row (forecasts[k][t]). */
  function forecastsOn(model: SequenceModel, source: DataSource, end: number): Float64Array[] {
    const forecasts = Array.from({ length: targetIndexes.length }, () => new Float64Array(end));
    let t = 0;
    const combined = new Float64Array(targetIndexes.length);
    forEachOutputBatch(model, source, (_batch, { outputs, width }) => {
      // Members stacked into one model (--ensemble) give one block of targets each: their median is the forecast.
      const members = width / targetIndexes.length;
      const scratch = new Float64Array(members);
      for (let i = 0; i < outputs.length; i += width, t++) {
        medianOfMembers(outputs, i, members, targetIndexes.length, combined, scratch);
        targetIndexes.forEach((j, k) => {
          forecasts[k][t] = change === null
            ? combined[k] * deviation[j] + mean[j]
            : TRANSFORMS[transform as 'differences' | 'log-returns'].inverse(combined[k] * change.deviation[k] + change.mean[k], values[t][j]);
        });
      }
    });
    return forecasts;
  }
}

/** At most this many training rows train on sliding windows by default (short series); longer ones on streams. */
export const SLIDING_ROWS = 10_000;

/** The settings a preparation chose from the data (for flags not given), and why, for the first line. */
export interface ChosenSettings {
  readonly epochs?: number;
  readonly patience?: number;
  readonly hidden?: number;
  /** In words, for the first line of output. */
  readonly said: string;
}

/**
 * The smoothing method, fitted on rows [0, fitEnd), whose forecasts of rows [fitEnd, checkEnd) have the lowest MAE
 * (over every row ahead in `rowsAhead`); its forecasts made at every row, per row ahead (forecasts[s][t]).
 */
function chooseSmoothing(series: readonly number[], fitEnd: number, checkEnd: number, rowsAhead: readonly number[], season: number | null): { name: string; parameters: SmoothingParameters; forecasts: Float64Array[] } {
  const methods: SmoothingMethod[] = ['simple', 'damped', ...(season === null ? [] : (['additive', 'multiplicative'] as SmoothingMethod[]))];
  let best: { name: string; parameters: SmoothingParameters; forecasts: Float64Array[]; error: number } | null = null;
  for (const method of methods) {
    const fit = fitSmoothing(series, fitEnd, method, season ?? 1);
    if (fit === null) continue;
    const forecasts = rowsAhead.map(() => new Float64Array(series.length));
    if (rowsAhead.some((h, s) => Number.isNaN(runSmoothing(series, fitEnd, fit, h, forecasts[s])))) continue;
    let error = 0;
    rowsAhead.forEach((h, s) => {
      for (let t = fitEnd - h; t + h < checkEnd; t++) error += Math.abs(series[t + h] - forecasts[s][t]);
    });
    if (best === null || error < best.error) {
      const { meanSquaredError: _unused, ...parameters } = fit;
      best = { name: method === 'simple' ? 'simple smoothing' : method === 'damped' ? 'a damped trend' : `Holt-Winters ${method}`, parameters, forecasts, error };
    }
  }
  if (best === null) throw new CommandError('--hybrid found no smoothing method to fit on the training rows', 2);
  return best;
}

interface SlidingInput {
  readonly table: Table;
  readonly file: string;
  readonly values: readonly (readonly number[])[];
  readonly columns: readonly number[];
  readonly targetIndexes: readonly number[];
  readonly trainEnd: number;
  readonly testStart: number;
  readonly horizon: number;
  readonly season: number | null;
  readonly options: PrepareOptions;
  readonly split: { values: readonly (readonly number[])[]; targets: readonly number[]; horizon: number; fitRows: number; positions: readonly number[] };
  readonly baselines: ReturnType<typeof forecastBaselines>;
  readonly notes: string[];
  readonly metadata: WeightMetadata;
  readonly context: readonly string[];
  readonly what: string;
  readonly time: TimeColumn | null;
}

/**
 * Sliding windows: every row t of the training part whose target row t + horizon is a training row ends one
 * example, the `window` rows up to t, each value taken relative to row t and divided by its column's deviation of
 * one-row changes; the example's target is the change of each target from row t to row t + horizon, divided by
 * that change's deviation (recorded as metadata `window`; createRowForecaster applies it). Validation and test
 * examples end at the rows whose target rows are in those parts. Defaults from the data: a window of two seasons
 * (24 rows without one), at most 64 rows and a quarter of the training rows; 32 windows per batch; enough epochs for about
 * 2,000 updates (3 to 300 epochs); patience 5; 32 hidden units.
 */
function slidingWindows(input: SlidingInput): Prepared {
  const { table, file, values, columns, targetIndexes, trainEnd, testStart, horizon, season, options, split, baselines } = input;
  const given = options.given ?? new Set<string>();
  if ((options.transform ?? 'none') !== 'none') throw new CommandError('--transform applies to --examples streams; sliding windows already forecast the change from the window\'s last row', 2);
  if (options.lookback > 0) throw new CommandError('--lookback applies to --examples streams (sliding windows are read whole)', 2);
  const least = (season === null ? 32 : 2 * season) + horizon;
  if (trainEnd < least) {
    const rows = values.length;
    const total = Math.ceil(least / (1 - options.validationShare - options.testShare));
    throw new CommandError(`${file}: ${rows} rows leave ${trainEnd} training rows; a series ${season === null ? 'without a season' : `with a season of ${season} rows`} needs ${least} (${season === null ? '32 rows' : 'two seasons'} and the horizon), about ${total} rows in all with the --validation and --test shares`);
  }
  const window = given.has('window') ? options.window : Math.max(2, Math.min(season === null ? 24 : 2 * season, 64, Math.floor(trainEnd / 4)));
  const width = columns.length;
  const targetCount = targetIndexes.length;
  // Every row up to the horizon at once (direct multi-output): one block of targets per row ahead, nearest first.
  const rowsAhead = Array.from({ length: horizon }, (_, i) => i + 1);
  // Deviations of one-row changes per column, and of the forecast change per target, over the training rows.
  const deviation = Array.from({ length: width }, (_, j) => {
    let sum = 0;
    for (let t = 1; t < trainEnd; t++) sum += (values[t][j] - values[t - 1][j]) ** 2;
    const d = Math.sqrt(sum / Math.max(1, trainEnd - 1));
    return d > 0 && Number.isFinite(d) ? d : 1;
  });
  // The hybrid: per target, the smoothing method (fitted on the training rows) whose forecasts of the validation
  // rows are best; the model reads its forecasts of the next row beside the values and forecasts the correction to
  // its forecast of each row ahead.
  const hybrid = options.hybrid === true ? targetIndexes.map((j) => chooseSmoothing(values.map((row) => row[j]), trainEnd, testStart, rowsAhead, season)) : null;
  const base = (s: number, k: number, t: number) => (hybrid === null ? values[t][targetIndexes[k]] : hybrid[k].forecasts[s][t]);
  // Calendar inputs from the time column (where in the year, week or day each row falls), after the hybrid's.
  const positions = options.calendar === false || input.time === null ? [] : calendarFor(input.time.spacing);
  const times = input.time?.times ?? null;
  const calendarAt = width + (hybrid === null ? 0 : targetCount);
  const inputWidth = calendarAt + 2 * positions.length;
  const targetDeviation = rowsAhead.flatMap((h, s) => targetIndexes.map((j, k) => {
    let sum = 0;
    for (let t = 0; t + h < trainEnd; t++) sum += (values[t + h][j] - base(s, k, t)) ** 2;
    const d = Math.sqrt(sum / Math.max(1, trainEnd - h));
    return d > 0 && Number.isFinite(d) ? d : 1;
  }));
  // The window ending at row t; its targets are the rows ahead before row `end` (0 past it: those are never scored).
  const example = (t: number, end: number): LabelledSequence => {
    const inputs = new Array<number>(window * inputWidth);
    for (let k = 0; k < window; k++) {
      const row = t - window + 1 + k;
      for (let j = 0; j < width; j++) inputs[k * inputWidth + j] = (values[row][j] - values[t][j]) / deviation[j];
      if (hybrid !== null) targetIndexes.forEach((j, i) => (inputs[k * inputWidth + width + i] = (hybrid[i].forecasts[0][row] - values[t][j]) / deviation[j]));
      if (times !== null && positions.length > 0) calendarInputs(positions, times[row], inputs, k * inputWidth + calendarAt);
    }
    const target = rowsAhead.flatMap((h, s) => targetIndexes.map((j, k) => (t + h < end ? (values[t + h][j] - base(s, k, t)) / targetDeviation[s * targetCount + k] : 0)));
    return { values: inputs, target };
  };
  // Windows ending at rows [from, to) (none before a full window), targets before row `end`.
  const windowsEnding = (from: number, to: number, end: number) => {
    const out: LabelledSequence[] = [];
    for (let t = Math.max(window - 1, from); t < to; t++) out.push(example(t, end));
    return out;
  };
  // Training and validation windows have every row ahead in their part (the farthest row ahead is in it).
  const trainSet = windowsEnding(0, trainEnd - horizon, trainEnd);
  if (trainSet.length < 2) throw new CommandError(`${file}: ${trainEnd} training rows make ${trainSet.length} windows of ${window} rows ${horizon} row${horizon === 1 ? '' : 's'} ahead; lower --window`, 2);
  const validationSet = windowsEnding(trainEnd - horizon, testStart - horizon, testStart);
  if (validationSet.length === 0) throw new CommandError(`${file}: the validation part has no row with ${window} rows before it; lower --window`);
  const batch = given.has('streams') ? options.streams : Math.max(1, Math.min(32, Math.floor(trainSet.length / 4)));
  const batchesPerEpoch = Math.ceil(trainSet.length / batch);
  const epochs = Math.min(300, Math.max(3, Math.ceil(2000 / batchesPerEpoch)));
  const validation = sequenceBatches(validationSet, { batchSize: 256, features: inputWidth });
  // Forecasts are read in window order: a batch source shuffles its batches, so each chunk of windows is a source
  // of one batch, read in turn. Scoring reads every window with a row ahead in the part (the nearest at least).
  const inOrder = (set: LabelledSequence[]): DataSource[] => {
    const chunks: DataSource[] = [];
    for (let i = 0; i < set.length; i += 256) chunks.push(sequenceBatches(set.slice(i, i + 256), { batchSize: 256, features: inputWidth }));
    return chunks;
  };
  const validationFrom = Math.max(window - 1, trainEnd - horizon);
  const validationInOrder = inOrder(windowsEnding(validationFrom, testStart - 1, testStart));
  const testFrom = Math.max(window - 1, testStart - horizon);
  const test = inOrder(windowsEnding(testFrom, values.length - 1, values.length));
  const seasonWords = season === null ? 'no season found' : 2 * season === window ? `two seasons of ${season} rows` : `a season of ${season} rows`;
  const block = rowsAhead.length * targetCount;
  const combined = new Float64Array(block);
  /** forecasts[s][k][t]: the forecast of target k made at row t for row t + rowsAhead[s] (members' median). */
  const forecastsOf = (model: SequenceModel, chunks: readonly DataSource[], from: number): Float64Array[][] => {
    const forecasts = rowsAhead.map(() => targetIndexes.map(() => new Float64Array(values.length).fill(NaN)));
    let t = from;
    for (const chunk of chunks) {
      forEachOutputBatch(model, chunk, (_batch, { outputs, width: outputWidth }) => {
        const members = outputWidth / block;
        const scratch = new Float64Array(members);
        for (let i = 0; i < outputs.length; i += outputWidth, t++) {
          medianOfMembers(outputs, i, members, block, combined, scratch);
          for (let s = 0; s < rowsAhead.length; s++) for (let k = 0; k < targetCount; k++) forecasts[s][k][t] = base(s, k, t) + combined[s * targetCount + k] * targetDeviation[s * targetCount + k];
        }
      });
    }
    return forecasts;
  };
  // With several rows ahead, every baseline forecasts each of them too (fitted once).
  const several = rowsAhead.length > 1;
  const scoredSplit = several ? { ...split, rowsAhead } : split;
  const scoredBaselines = several ? forecastBaselines(scoredSplit, { season, spacing: input.time?.spacing ?? null }).scores : baselines.scores;
  const ahead = several ? `, forecasting rows 1 to ${horizon} ahead at once` : '';
  return {
    task: 'forecast',
    input: { kind: 'values', width: inputWidth },
    outputWidth: block,
    train: sequenceBatches(trainSet, { batchSize: batch, features: inputWidth, seed: options.seed }),
    validation,
    metadata: { ...input.metadata, ...(several ? { rowsAhead: 'all' } : {}), normalisation: columnStatistics(values.slice(0, trainEnd), width), window: { rows: window, deviation, targetDeviation, ...(hybrid === null ? {} : { hybrid: hybrid.map((h) => h.parameters) }), ...(positions.length === 0 ? {} : { calendar: positions }) } },
    notes: input.notes,
    chosen: {
      ...(given.has('epochs') ? {} : { epochs }),
      ...(given.has('patience') ? {} : { patience: 5 }),
      ...(given.has('hidden') ? {} : { hidden: 32 }),
      said: `sliding windows${hybrid === null ? '' : ` on top of ${hybrid.map((h) => h.name).join(', ')}`}: ${trainSet.length} training examples of ${window} rows${given.has('window') ? '' : ` (${seasonWords})`}${ahead}, ${batch} per batch${given.has('epochs') ? '' : `, up to ${epochs} epochs`}${given.has('patience') ? '' : ', patience 5'}${given.has('hidden') ? '' : ', 32 hidden'}${positions.length === 0 ? '' : `, reading the ${positions.join(' and ')}`} (chosen from the data; flags override, --examples streams reads the series as streams)`,
    },
    validationFigure: (model) => {
      const forecasts = forecastsOf(model, validationInOrder, validationFrom);
      const scored: number[] = [];
      for (let t = validationFrom; t < testStart - horizon; t++) scored.push(t);
      const errors = scoreForecaster({ ...scoredSplit, positions: scored }, (at, k, h) => forecasts[h - 1][k][at], baselines.scales).overall;
      return targetCount > 1 ? errors.mase ?? NaN : errors.mae;
    },
    heldOut: (model) => {
      const forecasts = forecastsOf(model, test, testFrom);
      const scored = scoreForecaster(scoredSplit, (at, k, h) => forecasts[h - 1][k][at], baselines.scales);
      return forecastReport({ what: input.what, model: scored, baselines: scoredBaselines, names: targetIndexes.map((j) => table.header[columns[j]]), context: input.context });
    },
  };
}

export function tokenize(text: string, mode: 'characters' | 'words'): string[] {
  return mode === 'characters' ? [...text] : (text.match(/\S+/g) ?? []);
}

export const UNKNOWN = UNKNOWN_TOKEN;

/** Tokens of warm-up before the first scored token of a text part: state only, never scored. */
const TEXT_WARM_UP = 256;

export function prepareText(text: string, file: string, options: PrepareOptions): Prepared {
  const pieces = tokenize(text, options.tokens);
  const testCount = Math.max(2, Math.round(pieces.length * options.testShare));
  const validationCount = Math.max(2, Math.round(pieces.length * options.validationShare));
  const trainEnd = pieces.length - testCount - validationCount;
  const testStart = pieces.length - testCount;
  if (trainEnd < options.streams * options.window + 1) {
    throw new CommandError(`${file}: ${pieces.length} ${options.tokens} leave ${Math.max(0, trainEnd)} to train on (after ${validationCount} for validation and ${testCount} for the test), too few for ${options.streams} streams of ${options.window}-token windows (${options.streams * options.window + 1}); lower --streams or --window, or the --validation and --test shares`);
  }
  const trainPieces = pieces.slice(0, trainEnd);
  const vocabulary = buildVocabulary(trainPieces);
  const index = new Map(vocabulary.map((v, i) => [v, i]));
  const ids = Int32Array.from(pieces, (p) => index.get(p) ?? 0);
  const trainIds = ids.subarray(0, trainEnd);
  let unseen = 0;
  for (let i = trainEnd; i < pieces.length; i++) if (!index.has(pieces[i])) unseen++;
  // A part read as one stream from a warm-up before it; its first token is predicted from the one before it.
  const reading = (from: number, to: number) => {
    const begin = Math.max(0, from - 1 - TEXT_WARM_UP);
    return wholeStream({ kind: 'tokens', tokens: ids.subarray(begin, to), vocabulary: vocabulary.length }, { window: options.window, scoredFrom: from - 1 - begin });
  };
  const validation = reading(trainEnd, testStart);
  const test = reading(testStart, pieces.length);
  // Baselines: unigram (add-one) and interpolated Kneser–Ney with its order chosen on the validation part, both
  // counted on training and validation for the test, as the forecast baselines are fitted.
  const most = options.tokens === 'characters' ? 6 : 3;
  const judged = textBaselines(ids, trainEnd, testStart, vocabulary.length, most);
  const partsLine = `parts of ${file}, in order: training ${trainEnd} ${options.tokens}; validation, for stopping and keeping weights, ${validationCount}; test, scored once at the end, the last ${testCount}`;
  return {
    task: 'text',
    input: { kind: 'embedding', vocabulary: vocabulary.length, width: options.embedding },
    outputWidth: vocabulary.length,
    train: streamBatches({ kind: 'tokens', tokens: trainIds, vocabulary: vocabulary.length }, { streams: options.streams, window: options.window, lookback: options.lookback }),
    validation,
    metadata: { task: 'next-token', tokens: options.tokens, vocabulary, split: { kind: 'text', tokens: pieces.length, trainingTokens: trainEnd, validationTokens: validationCount, testTokens: testCount } },
    notes: [
      ...(unseen > 0 ? [`${unseen} of the ${pieces.length - trainEnd} validation and test ${options.tokens} never occur in the training text; the model reads them as ${UNKNOWN}`] : []),
    ],
    validationFigure: (model) => Math.exp(averageCrossEntropy(model, validation)),
    heldOut: (model) => ({
      metric: 'perplexity',
      lowerIsBetter: true,
      what: `the last ${testCount} ${options.tokens} of ${file}, used for neither training nor stopping, each predicted from those before it`,
      model: { name: 'model', description: '', value: Math.exp(averageCrossEntropy(model, test)) },
      baselines: [
        { name: 'unigram', description: 'each token as often as in the training and validation text (add-one)', value: judged.unigram },
        { name: `${judged.order}-gram`, description: `interpolated Kneser-Ney over ${options.tokens}, order ${judged.order} of 1-${most} chosen on the validation part (validation perplexity ${judged.orderLosses.map((l, i) => `${i + 1}: ${Number(Math.exp(l).toPrecision(4))}`).join(', ')})`, value: judged.ngram },
      ],
      names: [],
      context: [partsLine],
    }),
  };
}

export interface ClassifyOptions extends PrepareOptions {
  readonly labelColumn: string;
  readonly sequenceColumn: string;
  /** Set for a long table (one step per row): the column naming each row's sequence. */
  readonly idColumn?: string;
  /** For a long table: the column ordering the steps of a sequence (default file order). */
  readonly stepColumn?: string;
}

export function prepareClassification(text: string, file: string, options: ClassifyOptions): Prepared {
  const table = parseTable(text, { file });
  if (options.idColumn !== undefined) return prepareStepClassification(table, file, options);
  const labelAt = table.header.indexOf(options.labelColumn);
  const sequenceAt = table.header.indexOf(options.sequenceColumn);
  if (labelAt < 0 || sequenceAt < 0) {
    throw new CommandError(`${file}: needs columns ${JSON.stringify(options.labelColumn)} and ${JSON.stringify(options.sequenceColumn)} (or a long table: one step per row, with --id-column); found ${table.header.join(', ')}`, 2);
  }
  const labels = [...new Set(table.rows.map((r) => r.fields[labelAt].trim()))].sort();
  onlyOneClass(labels, table.rows.length > 0 ? fieldPath(table, 0, labelAt) : `${file}:1:1`);
  const items = table.rows.map((r) => r.fields[sequenceAt].trim().split(/\s+/).filter((s) => s !== ''));
  items.forEach((list, i) => {
    if (list.length === 0) fail('bad_data', fieldPath(table, i, sequenceAt), 'a sequence of at least one item', 'an empty field');
  });
  // Numbers or tokens, decided by every item: a file of numbers with one item that is not is an error there,
  // not a quiet switch to tokens.
  const total = items.reduce((n, list) => n + list.length, 0);
  const numbers = items.reduce((n, list) => n + list.filter((s) => !Number.isNaN(decimal(s))).length, 0);
  const numeric = numbers === total;
  if (!numeric && numbers >= total / 2) {
    const row = items.findIndex((list) => list.some((s) => Number.isNaN(decimal(s))));
    const bad = items[row].find((s) => Number.isNaN(decimal(s)))!;
    fail('bad_data', fieldPath(table, row, sequenceAt), `a decimal number, as ${numbers} of the ${total} items of the sequences are`, JSON.stringify(bad.slice(0, 80)));
  }
  const vocabulary = numeric ? null : buildVocabulary(items.flat());
  const index = new Map((vocabulary ?? []).map((v, i) => [v, i]));
  let mean = 0;
  let deviation = 1;
  if (numeric) {
    const statistics = columnStatistics(items.flat().map((s) => [decimal(s)]), 1);
    mean = statistics.mean[0];
    deviation = statistics.deviation[0];
  }
  const sequences: LabelledSequence[] = items.map((list, i) => ({
    ...(numeric ? { values: list.map((s) => (decimal(s) - mean) / deviation) } : { tokens: list.map((s) => index.get(s) ?? 0) }),
    label: labels.indexOf(table.rows[i].fields[labelAt].trim()),
  }));
  return classificationData(sequences, labels, 1, file, options, {
    input: numeric ? { kind: 'values', width: 1 } : { kind: 'embedding', vocabulary: vocabulary!.length, width: options.embedding },
    metadata: {
      task: 'classification',
      classes: labels,
      ...(numeric ? { normalisation: { mean: [mean], deviation: [deviation] } } : { vocabulary: vocabulary ?? [], tokens: 'words' }),
      sequenceColumn: options.sequenceColumn,
    },
    notes: [],
  });
}

/** A classifier needs two classes: `where` is the file:line:column of the first label. */
function onlyOneClass(labels: readonly string[], where: string): void {
  if (labels.length < 2) fail('bad_data', where, 'labels of at least two classes (a classifier needs them)', `the label ${JSON.stringify(labels[0] ?? '')} on every sequence`);
}

/** A labelled long table (one step per row, several numbers per step) as sequences, normalised per column. */
function prepareStepClassification(table: Table, file: string, options: ClassifyOptions): Prepared {
  const read = readStepTable(table, { idColumn: options.idColumn as string, stepColumn: options.stepColumn, labelColumn: options.labelColumn, columns: options.columns });
  const labels = [...new Set(read.sequences.map((q) => q.label as string))].sort();
  const width = read.columns.length;
  const labelAt = columnNamed(table, options.labelColumn, 'the labels');
  onlyOneClass(labels, table.rows.length > 0 ? fieldPath(table, 0, labelAt) : `${file}:1:1`);
  const statistics = columnStatistics(read.sequences.flatMap((q) => q.steps), width);
  const sequences: LabelledSequence[] = read.sequences.map((q) => ({
    values: q.steps.flatMap((step) => step.map((v, j) => (v - statistics.mean[j]) / statistics.deviation[j])),
    label: labels.indexOf(q.label as string),
  }));
  return classificationData(sequences, labels, width, file, options, {
    input: { kind: 'values', width },
    metadata: {
      task: 'classification',
      classes: labels,
      columns: [...read.columns],
      normalisation: statistics,
      idColumn: options.idColumn,
      ...(options.stepColumn === undefined ? {} : { stepColumn: options.stepColumn }),
    },
    notes: read.leftOut.length > 0 ? [`left out columns that hold no numbers: ${read.leftOut.join('; ')}`] : [],
  });
}

/** Features of a sequence for the logistic baseline: summaries of numbers, or token shares and the length. */
function sequenceFeatures(q: LabelledSequence, features: number, vocabulary: number): number[] {
  if (q.values !== undefined) return summaryFeatures(q.values, q.values.length / features, features);
  const tokens = q.tokens ?? [];
  const shares = new Array<number>(vocabulary).fill(0);
  for (let i = 0; i < tokens.length; i++) shares[tokens[i]] += 1 / tokens.length;
  return [...shares, tokens.length];
}

function classificationData(
  sequences: LabelledSequence[], labels: string[], features: number, file: string, options: ClassifyOptions,
  shape: { input: ModelDescription['input']; metadata: WeightMetadata; notes: string[] },
): Prepared {
  const order = sequences.map((_, i) => i);
  new Random(`${options.seed}:split`).shuffle(order);
  const testCount = Math.max(1, Math.round(sequences.length * options.testShare));
  const validationCount = Math.max(1, Math.round(sequences.length * options.validationShare));
  const testSet = order.slice(0, testCount).map((i) => sequences[i]);
  const validationSet = order.slice(testCount, testCount + validationCount).map((i) => sequences[i]);
  const trainSet = order.slice(testCount + validationCount).map((i) => sequences[i]);
  if (trainSet.length < 2) throw new CommandError(`${file}: ${sequences.length} sequences leave ${trainSet.length} to train on after ${validationCount} for validation and ${testCount} for the test; lower --validation or --test`);
  const validation = sequenceBatches(validationSet, { batchSize: 64, features });
  const test = sequenceBatches(testSet, { batchSize: 64, features });
  const labelsOf = (set: LabelledSequence[]) => set.map((q) => q.label ?? 0);
  // The majority class of the training sequences, and a logistic regression on summary features with its penalty
  // chosen on the validation sequences, both scored on the test sequences.
  const trainCounts = labels.map((_, k) => trainSet.filter((q) => q.label === k).length);
  const majorityClass = trainCounts.indexOf(Math.max(...trainCounts));
  const testLabels = labelsOf(testSet);
  const majority = classificationReport(testLabels, testLabels.map(() => majorityClass), labels.length);
  const vocabulary = shape.input.kind === 'embedding' ? shape.input.vocabulary : 0;
  const featuresOf = (set: LabelledSequence[]) => set.map((q) => sequenceFeatures(q, features, vocabulary));
  const logistic = chooseLogistic(featuresOf(trainSet), labelsOf(trainSet), featuresOf(validationSet), labelsOf(validationSet), labels.length);
  const regression = classificationReport(testLabels, featuresOf(testSet).map((row) => predictLogistic(logistic, row)), labels.length);
  const summaries = shape.input.kind === 'embedding' ? 'the share of each token and the length' : 'mean, deviation, minimum, maximum, last value and slope of each column';
  const partsLine = `parts of ${file}, a seeded shuffle (seed ${options.seed}): training ${trainSet.length} sequences; validation, for stopping and keeping weights, ${validationSet.length}; test, scored once at the end, ${testSet.length}`;
  return {
    task: 'classify',
    input: shape.input,
    outputWidth: labels.length,
    train: sequenceBatches(trainSet, { batchSize: options.batch, features, seed: options.seed }),
    validation,
    metadata: { ...shape.metadata, split: { kind: 'sequences', seed: options.seed, sequences: sequences.length, trainingSequences: trainSet.length, validationSequences: validationSet.length, testSequences: testSet.length } },
    notes: shape.notes,
    validationFigure: (model) => predictedClasses(model, validation, labels.length).accuracy,
    heldOut: (model) => {
      const scores = predictedClasses(model, test, labels.length);
      return {
        metric: 'accuracy',
        lowerIsBetter: false,
        what: `${testSet.length} test sequences of ${file}, drawn at random (seed ${options.seed}), used for neither training nor stopping`,
        model: { name: 'model', description: '', value: scores.accuracy, scores },
        baselines: [
          { name: 'majority class', description: `always ${JSON.stringify(labels[majorityClass])}, the most common class in training`, value: majority.accuracy, scores: majority },
          { name: 'logistic regression', description: `on ${summaries} of each sequence, L2 penalty ${logistic.penalty} chosen on the validation sequences`, value: regression.accuracy, scores: regression },
        ],
        names: labels,
        context: [partsLine],
      };
    },
  };
}

/** The class the model predicts for each sequence of a source, scored against the labels. */
function predictedClasses(model: SequenceModel, source: DataSource, classes: number): ClassificationReport {
  const predicted: number[] = [];
  const actual: number[] = [];
  forEachOutputBatch(model, source, (batch, { outputs }) => {
    if (batch.targets.kind !== 'classes') return;
    for (let r = 0; r < batch.batch; r++) {
      let best = 0;
      for (let k = 1; k < classes; k++) if (outputs[r * classes + k] > outputs[r * classes + best]) best = k;
      predicted.push(best);
      actual.push(batch.targets.classes[r]);
    }
  });
  return classificationReport(actual, predicted, classes);
}

/** Mean cross-entropy (nats) of a next-token model over a source: the trainer's own evaluation. */
export function averageCrossEntropy(model: SequenceModel, source: DataSource): number {
  return figuresOn(model, source).loss;
}
