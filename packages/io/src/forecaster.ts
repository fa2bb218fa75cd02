/**
 * A forecast model applied row by row, whatever way it was trained: the one path by which `weft run`, `weft score`,
 * the demo and a user's program turn a series into forecasts in real units, from the weight file's metadata.
 * - A model trained on streams steps once per row, its state carried (the translator normalises and undoes).
 * - A model trained on sliding windows (metadata `window`) forecasts from the last `rows` rows alone: each row's
 *   forecast resets the state and reads the window again, every value taken relative to the window's last row and
 *   divided by the column's deviation of one-row changes, the output being the target's change from that last row
 *   in units of `targetDeviation` (so a level above every training level is read like any other).
 */
import { fail } from '@weft/core';
import type { Runtime } from './runtime/runtime.js';
import { createTranslator } from './translate.js';

/** What a windowed forecast model records in its metadata (`window`). */
export interface ForecastWindow {
  /** Rows in a window. */
  readonly rows: number;
  /** Per input column, the deviation of one-row changes over the training rows (inputs are divided by it). */
  readonly deviation: readonly number[];
  /** Per target, the deviation of the change forecast (outputs are multiplied by it). */
  readonly targetDeviation: readonly number[];
}

/** Forecasts row by row. */
export interface RowForecaster {
  /** The columns it reads, in order. */
  readonly inputNames: readonly string[];
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
      outputNames,
      warmUp: 1,
      next: (row, where) => translator.outputs(streams.step(translator.inputs(row, input, where))),
      reset: () => streams.reset(),
    };
  }
  const width = inputNames.length;
  const w = window.rows;
  const targets = outputNames.map((t) => inputNames.indexOf(t));
  // The last w rows, oldest first once full: ring[(start + k) % w] is the k-th row of the window.
  const ring = new Float64Array(w * width);
  const input = new Float32Array(width);
  const output = new Float32Array(outputNames.length);
  let seen = 0;
  return {
    inputNames,
    outputNames,
    warmUp: w,
    next(row, where = 'row') {
      const slot = seen % w;
      inputNames.forEach((name, j) => {
        const raw = Object.prototype.hasOwnProperty.call(row, name) ? row[name] : undefined;
        const value = typeof raw === 'number' ? raw : raw === undefined || raw.trim() === '' ? NaN : Number(raw);
        if (!Number.isFinite(value)) fail('bad_data', `${where}.${name}`, raw === undefined ? `a value for column ${JSON.stringify(name)}, which the model reads` : 'a finite number', raw === undefined ? 'nothing' : JSON.stringify(raw));
        ring[slot * width + j] = value;
      });
      seen++;
      if (seen < w) return null;
      streams.reset();
      const start = seen % w;
      for (let k = 0; k < w; k++) {
        const at = ((start + k) % w) * width;
        for (let j = 0; j < width; j++) input[j] = (ring[at + j] - ring[slot * width + j]) / window.deviation[j];
        streams.step(input, output);
      }
      const named: Record<string, number> = {};
      outputNames.forEach((name, k) => (named[name] = ring[slot * width + targets[k]] + output[k] * window.targetDeviation[k]));
      return named;
    },
    reset() {
      seen = 0;
      streams.reset();
    },
  };
}
