/**
 * A series as long streams (prepare-series.ts chooses them past SLIDING_ROWS training rows, or for a transform):
 * every column normalised by its training rows' mean and deviation, a transform's changes as the targets, missing
 * inputs carried with a 0/1 flag, missing targets weighed 0; scored beside the baselines, with conformal intervals.
 */
import { fail } from '@weft/core';
import { medianOfMembers } from '@weft/cells';
import { scoreForecaster } from './baselines.js';
import { baselineIntervals, conformalHalfWidth, scoreIntervals } from './intervals.js';
import { columnStatistics, fieldPath } from './table.js';
import type { MissingRecord } from './missing.js';
import { forecastReport, withIntervals } from './verdict.js';
import type { PreparedSeries, SeriesContext } from './series-types.js';

/** A stream's target transforms: the change a target takes, and back. */
const TRANSFORMS = {
  differences: { forward: (ahead: number, y: number) => ahead - y, inverse: (change: number, y: number) => y + change },
  'log-returns': { forward: (ahead: number, y: number) => Math.log(ahead / y), inverse: (change: number, y: number) => y * Math.exp(change) },
} as const;

/** Long streams: every column normalised by its training rows' mean and deviation; a transform's changes as targets. */
export function streamsOf(input: Omit<SeriesContext, 'season'>): PreparedSeries {
  const { table, values, columns, targetIndexes, trainEnd, testStart, horizon, options, split, baselines } = input;
  const rows = values.length;
  const { mean, deviation } = columnStatistics(values.slice(0, trainEnd), columns.length);
  // Missing inputs carry the last value (the training mean before the first), each column with holes adding a 0/1
  // "was missing" input, as the runtime does row by row.
  const flagged = input.missing.flatMap((n, j) => (n > 0 ? [j] : []));
  const features = columns.length + flagged.length;
  const normalised = normalisedRows(values, mean, deviation, flagged);
  // A missing target weighs 0: the targets are given with a weight each (0 stands in for the missing value).
  const targetHoles = targetIndexes.some((j) => input.missing[j] > 0);
  const transform = options.transform ?? 'none';
  const change = transform === 'none' ? null : targetChanges(input, transform);
  const targetCount = targetIndexes.length;
  const forecastsOf = streamForecasts(input, { mean, deviation }, change === null ? null : { ...change, kind: transform as TransformKind });
  const names = targetIndexes.map((j) => table.header[columns[j]]);
  return {
    inputWidth: features,
    outputWidth: targetCount,
    examples: {
      kind: 'streams',
      values: normalised,
      features,
      targets:
        change !== null
          ? { values: change.rows.flat(), width: targetCount }
          : targetHoles
            ? { values: values.flatMap((row) => targetIndexes.map((j) => (Number.isNaN(row[j]) ? 0 : (row[j] - mean[j]) / deviation[j]))), width: targetCount }
            : { columns: targetIndexes },
      ...(targetHoles ? { targetWeights: values.flatMap((row) => targetIndexes.map((j) => (Number.isNaN(row[j]) ? 0 : 1))) } : {}),
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
      missing: { rule: 'carry', gapLimit: rows, flagged, fallback: mean, markers: [...(options.missingMarkers ?? [])] } satisfies MissingRecord,
      normalisation: { mean, deviation },
      ...(change === null ? {} : { targetTransform: { kind: transform, mean: change.mean, deviation: change.deviation } }),
    },
    notes: input.notes,
    validationFigure: (outputs, width) => {
      const forecasts = forecastsOf(outputs, width, testStart);
      const scored: number[] = [];
      for (let t = trainEnd - horizon; t < testStart - horizon; t++) scored.push(t);
      const errors = scoreForecaster({ ...split, positions: scored }, (at, k) => forecasts[k][at], baselines.scales).overall;
      return targetCount > 1 ? (errors.mase ?? NaN) : errors.mae;
    },
    heldOut: (outputs, width, intervals) => {
      const forecasts = forecastsOf(outputs, width, rows);
      const scored = scoreForecaster(split, (at, k) => forecasts[k][at], baselines.scales);
      const report = forecastReport({ what: input.what, model: scored, baselines: baselines.scores, names, context: input.context });
      if (intervals === undefined) return report;
      return withIntervals(
        report,
        scoreIntervals(split, (at, k) => forecasts[k][at], intervals, baselines.scales),
        baselineIntervals(split, baselines, intervals.level, trainEnd),
      );
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

/** A target transform's kind. */
type TransformKind = keyof typeof TRANSFORMS;

/**
 * Every row normalised: missing inputs carry the last value (the training mean before the first), and each column
 * with holes adds a 0/1 "was missing" input, as the runtime does row by row.
 */
function normalisedRows(values: readonly (readonly number[])[], mean: readonly number[], deviation: readonly number[], flagged: readonly number[]): number[] {
  const carried = [...mean];
  return values.flatMap((row) => [
    ...row.map((v, j) => {
      if (!Number.isNaN(v)) carried[j] = v;
      return (carried[j] - mean[j]) / deviation[j];
    }),
    ...flagged.map((j) => (Number.isNaN(row[j]) ? 1 : 0)),
  ]);
}

/**
 * With a transform, the model learns the change over `horizon` rows (row s holds the change from s − h to s),
 * normalised by the training rows' changes; log returns need positive values.
 */
function targetChanges(input: Omit<SeriesContext, 'season'>, transform: TransformKind): { mean: number[]; deviation: number[]; rows: number[][] } {
  const { table, values, columns, targetIndexes, trainEnd, horizon } = input;
  if (transform === 'log-returns') {
    values.forEach((row, r) =>
      targetIndexes.forEach((j) => {
        if (!(row[j] > 0))
          fail(
            'bad_data',
            fieldPath(table, r, columns[j]),
            `a number > 0 in column ${JSON.stringify(table.header[columns[j]])} (log returns need positive values)`,
            String(row[j]),
          );
      }),
    );
  }
  const f = TRANSFORMS[transform].forward;
  const raw = values.map((row, s) => targetIndexes.map((j) => (s < horizon ? 0 : f(row[j], values[s - horizon][j]))));
  const statistics = columnStatistics(raw.slice(horizon, trainEnd), targetIndexes.length);
  return { ...statistics, rows: raw.map((row) => row.map((v, k) => (v - statistics.mean[k]) / statistics.deviation[k])) };
}

/** The model's forecast, in real units, made at each row of a reading from the first row (forecasts[k][t]). */
function streamForecasts(
  input: Omit<SeriesContext, 'season'>,
  scale: { mean: readonly number[]; deviation: readonly number[] },
  change: { mean: readonly number[]; deviation: readonly number[]; kind: TransformKind } | null,
): (outputs: ArrayLike<number>, width: number, end: number) => Float64Array[] {
  const { values, targetIndexes } = input;
  const { mean, deviation } = scale;
  const targetCount = targetIndexes.length;
  const combined = new Float64Array(targetCount);
  return (outputs, width, end) => {
    const forecasts = targetIndexes.map(() => new Float64Array(end));
    // Members stacked into one model give one block of targets each: their median is the forecast.
    const members = width / targetCount;
    const scratch = new Float64Array(members);
    for (let i = 0, t = 0; i + width <= outputs.length; i += width, t++) {
      medianOfMembers(outputs, i, members, targetCount, combined, scratch);
      targetIndexes.forEach((j, k) => {
        forecasts[k][t] =
          change === null
            ? combined[k] * deviation[j] + mean[j]
            : TRANSFORMS[change.kind].inverse(combined[k] * change.deviation[k] + change.mean[k], values[t][j]);
      });
    }
    return forecasts;
  };
}
