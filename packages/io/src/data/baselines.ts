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
 *
 * Missing values (NaN) are never scored: a target row without a value is left out of every contender's figures, so
 * all are scored on the same observed rows. Forecasts made at a row without a value use what was last seen: naive
 * carries the last value, seasonal naive goes back whole seasons to a value, the smoothing methods skip the update
 * (smoothing.ts), and the linear baseline reads the last values carried forward (and is fitted on complete rows).
 */
import { fail } from '@weft/core';
import { interpolated } from './missing.js';
import { ForecastErrorSum, maseScale } from './scores.js';
import { leastSquares } from './least-squares.js';
import { type SeasonChoice, chooseSeason } from './seasonality.js';
import { type SmoothingMethod, fitSmoothing, runSmoothing } from './smoothing.js';
import { thetaForecasts } from './theta.js';
import type { BaselineOptions, BaselineScore, ForecastBaselines, Forecaster, SeriesSplit, StepErrors } from './baselines-types.js';

export type { BaselineOptions, BaselineScore, ForecastBaselines, Forecaster, SeriesSplit, StepErrors } from './baselines-types.js';

/** The rows ahead a split scores, nearest first (checked: whole numbers from 1 to its horizon). */
export function rowsAheadOf(split: SeriesSplit): readonly number[] {
  const steps = split.rowsAhead ?? [split.horizon];
  steps.forEach((h, i) => {
    if (!(Number.isInteger(h) && h >= 1 && h <= split.horizon))
      fail('invalid_argument', `split.rowsAhead[${i}]`, `a whole number in [1, ${split.horizon}] (the horizon)`, String(h));
  });
  return steps;
}

/**
 * Scores a forecaster on the split's target rows, per target and overall (every row ahead pooled), and at each row
 * ahead when the split has several; `scales` give MASE.
 */
