/**
 * The forecasts a forecaster computes first, fitted on the fitting rows only (training and validation, never the
 * test rows) and applied one row at a time over the scored rows with their parameters fixed ("rolling origin, no
 * refit"):
 * - naive: the value now (Hyndman & Athanasopoulos, "Forecasting: Principles and Practice", ch. 5);
 * - seasonal naive: the value one season before the forecast row (whole seasons back until it is a row already
 *   seen);
 * - simple exponential smoothing, Holt's linear trend, the damped trend (Gardner & McKenzie 1985) and Holt–Winters
 *   additive and multiplicative (smoothing.ts, after Hyndman, Koehler, Ord & Snyder 2008);
 * - the Theta method (theta.ts; Assimakopoulos & Nikolopoulos 2000, as Hyndman & Billah 2003);
 * - linear: least squares on the last three values of every input column and an intercept, by QR with scaled
 *   columns (least-squares.ts).
 * The season is chosen once, on the first target's fitting rows (seasonality.ts), unless given; MASE is scaled by
 * each target's in-sample seasonal naive error over the fitting rows (scores.ts).
 */
import { fail } from '@weft/core';
import { ForecastErrorSum, maseScale } from './scores.js';
import type { ForecastErrors } from './scores.js';
import { leastSquares } from './least-squares.js';
import { chooseSeason } from './seasonality.js';
import type { SeasonChoice, Spacing } from './seasonality.js';
import { fitSmoothing, runSmoothing } from './smoothing.js';
import type { SmoothingMethod } from './smoothing.js';
import { thetaForecasts } from './theta.js';

/** A series cut for scoring: which rows fit the baselines and which positions are scored. */
export interface SeriesSplit {
  /** The series in real units, one row per time step, one number per input column. */
  readonly values: readonly (readonly number[])[];
  /** Which input columns are targets (indexes into a row). */
  readonly targets: readonly number[];
  /** Rows ahead that a forecast is for. */
  readonly horizon: number;
  /** Rows [0, fitRows) fit the baselines (and give the MASE scale); no scored target row lies before it. */
  readonly fitRows: number;
  /** The rows t whose forecast (of row t + horizon) is scored. */
  readonly positions: readonly number[];
}

/** One contender's scored errors. */
export interface BaselineScore {
  /** A short name: naive, seasonal naive, simple smoothing, Holt, damped trend, Holt-Winters additive, … */
  readonly name: string;
  /** How it forecasts, in words, for reports (with its fitted parameters). */
  readonly description: string;
  /** Errors per target column, in the order of `targets`. */
  readonly perTarget: readonly ForecastErrors[];
  /** Errors over every target and position together (MASE: the mean over targets of the scaled errors). */
  readonly overall: ForecastErrors;
}

/** Every baseline that applies, the season used and why, and why any baseline was left out. */
export interface ForecastBaselines {
  /** The baselines, in a fixed order. */
  readonly scores: readonly BaselineScore[];
  /** The season used and the reason. */
  readonly season: SeasonChoice;
  /** Per target, the MASE scale (in-sample seasonal naive error over the fitting rows). */
  readonly scales: readonly number[];
  /** Baselines left out, each with the reason. */
  readonly leftOut: readonly string[];
}

/** A forecaster: the forecast of target k for row t + horizon, made at row t. */
export type Forecaster = (t: number, k: number) => number;

/** Scores a forecaster on the split's positions, per target and overall; `scales` give MASE. */
export function scoreForecaster(split: SeriesSplit, forecast: Forecaster, scales: readonly number[] = []): Pick<BaselineScore, 'perTarget' | 'overall'> {
  const sums = split.targets.map(() => new ForecastErrorSum());
  const all = new ForecastErrorSum();
  for (const t of split.positions) {
    for (let k = 0; k < split.targets.length; k++) {
      const actual = split.values[t + split.horizon][split.targets[k]];
      const predicted = forecast(t, k);
      sums[k].add(actual, predicted, scales[k]);
      all.add(actual, predicted, scales[k]);
    }
  }
  return { perTarget: sums.map((s) => s.result()), overall: all.result() };
}

/** Rows of lagged inputs the linear baseline reads (the value now and the two before it, of every column). */
const LAGS = 3;

/**
 * Least-squares weights of each target on the last LAGS values of every input column plus an intercept, over the
 * fitting rows: weights[k] = [intercept, column 0 now, column 1 now, …, column 0 one row back, …].
 */
export function fitLinear(split: SeriesSplit): Float64Array[] {
  const width = split.values[0]?.length ?? 0;
  const p = 1 + LAGS * width;
  const rows: number[] = [];
  for (let t = LAGS - 1; t + split.horizon < split.fitRows; t++) rows.push(t);
  const x = new Float64Array(rows.length * p);
  rows.forEach((t, r) => {
    x[r * p] = 1;
    for (let lag = 0; lag < LAGS; lag++) for (let c = 0; c < width; c++) x[r * p + 1 + lag * width + c] = split.values[t - lag][c];
  });
  return split.targets.map((j) => leastSquares(x, rows.map((t) => split.values[t + split.horizon][j]), rows.length, p));
}

/** The linear baseline's forecast at row t (t ≥ LAGS − 1) from its weights. */
export function linearForecast(values: readonly (readonly number[])[], w: ArrayLike<number>, t: number): number {
  const width = values[0].length;
  let s = w[0];
  for (let lag = 0; lag < LAGS; lag++) {
    const row = values[Math.max(0, t - lag)];
    for (let c = 0; c < width; c++) s += w[1 + lag * width + c] * row[c];
  }
  return s;
}

