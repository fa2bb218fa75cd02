/**
 * A forecast model applied row by row, whatever way it was trained: the one path by which `weft run`, `weft score`,
 * the demo and a user's program turn a series into forecasts in real units, from the weight file's metadata.
 * - A model trained on streams steps once per row, its state carried (the translator normalises and undoes).
 * - A model trained on sliding windows (metadata `window`) forecasts from the last `rows` rows alone: each row's
 *   forecast resets the state and reads the window again, every value taken relative to the window's last row and
 *   divided by the column's deviation of one-row changes, the output being the target's change from that last row
 *   in units of `targetDeviation` (so a level above every training level is read like any other). A hybrid also
 *   runs an exponential smoothing method over every row (from the first row given) and forecasts the correction to
 *   its forecast (after Smyl, "A hybrid method of exponential smoothing and recurrent neural networks for time series
 *   forecasting", IJF 36, 2020, in a simpler form: the network sees the smoothing forecasts beside the values).
 * - A windowed model may forecast every row up to its horizon at once (metadata `rowsAhead: "all"`: one block of
 *   targets per row ahead, each with its own `targetDeviation`), and any model may be several members trained from
 *   different seeds (metadata `members`, stacked by `stackMembers`), whose forecasts are combined by their median;
 *   and it may read some columns as logarithms (`window.log`), its forecasts of those coming back through exp.
 * - A windowed model that records how it handles missing readings (metadata `missing`) takes rows with holes: a
 *   missing cell (a marker such as `NA` or an empty cell, or NaN among numbers) is filled in each window by the
 *   recorded rule from the rows up to it (missing.ts, as in training) and flagged where the model reads a flag.
 */
import { fail } from '@weft/core';
import { medianOfMembers } from '@weft/cells';
import type { Runtime } from './runtime/runtime.js';
import { createTranslator } from './translate.js';
import { SmoothingStepper } from './data/smoothing.js';
import { calendarInputsAt } from './data/calendar.js';
import { parseTime } from './data/time-column.js';
import { forecastIntervals, forecastMissing, forecastPanel, forecastRowsAhead, forecastWindow, seriesMetadata } from './forecast-metadata.js';
import { fillColumn, missingTest } from './data/missing.js';
import { valueAt } from './forecast-row.js';
import type { RowForecaster } from './forecast-row.js';
import { streamRowForecaster } from './forecast-streams.js';
import type { ForecasterParts } from './forecast-streams.js';
export type { ForecastRow, RowForecaster } from './forecast-row.js';
export type { ForecastWindow } from './forecast-metadata.js';

/** The series input of one series of many (metadata `seriesInput`, from seriesMetadata), checked, or null. */
function seriesInputOf(metadata: Readonly<Record<string, unknown>>): { index: number; count: number } | null {
  const code = metadata.seriesInput as { index?: unknown; count?: unknown } | undefined;
  if (code === undefined) return null;
  if (!(Number.isInteger(code.count) && Number.isInteger(code.index) && (code.index as number) >= 0 && (code.index as number) < (code.count as number))) {
    fail('bad_weight_file', 'metadata.seriesInput', "a series' index among a count of series", JSON.stringify(code).slice(0, 80));
  }
  return code as { index: number; count: number };
}

/**
 * A row forecaster per series of a model of many series (metadata `panel`): each reads its own series' rows alone,
 * as createRowForecaster does for one series, with that series' scales; all share the model's weights.
 */
export function createSeriesForecasters(runtime: Runtime, metadata: Readonly<Record<string, unknown>>): Map<string, RowForecaster> {
  const panel = forecastPanel(metadata);
  if (panel === null)
    fail(
      'invalid_argument',
      'createSeriesForecasters.metadata',
      'the metadata of a model of many series (metadata.panel)',
      'a model of one series: use createRowForecaster',
    );
  return new Map(panel.ids.map((id) => [id, createRowForecaster(runtime, seriesMetadata(metadata, id))]));
}

