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
 */
import { fail } from '@weft/core';
import type { Runtime } from './runtime/runtime.js';
import { createTranslator } from './translate.js';
import { SmoothingStepper } from './data/smoothing.js';
import type { SmoothingParameters } from './data/smoothing.js';
import { calendarInputs } from './data/calendar.js';
import type { CalendarPosition } from './data/calendar.js';
import { parseTime } from './data/time-column.js';

/** What a windowed forecast model records in its metadata (`window`). */
export interface ForecastWindow {
  /** Rows in a window. */
  readonly rows: number;
  /** Per input column, the deviation of one-row changes over the training rows (inputs are divided by it). */
  readonly deviation: readonly number[];
  /** Per target, the deviation of the change forecast (outputs are multiplied by it). */
  readonly targetDeviation: readonly number[];
  /**
   * Per target, an exponential smoothing method (the hybrid): its forecast made at each row is read as one more
   * input per target (relative to the window's last row, over that target's deviation), and the model's output is
   * the correction to the smoothing forecast made at the last row instead of the change from that row.
   */
  readonly hybrid?: readonly SmoothingParameters[];
  /** Calendar positions read from the time column (metadata `timeColumn`), a sine and cosine each, last. */
  readonly calendar?: readonly CalendarPosition[];
}

/** Forecasts row by row. */
export interface RowForecaster {
  /** The columns of numbers it reads, in order. */
  readonly inputNames: readonly string[];
  /** Every column a row must have: the input columns and, for calendar inputs, the time column last. */
  readonly readNames: readonly string[];
  /** The targets it forecasts. */
  readonly outputNames: readonly string[];
  /** Rows it needs before its first forecast (1 for a stream, the window's rows for a windowed model). */
  readonly warmUp: number;
  /**
   * Takes the next row (raw values by column name; `where` names it in errors) and returns the forecast made at it,
   * by target name in real units, or null while fewer than `warmUp` rows have been given.
   */
  next(row: Readonly<Record<string, number | string>>, where?: string): Record<string, number> | null;
  /** Forgets every row given so far. */
  reset(): void;
}

/** The window a forecast model's metadata records, or null for a model trained on streams (checked when present). */
export function forecastWindow(metadata: Readonly<Record<string, unknown>>, columns: number, targets: number): ForecastWindow | null {
  const window = metadata.window as Partial<ForecastWindow> | undefined;
  if (window === undefined) return null;
  const positive = (v: unknown, n: number) => Array.isArray(v) && v.length === n && v.every((x) => typeof x === 'number' && x > 0 && Number.isFinite(x));
  if (typeof window !== 'object' || window === null || !Number.isInteger(window.rows) || (window.rows as number) < 1) fail('bad_weight_file', 'metadata.window.rows', 'a whole number ≥ 1', JSON.stringify(window?.rows));
  if (!positive(window.deviation, columns)) fail('bad_weight_file', 'metadata.window.deviation', `${columns} finite numbers > 0 (one per column)`, JSON.stringify(window.deviation)?.slice(0, 80) ?? 'nothing');
  if (!positive(window.targetDeviation, targets)) fail('bad_weight_file', 'metadata.window.targetDeviation', `${targets} finite numbers > 0 (one per target)`, JSON.stringify(window.targetDeviation)?.slice(0, 80) ?? 'nothing');
  if (window.hybrid !== undefined) {
    const methods = ['simple', 'holt', 'damped', 'additive', 'multiplicative'];
    const finite = (v: unknown) => typeof v === 'number' && Number.isFinite(v);
    const sound = (p: Partial<SmoothingParameters>) => typeof p === 'object' && p !== null && methods.includes(p.method as string) && Number.isInteger(p.season) && (p.season as number) >= 1
      && [p.alpha, p.beta, p.gamma, p.phi, p.level, p.trend].every(finite) && Array.isArray(p.seasonal) && p.seasonal.every(finite)
      && (p.method === 'additive' || p.method === 'multiplicative' ? p.seasonal.length === p.season : true);
    if (!Array.isArray(window.hybrid) || window.hybrid.length !== targets || !window.hybrid.every(sound)) {
      fail('bad_weight_file', 'metadata.window.hybrid', `${targets} smoothing records (method, season, alpha, beta, gamma, phi, level, trend, seasonal), one per target`, JSON.stringify(window.hybrid)?.slice(0, 80) ?? 'nothing');
    }
  }
  if (window.calendar !== undefined) {
    const known = ['month of year', 'quarter of year', 'week of year', 'day of week', 'day of year', 'time of day'];
    if (!Array.isArray(window.calendar) || !window.calendar.every((c) => known.includes(c))) fail('bad_weight_file', 'metadata.window.calendar', `calendar positions among ${known.join(', ')}`, JSON.stringify(window.calendar)?.slice(0, 80) ?? 'nothing');
    if (typeof metadata.timeColumn !== 'string') fail('bad_weight_file', 'metadata.timeColumn', 'the name of the time column the calendar inputs are read from', JSON.stringify(metadata.timeColumn) ?? 'nothing');
  }
  return window as ForecastWindow;
}

