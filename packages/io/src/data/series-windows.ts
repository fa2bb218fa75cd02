/**
 * Sliding windows: every row t of the training part whose rows ahead are training rows ends one example, the
 * `window` rows up to t, each value taken relative to row t and divided by its column's deviation of one-row
 * changes; the example's targets are the change of each target from row t to each row ahead (1 to the horizon),
 * each divided by that change's deviation (recorded as metadata `window`; createRowForecaster applies it). A hybrid
 * reads an exponential smoothing method's forecasts beside the values and forecasts the correction to them (after
 * Smyl 2020, simplified). Defaults from the data: a window of two seasons (24 rows without one), at most 64 rows and
 * a quarter of the training rows; 32 windows per batch; enough epochs for about 2,000 updates (3 to 300); patience
 * 5; 32 hidden units.
 *
 * Missing values (NaN): each window is filled from its own rows and those before it (missing.ts, the runtime's rule
 * too), a column with holes adds a 0/1 "was missing" input per row, a missing target weighs 0 in the loss (and is
 * scored by no one), and no training window holds a row of a gap longer than the gap limit (half the window by
 * default; none at all with the rule `segments`), so long gaps cut the series into segments.
 *
 * Why one file of this length: the examples, the forecasts read back from the model's outputs and the metadata the
 * runtime applies all use the same choices made from the data (window, logarithms, deviations, hybrid, calendar,
 * flags); one class (WindowMaker) makes them once and every part reads them there.
 */
import { fail } from '@weft/core';
import { medianOfMembers } from '@weft/cells';
import { forecastBaselines, scoreForecaster } from './baselines.js';
import { calendarFor, calendarInputs } from './calendar.js';
import type { PreparedSeries, WindowExample } from './series-types.js';
import { baselineErrors, baselineIntervals, conformalHalfWidth, scoreIntervals } from './intervals.js';
import { fillColumn, gapLengths, lastObserved } from './missing.js';
import type { MissingRecord } from './missing.js';
import { columnStatistics } from './table.js';
import { changeDeviations, checkWindowSettings, chooseSmoothing, logTargets } from './window-choices.js';
import { forecastReport, withIntervals } from './verdict.js';
import type { SeriesContext } from './series-types.js';

export type { SeriesContext } from './series-types.js';

/** Sliding windows over a series (see the file's comment). */
export function slidingWindows(input: SeriesContext): PreparedSeries {
  checkWindowSettings(input);
  const w = new WindowMaker(input);
  const { file, trainEnd, testStart, horizon, options } = input;
  // Training and validation windows have every row ahead in their part (the farthest row ahead is in it).
  const train = w.windowsEnding(0, trainEnd - horizon, trainEnd, (t, end) => w.trainable(t, end));
  if (train.length < 2)
    fail(
      'invalid_option',
      '--window',
      `a window leaving at least 2 training windows ${horizon} row${horizon === 1 ? '' : 's'} ahead in the ${trainEnd} training rows of ${file}`,
      `${w.window} rows (${train.length} window${train.length === 1 ? '' : 's'})`,
    );
  const validation = w.windowsEnding(trainEnd - horizon, testStart - horizon, testStart, (t, end) => w.observed(t, end));
  if (validation.length === 0)
    fail('invalid_option', '--window', `a window that fits before a validation row of ${file} (${testStart - trainEnd} validation rows)`, `${w.window} rows`);
  const batch = w.given.has('streams') ? options.streams : Math.max(1, Math.min(32, Math.floor(train.length / 4)));
  const epochs = Math.min(300, Math.max(3, Math.ceil(2000 / Math.ceil(train.length / batch))));
  return {
    inputWidth: w.inputWidth,
    outputWidth: w.block,
    examples: {
      kind: 'windows',
      train,
      validation,
      validationForecasts: w.windowsEnding(w.validationFrom, testStart - 1, testStart),
      test: w.windowsEnding(w.testFrom, w.values.length - 1, w.values.length),
      batch,
    },
    metadata: w.metadata(),
    notes: input.notes,
    chosen: {
      ...(w.given.has('epochs') ? {} : { epochs }),
      ...(w.given.has('patience') ? {} : { patience: 5 }),
      ...(w.given.has('hidden') ? {} : { hidden: 32 }),
      said: w.said(train.length, batch, epochs),
    },
    validationFigure: (outputs, outputWidth) => w.validationFigure(outputs, outputWidth),
    heldOut: (outputs, outputWidth, intervals) => w.heldOut(outputs, outputWidth, intervals),
    intervals: (outputs, outputWidth, level) => w.validationErrors(outputs, outputWidth).map((errors) => conformalHalfWidth(errors, level)),
    validationErrors: (outputs, outputWidth) => w.validationErrors(outputs, outputWidth),
    scales: input.baselines.scales,
    baselineErrors: () => baselineErrors(w.scoredSplit, w.scoredFits, trainEnd).map((errors, b) => ({ name: w.scoredFits.scores[b].name, errors })),
  };
}