/** Options of `forecastBaselines`. */
export interface BaselineOptions {
  /** Rows in a season, or null for none; undefined chooses one (chooseSeason). */
  readonly season?: number | null;
  /** How the rows are spaced in time (from a time column), for the season's candidates. */
  readonly spacing?: Spacing | null;
}

const figure = (v: number) => Number(v.toPrecision(3)).toString();

const SMOOTHING: readonly { method: SmoothingMethod; name: string; what: string }[] = [
  { method: 'simple', name: 'simple smoothing', what: 'simple exponential smoothing' },
  { method: 'holt', name: 'Holt', what: 'Holt\'s linear trend' },
  { method: 'damped', name: 'damped trend', what: 'exponential smoothing with a damped trend' },
  { method: 'additive', name: 'Holt-Winters additive', what: 'Holt-Winters, additive season' },
  { method: 'multiplicative', name: 'Holt-Winters multiplicative', what: 'Holt-Winters, multiplicative season' },
];

/** Every baseline that applies to the split, fitted on its fitting rows and scored on its positions. */
export function forecastBaselines(split: SeriesSplit, options: BaselineOptions = {}): ForecastBaselines {
  const { values, targets, horizon, fitRows } = split;
  if (!(fitRows >= 3 && fitRows <= values.length)) {
    fail('invalid_argument', 'forecastBaselines.fitRows', `a number of rows in [3, ${values.length}]`, String(fitRows));
  }
  const columns = targets.map((j) => Float64Array.from(values, (row) => row[j]));
  let season: SeasonChoice;
  if (options.season === undefined) season = chooseSeason(columns[0].subarray(0, fitRows), options.spacing ?? null);
  else if (options.season === null) season = { season: null, reason: 'no season (as asked)', candidates: [] };
  else {
    if (!(Number.isInteger(options.season) && options.season >= 1 && options.season < fitRows)) {
      fail('invalid_option', 'season', `a whole number of rows in [1, ${fitRows - 1}] (shorter than the fitting rows)`, String(options.season));
    }
    season = { season: options.season, reason: `season of ${options.season} rows (as asked)`, candidates: [] };
  }
  const m = season.season;
  const scales = columns.map((c) => maseScale(c, fitRows, m ?? 1));
  const scores: BaselineScore[] = [];
  const leftOut: string[] = [];
  const add = (name: string, description: string, forecast: Forecaster) => scores.push({ name, description, ...scoreForecaster(split, forecast, scales) });
  const ahead = `${horizon} row${horizon === 1 ? '' : 's'} ahead`;
  add('naive', `the value now, as the forecast ${ahead}`, (t, k) => columns[k][t]);
  if (m !== null) {
    const back = Math.ceil(horizon / m) * m;
    if (split.positions.every((t) => t + horizon - back >= 0)) {
      add('seasonal naive', `the value one season (${m} rows) before the forecast row${back > m ? ` (${back / m} seasons back)` : ''}`, (t, k) => columns[k][t + horizon - back]);
    } else leftOut.push(`seasonal naive: a scored row has no row ${back} rows before it`);
  } else leftOut.push('the seasonal methods (seasonal naive, Holt-Winters): no season');
  for (const { method, name, what } of SMOOTHING) {
    const seasonal = method === 'additive' || method === 'multiplicative';
    if (seasonal && m === null) continue;
    const forecasts: Float64Array[] = [];
    let parameters = '';
    for (const series of columns) {
      const fit = fitSmoothing(series, fitRows, method, m ?? 1);
      const out = new Float64Array(series.length);
      if (fit === null || Number.isNaN(runSmoothing(series, fitRows, fit, horizon, out))) break;
      forecasts.push(out);
      if (parameters === '') parameters = `α ${figure(fit.alpha)}${method === 'simple' ? '' : `, β ${figure(fit.beta)}`}${seasonal ? `, γ ${figure(fit.gamma)}` : ''}${method === 'damped' ? `, φ ${figure(fit.phi)}` : ''}`;
    }
    if (forecasts.length < columns.length) {
      leftOut.push(`${name}: ${method === 'multiplicative' ? 'needs values above 0 and two seasons of fitting rows' : `needs at least ${seasonal ? 2 * (m ?? 1) : 3} fitting rows`}`);
      continue;
    }
    add(name, `${what}, ${parameters}${columns.length > 1 ? ' (first target)' : ''}`, (t, k) => forecasts[k][t]);
  }
  const thetas = columns.map((series) => thetaForecasts(series, fitRows, horizon, m));
  if (thetas.every((f) => f !== null)) {
    const first = thetas[0]!;
    add('Theta', `simple smoothing with half the trend line's slope as drift, α ${figure(first.alpha)}${first.adjustment === null ? '' : `, season taken out (${first.adjustment})`}`, (t, k) => thetas[k]!.forecasts[t]);
  } else leftOut.push('Theta: needs at least 3 fitting rows');
  if (split.positions.every((t) => t >= LAGS - 1)) {
    const weights = fitLinear(split);
    add('linear', `least squares on the last ${LAGS} values of every input column`, (t, k) => linearForecast(values, weights[k], t));
  } else leftOut.push(`linear: a scored row has fewer than ${LAGS - 1} rows before it`);
  return { scores, season, scales, leftOut };
}

/** The baseline with the lowest overall MASE when every target has a scale, else the lowest overall MAE. */
export function bestBaseline(scores: readonly BaselineScore[]): BaselineScore {
  const key = (s: BaselineScore) => s.overall.mase ?? s.overall.mae;
  return scores.reduce((best, s) => (key(s) < key(best) ? s : best));
}