/** A row forecaster for a forecast model and its weight file's metadata. */
export function createRowForecaster(runtime: Runtime, metadata: Readonly<Record<string, unknown>>): RowForecaster {
  const translator = createTranslator(metadata);
  const inputNames = translator.inputNames;
  const outputNames = translator.outputNames;
  const streams = runtime.streams(1);
  const window = forecastWindow(metadata, inputNames.length, outputNames.length);
  if (window === null) {
    const input = new Float32Array(inputNames.length);
    return {
      inputNames,
      readNames: inputNames,
      outputNames,
      warmUp: 1,
      next: (row, where) => translator.outputs(streams.step(translator.inputs(row, input, where))),
      reset: () => streams.reset(),
    };
  }
  const width = inputNames.length;
  const w = window.rows;
  const targets = outputNames.map((t) => inputNames.indexOf(t));
  const horizon = Number(metadata.horizon ?? 1);
  const fresh = () => window.hybrid?.map((p) => new SmoothingStepper(p, horizon)) ?? null;
  let steppers = fresh();
  const calendar = window.calendar ?? [];
  const timeColumn = calendar.length > 0 ? String(metadata.timeColumn) : null;
  const hybrids = steppers === null ? 0 : steppers.length;
  // Each row as kept: the raw values, (hybrid) the smoothing forecast made at it per target, and its time.
  const timeSlot = width + hybrids;
  const stride = timeSlot + 1;
  const inputWidth = timeSlot + 2 * calendar.length;
  // The last w rows, oldest first once full: ring[(start + k) % w] is the k-th row of the window.
  const ring = new Float64Array(w * stride);
  const input = new Float32Array(inputWidth);
  const output = new Float32Array(outputNames.length);
  let seen = 0;
  return {
    inputNames,
    readNames: timeColumn === null ? inputNames : [...inputNames, timeColumn],
    outputNames,
    warmUp: w,
    next(row, where = 'row') {
      const slot = seen % w;
      const at = slot * stride;
      for (let j = 0; j < width; j++) {
        const name = inputNames[j];
        const raw = Object.prototype.hasOwnProperty.call(row, name) ? row[name] : undefined;
        const value = typeof raw === 'number' ? raw : raw === undefined || raw.trim() === '' ? NaN : Number(raw);
        if (!Number.isFinite(value)) fail('bad_data', `${where}.${name}`, raw === undefined ? `a value for column ${JSON.stringify(name)}, which the model reads` : 'a finite number', raw === undefined ? 'nothing' : JSON.stringify(raw));
        ring[at + j] = value;
      }
      if (steppers !== null) for (let k = 0; k < steppers.length; k++) ring[at + width + k] = steppers[k].next(ring[at + targets[k]]);
      if (timeColumn !== null) {
        const raw = Object.prototype.hasOwnProperty.call(row, timeColumn) ? String(row[timeColumn]) : undefined;
        const time = raw === undefined ? NaN : parseTime(raw);
        if (Number.isNaN(time)) fail('bad_data', `${where}.${timeColumn}`, `a time in column ${JSON.stringify(timeColumn)} (the model reads where in the calendar each row falls)`, raw === undefined ? 'nothing' : JSON.stringify(raw.slice(0, 80)));
        ring[at + timeSlot] = time;
      }
      seen++;
      if (seen < w) return null;
      streams.reset();
      const start = seen % w;
      for (let k = 0; k < w; k++) {
        const from = ((start + k) % w) * stride;
        for (let j = 0; j < width; j++) input[j] = (ring[from + j] - ring[at + j]) / window.deviation[j];
        for (let i = width; i < timeSlot; i++) input[i] = (ring[from + i] - ring[at + targets[i - width]]) / window.deviation[targets[i - width]];
        if (timeColumn !== null) calendarInputs(calendar, ring[from + timeSlot], input, timeSlot);
        streams.step(input, output);
      }
      const named: Record<string, number> = {};
      outputNames.forEach((name, k) => (named[name] = (steppers === null ? ring[at + targets[k]] : ring[at + width + k]) + output[k] * window.targetDeviation[k]));
      return named;
    },
    reset() {
      seen = 0;
      steppers = fresh();
      streams.reset();
    },
  };
}
