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
  const { table, file, columns, targetIndexes, trainEnd, testStart, horizon, season, options, split, baselines } = input;
  const given = options.given ?? new Set<string>();
  checkWindowSettings(input);
  const window = given.has('window') ? options.window : Math.max(2, Math.min(season === null ? 24 : 2 * season, 64, Math.floor(trainEnd / 4)));
  const width = columns.length;
  // Targets read as logarithms where the season's swing grows with the level (see logTargets); the windows, the
  // hybrid and the targets all work on the logged series, and forecasts come back through exp.
  const logged = logTargets(input);
  const values = logged.some((l) => l) ? input.values.map((row) => row.map((v, j) => (logged[j] ? Math.log(v) : v))) : input.values;
  const targetCount = targetIndexes.length;
  // Every row up to the horizon at once (direct multi-output): one block of targets per row ahead, nearest first.
  const rowsAhead = Array.from({ length: horizon }, (_, i) => i + 1);
  const deviation = changeDeviations(values, trainEnd, width);
  // Missing values: each row's last observed value per column (the level a window ending there is read from), the
  // gaps' lengths, the columns read with a 0/1 "was missing" input, and the fill of a column never observed yet.
  const gappy = input.missing.some((n) => n > 0);
  const rule = options.missing === undefined || options.missing === 'refuse' ? 'interpolate' : options.missing;
  // One of many series flags the columns every series flags (so every series has the same inputs).
  const flagged = input.missing.flatMap((n, j) => (n > 0 || input.panel?.flagged.includes(table.header[columns[j]]) === true ? [j] : []));
  const fallback = columnStatistics(values.slice(0, trainEnd), width).mean;
  const lastSeen = Array.from({ length: width }, (_, j) => lastObserved(values.map((row) => row[j])));
  // What lies outside a window starting at row `first`, for fillColumn: column j's last reading before it (NaN for
  // none), that reading's place relative to the window, the column's fallback, and the season.
  const edgesOf = (j: number, first: number): number[] => {
    const before = first > 0 ? lastSeen[j][first - 1] : -1;
    return [before >= 0 ? values[before][j] : NaN, before - first, fallback[j], season ?? 0];
  };
  // The value a window ending at row t is read relative to, per column: the row's own, or, where it is missing, the
  // window's fill of its last row (what the runtime computes; the last value carried, moved with the season).
  const column = new Float64Array(window);
  const referenceOf = (j: number): Float64Array =>
    Float64Array.from(values, (row, t) => {
      if (!Number.isNaN(row[j])) return row[j];
      if (t < window - 1) return lastSeen[j][t] >= 0 ? values[lastSeen[j][t]][j] : fallback[j];
      const first = t - window + 1;
      for (let k = 0; k < window; k++) column[k] = values[first + k][j];
      fillColumn(column, 0, 1, window, edgesOf(j, first), 0, rule);
      return column[window - 1];
    });
  const reference = targetIndexes.map((j) => (input.missing[j] > 0 ? referenceOf(j) : null));
  const level = (t: number, k: number) => reference[k]?.[t] ?? values[t][targetIndexes[k]];
  const gaps = gapLengths(values, flagged);
  const gapLimit = options.gapLimit ?? Math.max(1, Math.floor(window / 2));
  const limit = rule === 'segments' ? 0 : gapLimit;
  // The hybrid: per target, the smoothing method (fitted on the training rows) whose forecasts of the validation
  // rows are best; the model reads its forecasts of the next row beside the values and forecasts the correction to
  // its forecast of each row ahead.
  const hybrid =
    options.hybrid === true
      ? targetIndexes.map((j) =>
          chooseSmoothing(
            values.map((row) => row[j]),
            trainEnd,
            testStart,
            rowsAhead,
            season,
          ),
        )
      : null;
  const base = (s: number, k: number, t: number) => (hybrid === null ? level(t, k) : hybrid[k].forecasts[s][t]);
  // Calendar inputs from the time column (where in the year, week or day each row falls), after the hybrid's.
  const positions = options.calendar === false || input.time === null ? [] : calendarFor(input.time.spacing);
  const times = input.time?.times ?? null;
  const calendarAt = width + (hybrid === null ? 0 : targetCount);
  const flagAt = calendarAt + 2 * positions.length;
  // One of many series with series inputs: a 0/1 input per series after the flags, this one's 1 in every row.
  const code = input.panel?.code;
  const codeAt = flagAt + flagged.length;
  const inputWidth = codeAt + (code?.count ?? 0);
  const targetDeviation = rowsAhead.flatMap((h, s) =>
    targetIndexes.map((j, k) => {
      let sum = 0;
      let n = 0;
      for (let t = 0; t + h < trainEnd; t++) {
        const d = values[t + h][j] - base(s, k, t);
        if (Number.isNaN(d)) continue;
        sum += d * d;
        n++;
      }
      const d = Math.sqrt(sum / Math.max(1, n));
      return d > 0 && Number.isFinite(d) ? d : 1;
    }),
  );
  const filled = new Float64Array(window * width);
  // The window ending at row t; its targets are the rows ahead before row `end` (0 past it: those are never scored).
  const example = (t: number, end: number): WindowExample => {
    const inputs = new Array<number>(window * inputWidth);
    const first = t - window + 1;
    for (let k = 0; k < window; k++) for (let j = 0; j < width; j++) filled[k * width + j] = values[first + k][j];
    for (const j of flagged) {
      fillColumn(filled, j, width, window, edgesOf(j, first), 0, rule);
    }
    const last = (window - 1) * width;
    for (let k = 0; k < window; k++) {
      const row = first + k;
      for (let j = 0; j < width; j++) inputs[k * inputWidth + j] = (filled[k * width + j] - filled[last + j]) / deviation[j];
      if (hybrid !== null)
        targetIndexes.forEach((j, i) => (inputs[k * inputWidth + width + i] = (hybrid[i].forecasts[0][row] - filled[last + j]) / deviation[j]));
      if (times !== null && positions.length > 0) calendarInputs(positions, times[row], inputs, k * inputWidth + calendarAt);
      flagged.forEach((j, i) => (inputs[k * inputWidth + flagAt + i] = Number.isNaN(values[row][j]) ? 1 : 0));
      if (code !== undefined) for (let i = 0; i < code.count; i++) inputs[k * inputWidth + codeAt + i] = i === code.index ? 1 : 0;
    }
    // A target past `end` or never observed weighs 0 (its value 0 is never read).
    const known = (h: number, j: number) => t + h < end && !Number.isNaN(values[t + h][j]);
    const target = rowsAhead.flatMap((h, s) =>
      targetIndexes.map((j, k) => (known(h, j) ? (values[t + h][j] - base(s, k, t)) / targetDeviation[s * targetCount + k] : 0)),
    );
    if (!gappy) return { values: inputs, target };
    return { values: inputs, target, targetWeights: rowsAhead.flatMap((h) => targetIndexes.map((j) => (known(h, j) ? 1 : 0))) };
  };
  // A training window holds no row of a gap longer than the limit, and some target of it was observed.
  const trainable = (t: number, end: number) => {
    if (!gappy) return true;
    for (let r = t - window + 1; r <= t; r++) if (gaps[r] > limit) return false;
    return rowsAhead.some((h) => t + h < end && targetIndexes.some((j) => !Number.isNaN(values[t + h][j])));
  };
  // Windows ending at rows [from, to) (none before a full window), targets before row `end`.
  const windowsEnding = (from: number, to: number, end: number, keep: (t: number, end: number) => boolean = () => true) => {
    const out: WindowExample[] = [];
    for (let t = Math.max(window - 1, from); t < to; t++) if (keep(t, end)) out.push(example(t, end));
    return out;
  };
  // Training and validation windows have every row ahead in their part (the farthest row ahead is in it).
  const train = windowsEnding(0, trainEnd - horizon, trainEnd, trainable);
  if (train.length < 2)
    fail(
      'invalid_option',
      '--window',
      `a window leaving at least 2 training windows ${horizon} row${horizon === 1 ? '' : 's'} ahead in the ${trainEnd} training rows of ${file}`,
      `${window} rows (${train.length} window${train.length === 1 ? '' : 's'})`,
    );
  const observed = (t: number, end: number) => !gappy || rowsAhead.some((h) => t + h < end && targetIndexes.some((j) => !Number.isNaN(values[t + h][j])));
  const validation = windowsEnding(trainEnd - horizon, testStart - horizon, testStart, observed);
  if (validation.length === 0)
    fail('invalid_option', '--window', `a window that fits before a validation row of ${file} (${testStart - trainEnd} validation rows)`, `${window} rows`);
  const batch = given.has('streams') ? options.streams : Math.max(1, Math.min(32, Math.floor(train.length / 4)));
  const batchesPerEpoch = Math.ceil(train.length / batch);
  const epochs = Math.min(300, Math.max(3, Math.ceil(2000 / batchesPerEpoch)));
  // Scoring reads every window with a row ahead in the part (the nearest at least).
  const validationFrom = Math.max(window - 1, trainEnd - horizon);
  const testFrom = Math.max(window - 1, testStart - horizon);
  const seasonWords = season === null ? 'no season found' : 2 * season === window ? `two seasons of ${season} rows` : `a season of ${season} rows`;
  const block = rowsAhead.length * targetCount;
  const combined = new Float64Array(block);
  /** forecasts[s][k][t]: the forecast of target k made at row t for row t + rowsAhead[s] (members' median). */
  const forecastsOf = (outputs: ArrayLike<number>, outputWidth: number, from: number): Float64Array[][] => {
    const forecasts = rowsAhead.map(() => targetIndexes.map(() => new Float64Array(values.length).fill(NaN)));
    const members = outputWidth / block;
    const scratch = new Float64Array(members);
    for (let i = 0, t = from; i + outputWidth <= outputs.length; i += outputWidth, t++) {
      medianOfMembers(outputs, i, members, block, combined, scratch);
      for (let s = 0; s < rowsAhead.length; s++) {
        for (let k = 0; k < targetCount; k++) {
          const made = base(s, k, t) + combined[s * targetCount + k] * targetDeviation[s * targetCount + k];
          forecasts[s][k][t] = logged[targetIndexes[k]] ? Math.exp(made) : made;
        }
      }
    }
    return forecasts;
  };
  /** Each row ahead's errors on the validation rows, from the windows whose row that far ahead is one of them. */
  const validationErrors = (outputs: ArrayLike<number>, outputWidth: number): number[][] => {
    const forecasts = forecastsOf(outputs, outputWidth, validationFrom);
    return rowsAhead.flatMap((h, s) =>
      targetIndexes.map((j, k) => {
        const errors: number[] = [];
        for (let t = Math.max(validationFrom, trainEnd - h); t + h < testStart; t++) errors.push(input.values[t + h][j] - forecasts[s][k][t]);
        return errors;
      }),
    );
  };
  // With several rows ahead, every baseline forecasts each of them too (fitted once).
  const several = rowsAhead.length > 1;
  const scoredSplit = several ? { ...split, rowsAhead } : split;
  const scoredFits = several ? forecastBaselines(scoredSplit, { season, spacing: input.time?.spacing ?? null }) : baselines;
  const scoredBaselines = scoredFits.scores;
  const ahead = several ? `, forecasting rows 1 to ${horizon} ahead at once` : '';
  return {
    inputWidth,
    outputWidth: block,
    examples: {
      kind: 'windows',
      train,
      validation,
      validationForecasts: windowsEnding(validationFrom, testStart - 1, testStart),
      test: windowsEnding(testFrom, values.length - 1, values.length),
      batch,
    },
    metadata: {
      ...input.metadata,
      ...(several ? { rowsAhead: 'all' } : {}),
      missing: { rule, gapLimit, flagged, fallback, markers: [...(options.missingMarkers ?? [])] } satisfies MissingRecord,
      normalisation: columnStatistics(values.slice(0, trainEnd), width),
      window: {
        rows: window,
        deviation,
        targetDeviation,
        ...(logged.some((l) => l) ? { log: logged } : {}),
        ...(hybrid === null ? {} : { hybrid: hybrid.map((h) => h.parameters) }),
        ...(positions.length === 0 ? {} : { calendar: positions }),
      },
    },
    notes: input.notes,
    chosen: {
      ...(given.has('epochs') ? {} : { epochs }),
      ...(given.has('patience') ? {} : { patience: 5 }),
      ...(given.has('hidden') ? {} : { hidden: 32 }),
      said: `sliding windows${hybrid === null ? '' : ` on top of ${hybrid.map((h) => h.name).join(', ')}`}${
        logged.some((l) => l)
          ? ` of the logarithm of ${targetIndexes
              .filter((j) => logged[j])
              .map((j) => table.header[columns[j]])
              .join(', ')}`
          : ''
      }: ${train.length} training examples of ${window} rows${given.has('window') ? '' : ` (${seasonWords})`}${ahead}, ${batch} per batch${given.has('epochs') ? '' : `, up to ${epochs} epochs`}${given.has('patience') ? '' : ', patience 5'}${given.has('hidden') ? '' : ', 32 hidden'}${positions.length === 0 ? '' : `, reading the ${positions.join(' and ')}`} (chosen from the data; flags override, --examples streams reads the series as streams)`,
    },
    validationFigure: (outputs, outputWidth) => {
      const forecasts = forecastsOf(outputs, outputWidth, validationFrom);
      const scored: number[] = [];
      for (let t = validationFrom; t < testStart - horizon; t++) scored.push(t);
      const errors = scoreForecaster({ ...scoredSplit, positions: scored }, (at, k, h) => forecasts[h - 1][k][at], baselines.scales).overall;
      return targetCount > 1 || input.panel !== undefined ? (errors.mase ?? NaN) : errors.mae;
    },
    heldOut: (outputs, outputWidth, intervals) => {
      const forecasts = forecastsOf(outputs, outputWidth, testFrom);
      const forecast = (at: number, k: number, h: number) => forecasts[h - 1][k][at];
      const scored = scoreForecaster(scoredSplit, forecast, baselines.scales);
      const report = forecastReport({
        what: input.what,
        model: scored,
        baselines: scoredBaselines,
        names: targetIndexes.map((j) => table.header[columns[j]]),
        context: input.context,
      });
      if (intervals === undefined) return report;
      return withIntervals(
        report,
        scoreIntervals(scoredSplit, forecast, intervals, baselines.scales),
        baselineIntervals(scoredSplit, scoredFits, intervals.level, trainEnd, intervals.baselines),
      );
    },
    intervals: (outputs, outputWidth, level) => validationErrors(outputs, outputWidth).map((errors) => conformalHalfWidth(errors, level)),
    validationErrors,
    scales: baselines.scales,
    baselineErrors: () => baselineErrors(scoredSplit, scoredFits, trainEnd).map((errors, b) => ({ name: scoredFits.scores[b].name, errors })),
  };
}