/**
 * One series' windows: the choices made from the data (window length, logarithms, deviations, the hybrid, calendar,
 * missing-value flags), the examples ending at each row, and the forecasts read back from the model's outputs.
 */
class WindowMaker {
  readonly given: ReadonlySet<string>;
  readonly window: number;
  /** The values, with the logged targets' logarithms. */
  readonly values: readonly (readonly number[])[];
  /** Every row up to the horizon at once (direct multi-output): one block of targets per row ahead, nearest first. */
  readonly rowsAhead: readonly number[];
  /** Outputs per member: one target block per row ahead. */
  readonly block: number;
  readonly inputWidth: number;
  /** Scoring reads every window with a row ahead in the part (the nearest at least). */
  readonly validationFrom: number;
  readonly testFrom: number;
  /** With several rows ahead, every baseline forecasts each of them too (fitted once). */
  readonly scoredSplit: SeriesContext['split'];
  readonly scoredFits: SeriesContext['baselines'];
  private readonly width: number;
  private readonly logged: readonly boolean[];
  private readonly deviation: Float64Array | number[];
  private readonly gappy: boolean;
  private readonly rule: MissingRecord['rule'];
  private readonly flagged: readonly number[];
  private readonly fallback: readonly number[];
  private readonly lastSeen: readonly Int32Array[];
  /** Per target, the value a window ending at each row is read relative to where the target has holes, else null. */
  private readonly reference: readonly (Float64Array | null)[];
  private readonly gaps: ArrayLike<number>;
  private readonly gapLimit: number;
  private readonly limit: number;
  private readonly hybrid: ReturnType<typeof chooseSmoothing>[] | null;
  private readonly positions: ReturnType<typeof calendarFor>;
  private readonly calendarAt: number;
  private readonly flagAt: number;
  private readonly codeAt: number;
  private readonly targetDeviation: number[];
  /** Working memory: one window's values and one column's. */
  private readonly filled: Float64Array;
  private readonly column: Float64Array;
  private readonly combined: Float64Array;

  constructor(private readonly input: SeriesContext) {
    const { columns, targetIndexes, trainEnd, testStart, horizon, season, options } = input;
    this.given = options.given ?? new Set<string>();
    this.window = this.given.has('window') ? options.window : Math.max(2, Math.min(season === null ? 24 : 2 * season, 64, Math.floor(trainEnd / 4)));
    const width = columns.length;
    this.width = width;
    // Targets read as logarithms where the season's swing grows with the level (see logTargets); the windows, the
    // hybrid and the targets all work on the logged series, and forecasts come back through exp.
    this.logged = logTargets(input);
    const values = this.logged.some((l) => l) ? input.values.map((row) => row.map((v, j) => (this.logged[j] ? Math.log(v) : v))) : input.values;
    this.values = values;
    this.rowsAhead = Array.from({ length: horizon }, (_, i) => i + 1);
    this.block = this.rowsAhead.length * targetIndexes.length;
    this.deviation = changeDeviations(values, trainEnd, width);
    // Missing values: each row's last observed value per column (the level a window ending there is read from), the
    // gaps' lengths, the columns read with a 0/1 "was missing" input, and the fill of a column never observed yet.
    this.gappy = input.missing.some((n) => n > 0);
    this.rule = options.missing === undefined || options.missing === 'refuse' ? 'interpolate' : options.missing;
    // One of many series flags the columns every series flags (so every series has the same inputs).
    this.flagged = input.missing.flatMap((n, j) => (n > 0 || input.panel?.flagged.includes(input.table.header[columns[j]]) === true ? [j] : []));
    this.fallback = columnStatistics(values.slice(0, trainEnd), width).mean;
    this.lastSeen = Array.from({ length: width }, (_, j) => lastObserved(values.map((row) => row[j])));
    this.column = new Float64Array(this.window);
    this.reference = targetIndexes.map((j) => (input.missing[j] > 0 ? this.referenceOf(j) : null));
    this.gaps = gapLengths(values, this.flagged);
    this.gapLimit = options.gapLimit ?? Math.max(1, Math.floor(this.window / 2));
    this.limit = this.rule === 'segments' ? 0 : this.gapLimit;
    // The hybrid: per target, the smoothing method (fitted on the training rows) whose forecasts of the validation
    // rows are best; the model reads its forecasts of the next row beside the values and forecasts the correction to
    // its forecast of each row ahead.
    this.hybrid =
      options.hybrid === true
        ? targetIndexes.map((j) =>
            chooseSmoothing(
              values.map((row) => row[j]),
              trainEnd,
              testStart,
              this.rowsAhead,
              season,
            ),
          )
        : null;
    // Calendar inputs from the time column (where in the year, week or day each row falls), after the hybrid's; then
    // the flags; then, one of many series with series inputs, a 0/1 input per series, this one's 1 in every row.
    this.positions = options.calendar === false || input.time === null ? [] : calendarFor(input.time.spacing);
    this.calendarAt = width + (this.hybrid === null ? 0 : targetIndexes.length);
    this.flagAt = this.calendarAt + 2 * this.positions.length;
    this.codeAt = this.flagAt + this.flagged.length;
    this.inputWidth = this.codeAt + (input.panel?.code?.count ?? 0);
    this.targetDeviation = this.targetDeviations();
    this.filled = new Float64Array(this.window * width);
    this.combined = new Float64Array(this.block);
    this.validationFrom = Math.max(this.window - 1, trainEnd - horizon);
    this.testFrom = Math.max(this.window - 1, testStart - horizon);
    const several = this.rowsAhead.length > 1;
    this.scoredSplit = several ? { ...input.split, rowsAhead: this.rowsAhead } : input.split;
    this.scoredFits = several ? forecastBaselines(this.scoredSplit, { season, spacing: input.time?.spacing ?? null }) : input.baselines;
  }

