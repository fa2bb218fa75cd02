/**
 * The Theta method (Assimakopoulos & Nikolopoulos, "The theta model: a decomposition approach to forecasting",
 * IJF 16, 2000) in the form Hyndman & Billah ("Unmasking the Theta method", IJF 19, 2003) show it equals: simple
 * exponential smoothing with a drift of half the slope b₀ of the least-squares line through the fitting rows,
 *   ŷ_{t+h|t} = ℓ_t + (b₀ / 2) · (h − 1 + (1 − (1 − α)^{t+1}) / α),
 * on the seasonally adjusted series when the M4 benchmarks' 90% test finds the season (Makridakis, Spiliotis &
 * Assimakopoulos 2020): classical multiplicative decomposition, or additive when some value is not positive (a
 * choice of ours: ratios need positive values), then reseasonalised. With missing values (NaN) the season is found
 * on the series with its gaps interpolated, the line is fitted to the rows with a value, and the smoothing skips the
 * gaps (smoothing.ts).
 */
import { interpolated } from './missing.js';
import { fitSmoothing, runSmoothing } from './smoothing.js';
import { isSeasonal, seasonalIndices } from './seasonality.js';

/** What the Theta method fitted, and its forecasts. */
export interface ThetaForecast {
  /** forecasts[t]: the forecast made at row t of row t + horizon. */
  readonly forecasts: Float64Array;
  /** The smoothing parameter α. */
  readonly alpha: number;
  /** The slope b₀ of the line through the fitting rows (of the adjusted series). */
  readonly slope: number;
  /** How the season was taken out, or null when the test found none (or none was given). */
  readonly adjustment: 'multiplicative' | 'additive' | null;
}

/** The slope of the least-squares line of y on t over the rows t < count with a value (NaN: missing). */
export function lineSlope(series: ArrayLike<number>, count: number): number {
  let n = 0;
  let tMean = 0;
  for (let t = 0; t < count; t++) {
    if (Number.isNaN(series[t])) continue;
    n++;
    tMean += t;
  }
  if (n === 0) return 0;
  tMean /= n;
  let yMean = 0;
  for (let t = 0; t < count; t++) if (!Number.isNaN(series[t])) yMean += series[t] / n;
  let sxy = 0;
  let sxx = 0;
  for (let t = 0; t < count; t++) {
    if (Number.isNaN(series[t])) continue;
    sxy += (t - tMean) * (series[t] - yMean);
    sxx += (t - tMean) ** 2;
  }
  return sxx > 0 ? sxy / sxx : 0;
}

/** The Theta method fitted on rows [0, count) and run over every row; null with fewer than 3 fitting rows. */
export function thetaForecasts(series: ArrayLike<number>, count: number, horizon: number, season: number | null): ThetaForecast | null {
  const n = series.length;
  let adjusted: ArrayLike<number> = series;
  let indices: Float64Array | null = null;
  let adjustment: ThetaForecast['adjustment'] = null;
  let gappy = false;
  for (let t = 0; t < n && !gappy; t++) gappy = Number.isNaN(series[t]);
  const whole = gappy ? interpolated(series) : series;
  if (
    season !== null &&
    season >= 2 &&
    isSeasonal(
      Array.from({ length: count }, (_, i) => whole[i]),
      season,
    )
  ) {
    let positive = true;
    for (let t = 0; t < n && positive; t++) positive = whole[t] > 0;
    adjustment = positive ? 'multiplicative' : 'additive';
    indices = seasonalIndices(whole, count, season, positive);
    const out = new Float64Array(n);
    for (let t = 0; t < n; t++) out[t] = positive ? series[t] / indices[t % season] : series[t] - indices[t % season];
    adjusted = out;
  }
  const fit = fitSmoothing(adjusted, count, 'simple');
  if (fit === null) return null;
  const slope = lineSlope(adjusted, count);
  const forecasts = new Float64Array(n);
  runSmoothing(adjusted, count, fit, horizon, forecasts);
  const alpha = fit.alpha;
  for (let t = 0; t < n; t++) {
    let f = forecasts[t] + (slope / 2) * (horizon - 1 + (1 - (1 - alpha) ** (t + 1)) / alpha);
    if (indices !== null && season !== null) {
      const s = indices[(t + horizon) % season];
      f = adjustment === 'multiplicative' ? f * s : f + s;
    }
    forecasts[t] = f;
  }
  return { forecasts, alpha, slope, adjustment };
}