export function scoreForecaster(
  split: SeriesSplit,
  forecast: Forecaster,
  scales: readonly number[] = [],
): Pick<BaselineScore, 'perTarget' | 'overall' | 'byRowsAhead'> {
  const sums = split.targets.map(() => new ForecastErrorSum());
  const all = new ForecastErrorSum();
  const steps = rowsAheadOf(split);
  const byRowsAhead: StepErrors[] = [];
  for (const h of steps) {
    const step = new ForecastErrorSum();
    for (const position of split.positions) {
      const target = position + split.horizon;
      const t = target - h;
      for (let k = 0; k < split.targets.length; k++) {
        const actual = split.values[target][split.targets[k]];
        // A target never observed is scored by no one.
        if (Number.isNaN(actual)) continue;
        const predicted = forecast(t, k, h);
        sums[k].add(actual, predicted, scales[k]);
        all.add(actual, predicted, scales[k]);
        step.add(actual, predicted, scales[k]);
      }
    }
    byRowsAhead.push({ rowsAhead: h, overall: step.result() });
  }
  return { perTarget: sums.map((s) => s.result()), overall: all.result(), ...(split.rowsAhead === undefined ? {} : { byRowsAhead }) };
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
  // Rows whose lags and target all have values (missing values, NaN, leave a row out).
  const complete = (t: number) => {
    for (let lag = 0; lag < LAGS; lag++) if (split.values[t - lag].some((v) => Number.isNaN(v))) return false;
    return true;
  };
  for (let t = LAGS - 1; t + split.horizon < split.fitRows; t++) {
    if (complete(t) && split.targets.every((j) => !Number.isNaN(split.values[t + split.horizon][j]))) rows.push(t);
  }
  const x = new Float64Array(rows.length * p);
  rows.forEach((t, r) => {
    x[r * p] = 1;
    for (let lag = 0; lag < LAGS; lag++) for (let c = 0; c < width; c++) x[r * p + 1 + lag * width + c] = split.values[t - lag][c];
  });
  return split.targets.map((j) =>
    leastSquares(
      x,
      rows.map((t) => split.values[t + split.horizon][j]),
      rows.length,
      p,
    ),
  );
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

const figure = (v: number) => Number(v.toPrecision(3)).toString();

const SMOOTHING: readonly { method: SmoothingMethod; name: string; what: string }[] = [
  { method: 'simple', name: 'simple smoothing', what: 'simple exponential smoothing' },
  { method: 'holt', name: 'Holt', what: "Holt's linear trend" },
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
  // With missing values: each column carried forward (what was last seen at each row), and rows of them for the
  // linear baseline to read.
  const gappy = values.some((row) => row.some((v) => Number.isNaN(v)));
  const carried = gappy ? columns.map(carryForward) : columns;
  const season = seasonOf(columns[0].subarray(0, fitRows), gappy, fitRows, options);
  const m = season.season;
  const scales = columns.map((c) => maseScale(c, fitRows, m ?? 1));
  const scores: BaselineScore[] = [];
  const leftOut: string[] = [];
  const forecasters: Forecaster[] = [];
  const steps = rowsAheadOf(split);
  const context: BaselineContext = {
    split,
    columns,
    carried,
    carriedRows: gappy ? carryRows(values) : values,
    steps,
    m,
    leftOut,
    add: (name, description, forecast) => {
      scores.push({ name, description, ...scoreForecaster(split, forecast, scales) });
      forecasters.push(forecast);
    },
  };
  const ahead = steps.length > 1 ? `${steps[0]} to ${steps[steps.length - 1]} rows ahead` : `${horizon} row${horizon === 1 ? '' : 's'} ahead`;
  context.add('naive', `the value now, as the forecast ${ahead}`, (t, k) => carried[k][t]);
  if (m !== null) addSeasonalNaive(context, m);
  else leftOut.push('the seasonal methods (seasonal naive, Holt-Winters): no season');
  for (const smoothing of SMOOTHING) addSmoothing(context, smoothing);
  addTheta(context);
  if (split.positions.every((t) => t + horizon - Math.max(...steps) >= LAGS - 1)) {
    // One least-squares fit per row ahead (direct forecasts).
    const weights = new Map(steps.map((h) => [h, fitLinear({ ...split, horizon: h })]));
    context.add('linear', `least squares on the last ${LAGS} values of every input column${steps.length > 1 ? ', one fit per row ahead' : ''}`, (t, k, h) =>
      linearForecast(context.carriedRows, weights.get(h)![k], t),
    );
  } else leftOut.push(`linear: a scored row has fewer than ${LAGS - 1} rows before it`);
  return { scores, season, scales, leftOut, forecasters };
}

/** What the baselines of one split share while they are fitted and scored. */
interface BaselineContext {
  readonly split: SeriesSplit;
  /** Each target column's values (NaN where missing). */
  readonly columns: readonly Float64Array[];
  /** Each target column carried forward (what was last seen at each row). */
  readonly carried: readonly Float64Array[];
  /** Every row with its values carried forward, for the linear baseline. */
  readonly carriedRows: readonly (readonly number[])[];
  /** The rows ahead scored. */
  readonly steps: readonly number[];
  /** The season in rows, or null. */
  readonly m: number | null;
  /** Why a baseline was left out, one line each; and `add` scores a baseline and keeps it. */
  readonly leftOut: string[];
  readonly add: (name: string, description: string, forecast: Forecaster) => void;
}

/** The season: chosen from the first target's fitting rows (gaps interpolated), or as asked. */
function seasonOf(first: Float64Array, gappy: boolean, fitRows: number, options: BaselineOptions): SeasonChoice {
  if (options.season === undefined) return chooseSeason(gappy ? interpolated(first) : first, options.spacing ?? null);
  if (options.season === null) return { season: null, reason: 'no season (as asked)', candidates: [] };
  if (!(Number.isInteger(options.season) && options.season >= 1 && options.season < fitRows)) {
    fail('invalid_option', 'season', `a whole number of rows in [1, ${fitRows - 1}] (shorter than the fitting rows)`, String(options.season));
  }
  return { season: options.season, reason: `season of ${options.season} rows (as asked)`, candidates: [] };
}

/** Seasonal naive: the value whole seasons before the forecast row, where every scored row has one. */
function addSeasonalNaive({ split, columns, carried, steps, leftOut, add }: BaselineContext, m: number): void {
  const horizon = split.horizon;
  const back = (h: number) => Math.ceil(h / m) * m;
  // The scored row farthest back: the first target row less the most seasons any row ahead reaches back.
  const reach = Math.max(...steps.map((h) => back(h) - h));
  if (!split.positions.every((t) => t + horizon - reach >= 0)) {
    leftOut.push(`seasonal naive: a scored row has no row ${reach} rows before it`);
    return;
  }
  const far = back(horizon);
  // Without a value there, whole seasons further back (the last value seen when none has one).
  const seasonBack = (t: number, k: number, h: number) => {
    for (let r = t + h - back(h); r >= 0; r -= m) if (!Number.isNaN(columns[k][r])) return columns[k][r];
    return carried[k][t];
  };
  add('seasonal naive', `the value one season (${m} rows) before the forecast row${far > m ? ` (up to ${far / m} seasons back)` : ''}`, seasonBack);
}

/** Forecasts made at every row, for each row ahead scored (forecasts.get(h)[k][t]); null when one cannot be made. */
function byStep(steps: readonly number[], make: (h: number) => Float64Array[] | null): ((t: number, k: number, h: number) => number) | null {
  const made = new Map<number, Float64Array[]>();
  for (const h of steps) {
    const f = make(h);
    if (f === null) return null;
    made.set(h, f);
  }
  return (t, k, h) => made.get(h)![k][t];
}

/** One exponential smoothing method: fitted once per column (the one-step error does not depend on the rows ahead), run once per row ahead. */
function addSmoothing({ split, columns, steps, m, leftOut, add }: BaselineContext, { method, name, what }: (typeof SMOOTHING)[number]): void {
  const seasonal = method === 'additive' || method === 'multiplicative';
  if (seasonal && m === null) return;
  const fitRows = split.fitRows;
  const fits = columns.map((series) => fitSmoothing(series, fitRows, method, m ?? 1));
  const forecast = fits.every((f) => f !== null)
    ? byStep(steps, (h) => {
        const out = columns.map((series) => new Float64Array(series.length));
        return columns.every((series, k) => !Number.isNaN(runSmoothing(series, fitRows, fits[k]!, h, out[k]))) ? out : null;
      })
    : null;
  if (forecast === null) {
    leftOut.push(
      `${name}: ${method === 'multiplicative' ? 'needs values above 0 and two seasons of fitting rows' : `needs at least ${seasonal ? 2 * (m ?? 1) : 3} fitting rows`}`,
    );
    return;
  }
  const fit = fits[0]!;
  const parameters = `α ${figure(fit.alpha)}${method === 'simple' ? '' : `, β ${figure(fit.beta)}`}${seasonal ? `, γ ${figure(fit.gamma)}` : ''}${method === 'damped' ? `, φ ${figure(fit.phi)}` : ''}`;
  add(name, `${what}, ${parameters}${columns.length > 1 ? ' (first target)' : ''}`, forecast);
}

/** The Theta method, once per row ahead. */
function addTheta({ split, columns, steps, m, leftOut, add }: BaselineContext): void {
  let thetaAlpha = Number.NaN;
  let thetaAdjustment: string | null = null;
  const theta = byStep(steps, (h) => {
    const made = columns.map((series) => thetaForecasts(series, split.fitRows, h, m));
    if (!made.every((f) => f !== null)) return null;
    thetaAlpha = made[0]!.alpha;
    thetaAdjustment = made[0]!.adjustment;
    return made.map((f) => f!.forecasts);
  });
  if (theta === null) {
    leftOut.push('Theta: needs at least 3 fitting rows');
    return;
  }
  add(
    'Theta',
    `simple smoothing with half the trend line's slope as drift, α ${figure(thetaAlpha)}${thetaAdjustment === null ? '' : `, season taken out (${thetaAdjustment})`}`,
    theta,
  );
}

/** The baseline with the lowest overall MASE when every target has a scale, else the lowest overall MAE. */
export function bestBaseline(scores: readonly BaselineScore[]): BaselineScore {
  const key = (s: BaselineScore) => s.overall.mase ?? s.overall.mae;
  return scores.reduce((best, s) => (key(s) < key(best) ? s : best));
}

/** A column with each missing value (NaN) replaced by the last value before it (NaN before the first). */
function carryForward(column: Float64Array): Float64Array {
  const out = Float64Array.from(column);
  for (let t = 1; t < out.length; t++) if (Number.isNaN(out[t])) out[t] = out[t - 1];
  return out;
}

/** Rows with each missing value replaced by its column's last value before it (the first value after it at the start). */
function carryRows(values: readonly (readonly number[])[]): number[][] {
  const width = values[0]?.length ?? 0;
  const columns = Array.from({ length: width }, (_, c) => interpolated(carryForward(Float64Array.from(values, (row) => row[c]))));
  return values.map((_, t) => columns.map((column) => column[t]));
}