  /**
   * What lies outside a window starting at row `first`, for fillColumn: column j's last reading before it (NaN for
   * none), that reading's place relative to the window, the column's fallback, and the season.
   */
  private edgesOf(j: number, first: number): number[] {
    const before = first > 0 ? this.lastSeen[j][first - 1] : -1;
    return [before >= 0 ? this.values[before][j] : Number.NaN, before - first, this.fallback[j], this.input.season ?? 0];
  }

  /**
   * The value a window ending at row t is read relative to, per column: the row's own, or, where it is missing, the
   * window's fill of its last row (what the runtime computes; the last value carried, moved with the season).
   */
  private referenceOf(j: number): Float64Array {
    const { values, window, column, lastSeen, fallback } = this;
    return Float64Array.from(values, (row, t) => {
      if (!Number.isNaN(row[j])) return row[j];
      if (t < window - 1) return lastSeen[j][t] >= 0 ? values[lastSeen[j][t]][j] : fallback[j];
      const first = t - window + 1;
      for (let k = 0; k < window; k++) column[k] = values[first + k][j];
      fillColumn(column, 0, 1, window, this.edgesOf(j, first), 0, this.rule);
      return column[window - 1];
    });
  }

  /** Target k's level at row t (the reference where the row's value is missing). */
  private level(t: number, k: number): number {
    return this.reference[k]?.[t] ?? this.values[t][this.input.targetIndexes[k]];
  }

  /** What target k's change is measured from, rowsAhead[s] rows after row t: its level, or the hybrid's forecast. */
  private base(s: number, k: number, t: number): number {
    return this.hybrid === null ? this.level(t, k) : this.hybrid[k].forecasts[s][t];
  }

  /** Each target's deviation of its change from the base, per row ahead, over the training rows. */
  private targetDeviations(): number[] {
    const { values, rowsAhead } = this;
    const { targetIndexes, trainEnd } = this.input;
    return rowsAhead.flatMap((h, s) =>
      targetIndexes.map((j, k) => {
        let sum = 0;
        let n = 0;
        for (let t = 0; t + h < trainEnd; t++) {
          const d = values[t + h][j] - this.base(s, k, t);
          if (Number.isNaN(d)) continue;
          sum += d * d;
          n++;
        }
        const d = Math.sqrt(sum / Math.max(1, n));
        return d > 0 && Number.isFinite(d) ? d : 1;
      }),
    );
  }

