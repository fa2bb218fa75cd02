/**
 * Baselines a forecaster compares a model with, fitted on the training rows only and scored on the same held-out
 * positions as the model (common practice in forecasting; see Hyndman & Athanasopoulos, "Forecasting: Principles
 * and Practice", ch. 5, for the naive, mean and seasonal-naive methods):
 * - persistence: the value now is the forecast for `horizon` rows ahead;
 * - training mean: the mean of the target over the training rows;
 * - seasonal naive: the value one season before the forecast row (whole seasons back until it is a row already
 *   seen), for a season given or detected (detectSeason);
 * - linear: least squares on the current values of every input column plus an intercept, fitted on the training
 *   rows (the normal equations solved by Gaussian elimination with partial pivoting, in f64).
 */
import { fail } from '@weft/core';
import { ForecastErrorSum } from './scores.js';
import type { ForecastErrors } from './scores.js';

/** A series cut for scoring: which rows fit the baselines and which positions are scored. */
export interface SeriesSplit {
  /** The series in real units, one row per time step, one number per input column. */
  readonly values: readonly (readonly number[])[];
  /** Which input columns are targets (indexes into a row). */
  readonly targets: readonly number[];
  /** Rows ahead that a forecast is for. */
  readonly horizon: number;
  /** Rows [0, trainRows) are the training rows: baselines are fitted there. */
  readonly trainRows: number;
  /** The rows t whose forecast (of row t + horizon) is scored. */
  readonly positions: readonly number[];
}

/** One baseline's held-out errors. */
export interface BaselineScore {
  /** A short name: persistence, training mean, seasonal naive, linear. */
  readonly name: string;
  /** How it forecasts, in words, for reports. */
  readonly description: string;
  /** Errors per target column, in the order of `targets`. */
  readonly perTarget: readonly ForecastErrors[];
  /** Errors over every target and position together. */
  readonly overall: ForecastErrors;
}

/** A forecaster: the forecast of target k for row t + horizon, made at row t. */
export type Forecaster = (t: number, k: number) => number;

/** Scores a forecaster on the split's positions, per target and overall. */
export function scoreForecaster(split: SeriesSplit, forecast: Forecaster): Pick<BaselineScore, 'perTarget' | 'overall'> {
  const sums = split.targets.map(() => new ForecastErrorSum());
  const all = new ForecastErrorSum();
  for (const t of split.positions) {
    split.targets.forEach((j, k) => {
      const actual = split.values[t + split.horizon][j];
      const predicted = forecast(t, k);
      sums[k].add(actual, predicted);
      all.add(actual, predicted);
    });
  }
  return { perTarget: sums.map((s) => s.result()), overall: all.result() };
}

/**
 * A season (in rows) from the training part of a target: the lag of the highest autocorrelation among its local
 * maxima after the autocorrelation first falls below zero, if that peak is at least 0.3; else null. Lags up to a
 * third of the rows, at most `longest`.
 */
export function detectSeason(series: readonly number[], longest = 800): number | null {
  const n = series.length;
  const most = Math.min(longest, Math.floor(n / 3));
  if (most < 2) return null;
  const mean = series.reduce((s, v) => s + v, 0) / n;
  let variance = 0;
  for (const v of series) variance += (v - mean) ** 2;
  if (!(variance > 0)) return null;
  const acf = (lag: number): number => {
    let s = 0;
    for (let t = lag; t < n; t++) s += (series[t] - mean) * (series[t - lag] - mean);
    return s / variance;
  };
  const values = [1];
  for (let lag = 1; lag <= most + 1; lag++) values.push(acf(lag));
  let crossed = false;
  let best: number | null = null;
  for (let lag = 1; lag <= most; lag++) {
    if (values[lag] < 0) crossed = true;
    if (!crossed) continue;
    if (values[lag] > values[lag - 1] && values[lag] >= values[lag + 1] && values[lag] >= 0.3 && (best === null || values[lag] > values[best])) best = lag;
  }
  return best;
}

/** Least-squares weights [intercept, w_0, …] of targets on the current inputs over the training rows. */
export function fitLinear(split: SeriesSplit): number[][] {
  const width = split.values[0]?.length ?? 0;
  const p = width + 1;
  const rows: number[] = [];
  for (let t = 0; t + split.horizon < split.trainRows; t++) rows.push(t);
  return split.targets.map((j) => {
    // Normal equations XᵀX w = Xᵀy with X = [1, x_t], y = value of column j at t + horizon.
    const a = Array.from({ length: p }, () => new Array<number>(p).fill(0));
    const b = new Array<number>(p).fill(0);
    for (const t of rows) {
      const x = [1, ...split.values[t]];
      const y = split.values[t + split.horizon][j];
      for (let r = 0; r < p; r++) {
        b[r] += x[r] * y;
        for (let c = 0; c < p; c++) a[r][c] += x[r] * x[c];
      }
    }
    return solve(a, b);
  });
}