/** A row forecaster for a forecast model and its weight file's metadata. */
export function createRowForecaster(runtime: Runtime, metadata: Readonly<Record<string, unknown>>): RowForecaster {
  if (metadata.panel !== undefined)
    fail(
      'invalid_argument',
      'createRowForecaster.metadata',
      'the metadata of a model of one series (a model of many: createSeriesForecasters, or seriesMetadata for one of them)',
      `a model of ${forecastPanel(metadata)?.ids.length} series`,
    );
  const translator = createTranslator(metadata);
  const inputNames = translator.inputNames;
  const outputNames = translator.outputNames;
  const targetCount = outputNames.length;
  const streams = runtime.streams(1);
  const rowsAhead = forecastRowsAhead(metadata);
  const members = metadata.members === undefined ? 1 : Number(metadata.members);
  const block = rowsAhead.length * targetCount;
  if (!Number.isInteger(members) || members < 1 || runtime.outputWidth !== members * block) {
    fail(
      'bad_weight_file',
      'metadata.members',
      `a count of members whose ${rowsAhead.length} × ${targetCount} forecasts make the model's ${runtime.outputWidth} outputs`,
      JSON.stringify(metadata.members) ?? 'nothing',
    );
  }
  const intervals = forecastIntervals(metadata, block);
  const output = new Float32Array(runtime.outputWidth);
  const combined = new Float64Array(block);
  const scratch = new Float64Array(members);
  const window = forecastWindow(metadata, inputNames.length, targetCount, rowsAhead.length);
  const farthest = new Float64Array(block);
  const named = (): Record<string, number> => {
    const record: Record<string, number> = {};
    const last = (rowsAhead.length - 1) * targetCount;
    for (let k = 0; k < targetCount; k++) record[outputNames[k]] = farthest[last + k];
    return record;
  };
  const width = inputNames.length;
  const checkOut = (out: { readonly length: number }) => {
    if (out.length < block)
      fail(
        'shape_mismatch',
        'out',
        `room for ${block} forecasts (${targetCount} target${targetCount === 1 ? '' : 's'} × ${rowsAhead.length} row${rowsAhead.length === 1 ? '' : 's'} ahead)`,
        `${out.length}`,
      );
  };
  const parts: ForecasterParts = {
    metadata,
    inputNames,
    outputNames,
    rowsAhead,
    members,
    intervals,
    streams,
    output,
    combined,
    scratch,
    farthest,
    named,
    checkOut,
  };
  if (window === null) return streamRowForecaster(parts);
  const w = window.rows;
  const targets = outputNames.map((t) => inputNames.indexOf(t));
  const fresh = () => window.hybrid?.map((p) => new SmoothingStepper(p, rowsAhead[0])) ?? null;
  let steppers = fresh();
  const calendar = window.calendar ?? [];
  const timeColumn = calendar.length > 0 ? String(metadata.timeColumn) : null;
  const hybrids = steppers === null ? 0 : steppers.length;
  // Each row as kept: the raw values, (hybrid) the smoothing forecast made at it per target, and its time.
  const timeSlot = width + hybrids;
  const stride = timeSlot + 1;
  const missing = forecastMissing(metadata, width);
  const isMissing = missing === null ? null : missingTest(missing.markers);
  const flagged = missing?.flagged ?? [];
  const flagAt = timeSlot + 2 * calendar.length;
  // One series of many with series inputs: a 0/1 input per series after the flags, its own 1 (set once: never rewritten).
  const code = seriesInputOf(metadata);
  const inputWidth = flagAt + flagged.length + (code?.count ?? 0);
  // The last w rows, oldest first once full: ring[(start + k) % w] is the k-th row of the window.
  const ring = new Float64Array(w * stride);
  const input = new Float32Array(inputWidth);
  if (code !== null) input[flagAt + flagged.length + code.index] = 1;
  if (runtime.inputWidth !== inputWidth)
    fail(
      'bad_weight_file',
      'metadata',
      `a record of the ${runtime.inputWidth} inputs the model reads`,
      `${inputWidth} inputs (${width} columns${hybrids > 0 ? `, ${hybrids} smoothing forecasts` : ''}${calendar.length > 0 ? `, ${2 * calendar.length} calendar inputs` : ''}${flagged.length > 0 ? `, ${flagged.length} missing flags` : ''}${code === null ? '' : `, ${code.count} series inputs`})`,
    );
  let seen = 0;
  const rowValues = new Float64Array(width);
  const bases = new Float64Array(targetCount * rowsAhead.length);
  const logged = window.log ?? inputNames.map(() => false);
  // Missing readings: the window's values filled (row-major), and per column the last value observed in a row that
  // has left the window, and that row's number.
  const filled = new Float64Array(w * width);
  const before = new Float64Array(width).fill(NaN);
  const beforeRow = new Float64Array(width).fill(-1);
  const edges = new Float64Array(4);
  const season = typeof metadata.season === 'number' ? metadata.season : 0;
  const advance = (values: ArrayLike<number>, time: number, out: { [index: number]: number; readonly length: number }, where: string): boolean => {
    checkOut(out);
    for (let j = 0; j < width; j++) {
      if (!Number.isFinite(values[j]) && !(missing !== null && Number.isNaN(values[j])))
        fail(
          'bad_data',
          `${where}.${inputNames[j]}`,
          missing === null ? 'a finite number' : 'a finite number, or NaN for a missing reading',
          String(values[j]),
        );
    }
    if (timeColumn !== null && !Number.isFinite(time))
      fail(
        'bad_data',
        `${where}.${timeColumn}`,
        `a time (milliseconds since 1970-01-01 UTC) for column ${JSON.stringify(timeColumn)}, last: the model reads where in the calendar each row falls`,
        String(time),
      );
    const slot = seen % w;
    const at = slot * stride;
    if (missing !== null && seen >= w) {
      // The row leaving the window: its readings become the last seen before the window.
      for (let j = 0; j < width; j++) {
        if (Number.isNaN(ring[at + j])) continue;
        before[j] = ring[at + j];
        beforeRow[j] = seen - w;
      }
    }
    for (let j = 0; j < width; j++) {
      const v = values[j];
      if (logged[j] && !(v > 0) && !Number.isNaN(v)) fail('bad_data', `${where}.${inputNames[j]}`, 'a number > 0 (the model reads its logarithm)', String(v));
      ring[at + j] = logged[j] ? Math.log(v) : v;
    }
    // The hybrid's forecasts made at this row: the nearest row ahead kept with the row, every row ahead in `bases`.
    if (steppers !== null) {
      for (let k = 0; k < steppers.length; k++) {
        steppers[k].nextFrom(ring, at + targets[k], rowsAhead, bases, k * rowsAhead.length);
        ring[at + width + k] = bases[k * rowsAhead.length];
      }
    }
    ring[at + timeSlot] = time;
    seen++;
    if (seen < w) return false;
    streams.reset();
    const start = seen % w;
    // The window's values, oldest first, with any missing reading filled by the recorded rule.
    for (let k = 0; k < w; k++) {
      const from = ((start + k) % w) * stride;
      for (let j = 0; j < width; j++) filled[k * width + j] = ring[from + j];
    }
    if (missing !== null) {
      const first = seen - w;
      for (let j = 0; j < width; j++) {
        edges[0] = before[j];
        edges[1] = beforeRow[j] - first;
        edges[2] = missing.fallback[j];
        edges[3] = season;
        fillColumn(filled, j, width, w, edges, 0, missing.rule);
      }
    }
    const last = (w - 1) * width;
    for (let k = 0; k < w; k++) {
      const from = ((start + k) % w) * stride;
      for (let j = 0; j < width; j++) input[j] = (filled[k * width + j] - filled[last + j]) / window.deviation[j];
      for (let i = width; i < timeSlot; i++) input[i] = (ring[from + i] - filled[last + targets[i - width]]) / window.deviation[targets[i - width]];
      if (timeColumn !== null) calendarInputsAt(calendar, ring, from + timeSlot, input, timeSlot);
      for (let i = 0; i < flagged.length; i++) input[flagAt + i] = Number.isNaN(ring[from + flagged[i]]) ? 1 : 0;
      streams.step(input, output);
    }
    medianOfMembers(output, 0, members, block, combined, scratch);
    for (let s = 0; s < rowsAhead.length; s++) {
      for (let k = 0; k < targetCount; k++) {
        const base = steppers === null ? filled[last + targets[k]] : bases[k * rowsAhead.length + s];
        const made = base + combined[s * targetCount + k] * window.targetDeviation[s * targetCount + k];
        out[s * targetCount + k] = logged[targets[k]] ? Math.exp(made) : made;
      }
    }
    return true;
  };
  const nextInto: RowForecaster['nextInto'] = (row, out, where = 'row') => {
    for (let j = 0; j < width; j++) rowValues[j] = valueAt(row, inputNames[j], where, isMissing);
    let time = NaN;
    if (timeColumn !== null) {
      const raw = Object.hasOwn(row, timeColumn) ? row[timeColumn] : undefined;
      time = raw instanceof Date ? raw.getTime() : raw === undefined ? NaN : parseTime(String(raw));
      if (Number.isNaN(time))
        fail(
          'bad_data',
          `${where}.${timeColumn}`,
          `a time in column ${JSON.stringify(timeColumn)} (the model reads where in the calendar each row falls)`,
          raw === undefined ? 'nothing' : JSON.stringify(String(raw).slice(0, 80)),
        );
    }
    return advance(rowValues, time, out, where);
  };
  return {
    inputNames,
    readNames: timeColumn === null ? inputNames : [...inputNames, timeColumn],
    outputNames,
    rowsAhead,
    members,
    intervals,
    warmUp: w,
    takesMissing: missing !== null,
    nextInto,
    nextValuesInto: (values, out) => advance(values, timeColumn === null ? NaN : values[width], out, 'values'),
    next: (row, where) => (nextInto(row, farthest, where) ? named() : null),
    reset() {
      seen = 0;
      before.fill(NaN);
      beforeRow.fill(-1);
      steppers = fresh();
      streams.reset();
    },
  };
}