  /** The window ending at row t; its targets are the rows ahead before row `end` (0 past it: those are never scored). */
  private example(t: number, end: number): WindowExample {
    const { values, window, width, inputWidth, filled, flagged, deviation, hybrid, positions, rowsAhead } = this;
    const { targetIndexes } = this.input;
    const times = this.input.time?.times ?? null;
    const code = this.input.panel?.code;
    const inputs = new Array<number>(window * inputWidth);
    const first = t - window + 1;
    for (let k = 0; k < window; k++) for (let j = 0; j < width; j++) filled[k * width + j] = values[first + k][j];
    for (const j of flagged) fillColumn(filled, j, width, window, this.edgesOf(j, first), 0, this.rule);
    const last = (window - 1) * width;
    for (let k = 0; k < window; k++) {
      const row = first + k;
      for (let j = 0; j < width; j++) inputs[k * inputWidth + j] = (filled[k * width + j] - filled[last + j]) / deviation[j];
      if (hybrid !== null)
        targetIndexes.forEach((j, i) => (inputs[k * inputWidth + width + i] = (hybrid[i].forecasts[0][row] - filled[last + j]) / deviation[j]));
      if (times !== null && positions.length > 0) calendarInputs(positions, times[row], inputs, k * inputWidth + this.calendarAt);
      flagged.forEach((j, i) => (inputs[k * inputWidth + this.flagAt + i] = Number.isNaN(values[row][j]) ? 1 : 0));
      if (code !== undefined) for (let i = 0; i < code.count; i++) inputs[k * inputWidth + this.codeAt + i] = i === code.index ? 1 : 0;
    }
    // A target past `end` or never observed weighs 0 (its value 0 is never read).
    const known = (h: number, j: number) => t + h < end && !Number.isNaN(values[t + h][j]);
    const target = rowsAhead.flatMap((h, s) =>
      targetIndexes.map((j, k) => (known(h, j) ? (values[t + h][j] - this.base(s, k, t)) / this.targetDeviation[s * targetIndexes.length + k] : 0)),
    );
    if (!this.gappy) return { values: inputs, target };
    return { values: inputs, target, targetWeights: rowsAhead.flatMap((h) => targetIndexes.map((j) => (known(h, j) ? 1 : 0))) };
  }

  /** Some target of the window ending at row t is observed before row `end` (always, without holes). */
  observed(t: number, end: number): boolean {
    const { targetIndexes } = this.input;
    return !this.gappy || this.rowsAhead.some((h) => t + h < end && targetIndexes.some((j) => !Number.isNaN(this.values[t + h][j])));
  }

  /** A training window holds no row of a gap longer than the limit, and some target of it was observed. */
  trainable(t: number, end: number): boolean {
    if (!this.gappy) return true;
    for (let r = t - this.window + 1; r <= t; r++) if (this.gaps[r] > this.limit) return false;
    return this.observed(t, end);
  }

  /** Windows ending at rows [from, to) (none before a full window), targets before row `end`. */
  windowsEnding(from: number, to: number, end: number, keep: (t: number, end: number) => boolean = () => true): WindowExample[] {
    const out: WindowExample[] = [];
    for (let t = Math.max(this.window - 1, from); t < to; t++) if (keep(t, end)) out.push(this.example(t, end));
    return out;
  }

  /** forecasts[s][k][t]: the forecast of target k made at row t for row t + rowsAhead[s] (members' median). */
  forecastsOf(outputs: ArrayLike<number>, outputWidth: number, from: number): Float64Array[][] {
    const { rowsAhead, block, combined, logged, targetDeviation } = this;
    const { targetIndexes } = this.input;
    const targetCount = targetIndexes.length;
    const forecasts = rowsAhead.map(() => targetIndexes.map(() => new Float64Array(this.values.length).fill(Number.NaN)));
    const members = outputWidth / block;
    const scratch = new Float64Array(members);
    for (let i = 0, t = from; i + outputWidth <= outputs.length; i += outputWidth, t++) {
      medianOfMembers(outputs, i, members, block, combined, scratch);
      for (let s = 0; s < rowsAhead.length; s++) {
        for (let k = 0; k < targetCount; k++) {
          const made = this.base(s, k, t) + combined[s * targetCount + k] * targetDeviation[s * targetCount + k];
          forecasts[s][k][t] = logged[targetIndexes[k]] ? Math.exp(made) : made;
        }
      }
    }
    return forecasts;
  }

  /** Each row ahead's errors on the validation rows, from the windows whose row that far ahead is one of them. */
  validationErrors(outputs: ArrayLike<number>, outputWidth: number): number[][] {
    const { trainEnd, testStart, targetIndexes } = this.input;
    const forecasts = this.forecastsOf(outputs, outputWidth, this.validationFrom);
    return this.rowsAhead.flatMap((h, s) =>
      targetIndexes.map((j, k) => {
        const errors: number[] = [];
        for (let t = Math.max(this.validationFrom, trainEnd - h); t + h < testStart; t++) errors.push(this.input.values[t + h][j] - forecasts[s][k][t]);
        return errors;
      }),
    );
  }