/**
 * Solves a·w = b by Gaussian elimination with partial pivoting (a is p × p, copied). A pivot that is zero, or
 * negligible against its column (a constant or repeated input), gives that weight 0 instead of dividing by it.
 */
export function solve(a: readonly (readonly number[])[], b: readonly number[]): number[] {
  const p = b.length;
  const m = a.map((row, r) => [...row, b[r]]);
  const scale = Math.max(1e-300, ...a.map((row) => Math.max(...row.map(Math.abs))));
  const used: boolean[] = new Array<boolean>(p).fill(true);
  for (let col = 0, row = 0; col < p && row < p; col++) {
    let pivot = row;
    for (let r = row + 1; r < p; r++) if (Math.abs(m[r][col]) > Math.abs(m[pivot][col])) pivot = r;
    if (Math.abs(m[pivot][col]) <= 1e-12 * scale) {
      used[col] = false;
      continue;
    }
    [m[row], m[pivot]] = [m[pivot], m[row]];
    for (let r = 0; r < p; r++) {
      if (r === row) continue;
      const f = m[r][col] / m[row][col];
      if (f === 0) continue;
      for (let c = col; c <= p; c++) m[r][c] -= f * m[row][c];
    }
    row++;
  }
  // Rows now hold one leading variable each, in column order, for the columns used.
  const w = new Array<number>(p).fill(0);
  let row = 0;
  for (let col = 0; col < p; col++) {
    if (!used[col]) continue;
    w[col] = m[row][p] / m[row][col];
    row++;
  }
  return w;
}

/** Options of `forecastBaselines`. */
export interface BaselineOptions {
  /** Rows in a season, or null for none; undefined detects one from the first target's training rows. */
  readonly season?: number | null;
}

/** Every baseline that applies to the split, scored on its positions. */
export function forecastBaselines(split: SeriesSplit, options: BaselineOptions = {}): BaselineScore[] {
  const { values, targets, horizon, trainRows } = split;
  if (trainRows < 2 || trainRows > values.length) {
    fail('invalid_argument', 'forecastBaselines.trainRows', `a number of rows in [2, ${values.length}]`, String(trainRows));
  }
  const out: BaselineScore[] = [];
  const add = (name: string, description: string, forecast: Forecaster) => out.push({ name, description, ...scoreForecaster(split, forecast) });
  add('persistence', `the value now, as the forecast ${horizon} row${horizon === 1 ? '' : 's'} ahead`, (t, k) => values[t][targets[k]]);
  const means = targets.map((j) => {
    let s = 0;
    for (let t = 0; t < trainRows; t++) s += values[t][j];
    return s / trainRows;
  });
  add('training mean', 'the mean of the training rows', (_t, k) => means[k]);
  const season = options.season === undefined ? detectSeason(values.slice(0, trainRows).map((row) => row[targets[0]])) : options.season;
  if (season !== null) {
    if (!(Number.isInteger(season) && season >= 1 && season < trainRows)) {
      fail('invalid_option', 'season', `a whole number of rows in [1, ${trainRows - 1}] (shorter than the training rows)`, String(season));
    }
    const back = Math.ceil(horizon / season) * season;
    const usable = split.positions.every((t) => t + horizon - back >= 0);
    if (usable) {
      add('seasonal naive', `the value one season (${season} rows) before the forecast row${back > season ? ` (${back / season} seasons back)` : ''}`,
        (t, k) => values[t + horizon - back][targets[k]]);
    }
  }
  const weights = fitLinear(split);
  add('linear', 'least squares on the current values of every input column', (t, k) => {
    const w = weights[k];
    let s = w[0];
    const row = values[t];
    for (let c = 0; c < row.length; c++) s += w[c + 1] * row[c];
    return s;
  });
  return out;
}

/** The baseline with the lowest overall MAE. */
export function bestBaseline(scores: readonly BaselineScore[]): BaselineScore {
  return scores.reduce((best, s) => (s.overall.mae < best.overall.mae ? s : best));
}
