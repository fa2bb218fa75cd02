/**
 * The row forecaster of a model trained on streams (forecaster.ts has the other form): it steps once per row, its
 * state carried; the translator's normalisation is applied to each row and undone on each forecast, a target
 * transform's change added to the target's last level, and a missing reading carried from the column's last value
 * with a 0/1 flag where the model reads one.
 */
import { fail } from '@weft/core';
import { medianOfMembers } from '@weft/cells';
import type { Streams } from './runtime/runtime.js';
import { forecastMissing } from './forecast-metadata.js';
import type { forecastIntervals } from './forecast-metadata.js';
import { missingTest } from './data/missing.js';
import { valueAt } from './forecast-row.js';
import type { RowForecaster } from './forecast-row.js';

/** What both forms of row forecaster share, made once by createRowForecaster. */
export interface ForecasterParts {
  /** The weight file's metadata. */
  readonly metadata: Readonly<Record<string, unknown>>;
  /** The columns read, in the model's order. */
  readonly inputNames: readonly string[];
  /** The targets forecast. */
  readonly outputNames: readonly string[];
  /** The rows ahead each forecast block stands for. */
  readonly rowsAhead: readonly number[];
  /** Members whose forecasts are combined by their median. */
  readonly members: number;
  /** The recorded intervals, if any. */
  readonly intervals: ReturnType<typeof forecastIntervals>;
  /** The runtime's one stream. */
  readonly streams: Streams;
  /** The runtime's outputs of a step. */
  readonly output: Float32Array;
  /** The members' median, per forecast. */
  readonly combined: Float64Array;
  /** Working memory of the median. */
  readonly scratch: Float64Array;
  /** The forecasts of the last row, for `next`. */
  readonly farthest: Float64Array;
  /** The farthest row's forecasts by target name. */
  readonly named: () => Record<string, number>;
  /** Refuses an output array too short for the forecasts. */
  readonly checkOut: (out: { readonly length: number }) => void;
}

/** The row forecaster of a model trained on streams. */
export function streamRowForecaster(parts: ForecasterParts): RowForecaster {
  const { metadata, inputNames, outputNames, rowsAhead, members, intervals, streams, output, combined, scratch, farthest, named, checkOut } = parts;
  const width = inputNames.length;
  const targetCount = outputNames.length;
  const block = rowsAhead.length * targetCount;
  if (rowsAhead.length !== 1)
    fail('bad_weight_file', 'metadata.rowsAhead', 'no entry for a model trained on streams (every row up to the horizon needs metadata.window)', '"all"');
  const normalisation = metadata.normalisation as { mean: readonly number[]; deviation: readonly number[] };
  const transform = metadata.targetTransform as { kind: 'differences' | 'log-returns'; mean: readonly number[]; deviation: readonly number[] } | undefined;
  const targets = outputNames.map((t) => inputNames.indexOf(t));
  // Missing readings (a model that records a rule): each carries the column's last value (its fallback before
  // any), with a 0/1 flag input per column that had holes in training.
  const missing = forecastMissing(metadata, width);
  const isMissing = missing === null ? null : missingTest(missing.markers);
  const flagged = missing?.flagged ?? [];
  const carried = Float64Array.from(missing?.fallback ?? normalisation.mean);
  const input = new Float32Array(width + flagged.length);
  const rowValues = new Float64Array(width);
  const advance = (values: ArrayLike<number>, out: { [index: number]: number; readonly length: number }, where: string): boolean => {
    checkOut(out);
    for (let j = 0; j < width; j++) {
      const v = values[j];
      if (!Number.isFinite(v) && !(missing !== null && Number.isNaN(v)))
        fail('bad_data', `${where}.${inputNames[j]}`, missing === null ? 'a finite number' : 'a finite number, or NaN for a missing reading', String(v));
      if (!Number.isNaN(v)) carried[j] = v;
      input[j] = (carried[j] - normalisation.mean[j]) / normalisation.deviation[j];
    }
    for (let i = 0; i < flagged.length; i++) input[width + i] = Number.isNaN(values[flagged[i]]) ? 1 : 0;
    streams.step(input, output);
    medianOfMembers(output, 0, members, block, combined, scratch);
    for (let k = 0; k < targetCount; k++) {
      const j = targets[k];
      if (transform === undefined) {
        out[k] = combined[k] * normalisation.deviation[j] + normalisation.mean[j];
      } else {
        const level = carried[j];
        const change = combined[k] * transform.deviation[k] + transform.mean[k];
        out[k] = transform.kind === 'log-returns' ? level * Math.exp(change) : level + change;
      }
    }
    return true;
  };
  const nextInto: RowForecaster['nextInto'] = (row, out, where = 'row') => {
    for (let j = 0; j < width; j++) rowValues[j] = valueAt(row, inputNames[j], where, isMissing);
    return advance(rowValues, out, where);
  };
  return {
    inputNames,
    readNames: inputNames,
    outputNames,
    rowsAhead,
    members,
    intervals,
    warmUp: 1,
    takesMissing: missing !== null,
    nextInto,
    nextValuesInto: (values, out) => advance(values, out, 'values'),
    next: (row, where) => {
      nextInto(row, farthest, where);
      return named();
    },
    reset: () => {
      streams.reset();
      carried.set(missing?.fallback ?? normalisation.mean);
    },
  };
}