  /** The validation figure: MASE over the targets (or for one series of many), else MAE. */
  validationFigure(outputs: ArrayLike<number>, outputWidth: number): number {
    const { testStart, horizon, targetIndexes, baselines } = this.input;
    const forecasts = this.forecastsOf(outputs, outputWidth, this.validationFrom);
    const scored: number[] = [];
    for (let t = this.validationFrom; t < testStart - horizon; t++) scored.push(t);
    const errors = scoreForecaster({ ...this.scoredSplit, positions: scored }, (at, k, h) => forecasts[h - 1][k][at], baselines.scales).overall;
    return targetIndexes.length > 1 || this.input.panel !== undefined ? (errors.mase ?? Number.NaN) : errors.mae;
  }

  /** The held-out report of the test rows, with the intervals' coverage when given. */
  heldOut(outputs: ArrayLike<number>, outputWidth: number, intervals: Parameters<PreparedSeries['heldOut']>[2]): ReturnType<PreparedSeries['heldOut']> {
    const { table, columns, targetIndexes, baselines, trainEnd } = this.input;
    const forecasts = this.forecastsOf(outputs, outputWidth, this.testFrom);
    const forecast = (at: number, k: number, h: number) => forecasts[h - 1][k][at];
    const scored = scoreForecaster(this.scoredSplit, forecast, baselines.scales);
    const report = forecastReport({
      what: this.input.what,
      model: scored,
      baselines: this.scoredFits.scores,
      names: targetIndexes.map((j) => table.header[columns[j]]),
      context: this.input.context,
    });
    if (intervals === undefined) return report;
    return withIntervals(
      report,
      scoreIntervals(this.scoredSplit, forecast, intervals, baselines.scales),
      baselineIntervals(this.scoredSplit, this.scoredFits, intervals.level, trainEnd, intervals.baselines),
    );
  }

  /** The weight file's metadata: the series' with the windows' own record. */
  metadata(): PreparedSeries['metadata'] {
    const { input, hybrid, positions, logged } = this;
    const options = input.options;
    return {
      ...input.metadata,
      ...(this.rowsAhead.length > 1 ? { rowsAhead: 'all' } : {}),
      missing: {
        rule: this.rule,
        gapLimit: this.gapLimit,
        flagged: this.flagged,
        fallback: this.fallback,
        markers: [...(options.missingMarkers ?? [])],
      } satisfies MissingRecord,
      normalisation: columnStatistics(this.values.slice(0, input.trainEnd), this.width),
      window: {
        rows: this.window,
        deviation: this.deviation,
        targetDeviation: this.targetDeviation,
        ...(logged.some((l) => l) ? { log: logged } : {}),
        ...(hybrid === null ? {} : { hybrid: hybrid.map((h) => h.parameters) }),
        ...(positions.length === 0 ? {} : { calendar: positions }),
      },
    };
  }

  /** The line that says what was chosen. */
  said(trainCount: number, batch: number, epochs: number): string {
    const { given, hybrid, logged, window, positions } = this;
    const { season, table, columns, targetIndexes, horizon } = this.input;
    const seasonWords = season === null ? 'no season found' : 2 * season === window ? `two seasons of ${season} rows` : `a season of ${season} rows`;
    const ahead = this.rowsAhead.length > 1 ? `, forecasting rows 1 to ${horizon} ahead at once` : '';
    const logs = logged.some((l) => l)
      ? ` of the logarithm of ${targetIndexes
          .filter((j) => logged[j])
          .map((j) => table.header[columns[j]])
          .join(', ')}`
      : '';
    return `sliding windows${hybrid === null ? '' : ` on top of ${hybrid.map((h) => h.name).join(', ')}`}${logs}: ${trainCount} training examples of ${window} rows${given.has('window') ? '' : ` (${seasonWords})`}${ahead}, ${batch} per batch${given.has('epochs') ? '' : `, up to ${epochs} epochs`}${given.has('patience') ? '' : ', patience 5'}${given.has('hidden') ? '' : ', 32 hidden'}${positions.length === 0 ? '' : `, reading the ${positions.join(' and ')}`} (chosen from the data; flags override, --examples streams reads the series as streams)`;
  }
}
