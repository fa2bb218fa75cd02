/**
 * Exponential smoothing in component form (Hyndman, Koehler, Ord & Snyder, "Forecasting with Exponential
 * Smoothing", Springer 2008, ch. 2, Table 2.1), with additive, damped or no trend and additive, multiplicative or
 * no season:
 *   forecast made at t − 1:  ŷ_t = (ℓ + φ b) ⊕ s_{t−m}                    (⊕ is + or ×)
 *   level:   ℓ_t = α (y_t ⊖ s_{t−m}) + (1 − α)(ℓ_{t−1} + φ b_{t−1})
 *   trend:   b_t = β (ℓ_t − ℓ_{t−1}) + (1 − β) φ b_{t−1}
 *   season:  s_t = γ (y_t ⊖ (ℓ_{t−1} + φ b_{t−1})) + (1 − γ) s_{t−m}
 *   h ahead: ŷ_{t+h|t} = (ℓ_t + (φ + … + φ^h) b_t) ⊕ s_{t+h−m(k+1)},  k = ⌊(h − 1)/m⌋
 * Simple smoothing has no trend and no season; Holt's method φ = 1; the damped trend is Gardner & McKenzie (1985),
 * "Forecasting trends in time series", Management Science 31; Holt–Winters has φ = 1 and a season.
 *
 * Initial states are set from the first rows so that a noiseless line, or a line plus a repeating season, is
 * reproduced exactly (the states at time −1): trend b = (mean of season 2 − mean of season 1) / m, level
 * ℓ = mean of season 1 − b (m + 1) / 2, season s_j = y_j ⊖ (ℓ + (j + 1) b); without a season m = 1 and the first
 * two rows. Parameters minimise the sum of squared one-step errors over the fitting rows (HKOS 2008, §2.4 calls
 * this the least-squares criterion) by Nelder–Mead (minimise.ts), each mapped into its bounds by a logistic:
 * α ∈ [0.0001, 0.9999], β ∈ [0.0001, 0.9999], γ ∈ [0.0001, 1 − α], φ ∈ [0.8, 0.98] (the usual bounds of automatic
 * smoothing, HKOS 2008 §5.2, from memory).
 *
 * A missing value (NaN) updates nothing: the state moves on as its own forecast (level ℓ + φ b, trend φ b, the season
 * kept), as the state-space form does with a missing observation (HKOS 2008, from memory), and it adds no error.
 * Initial states are then set from the series with its gaps interpolated (missing.ts).
 *
 * Why one file of this length: the recursion is written twice, once general (the stepper) and once per form in
 * tight loops for fitting (oneStepError), and the two must agree to the bit (a test checks it); side by side, a
 * change to one is seen in the other.
 */
import { minimise } from './minimise.js';
import { interpolated } from './missing.js';

/** Which smoothing method: trend and season. */
export type SmoothingMethod = 'simple' | 'holt' | 'damped' | 'additive' | 'multiplicative';

/** The parameters and initial states of one smoothing method. */
export interface SmoothingParameters {
  /** The method. */
  readonly method: SmoothingMethod;
  /** Rows in a season (1 for the methods without one). */
  readonly season: number;
  /** Level smoothing α. */
  readonly alpha: number;
  /** Trend smoothing β (0 without a trend). */
  readonly beta: number;
  /** Season smoothing γ (0 without a season). */
  readonly gamma: number;
  /** Damping φ (1 for Holt and Holt–Winters; no trend: unused). */
  readonly phi: number;
  /** Level at time −1. */
  readonly level: number;
  /** Trend at time −1. */
  readonly trend: number;
  /** Season states for rows 0 … m − 1 (the values s_{j−m}). */
  readonly seasonal: readonly number[];
}

/** A fitted method and its fit. */
export interface SmoothingFit extends SmoothingParameters {
  /** Mean squared one-step error over the fitting rows. */
  readonly meanSquaredError: number;
}

const hasTrend = (m: SmoothingMethod) => m !== 'simple';
const hasSeason = (m: SmoothingMethod) => m === 'additive' || m === 'multiplicative';

/**
 * Runs a method over `series` with fixed parameters: returns the mean squared one-step error over rows
 * [0, count), and when `forecasts` is given, writes there the forecast made at each row t of row t + horizon
 * (every row of `series`, using only rows ≤ t). NaN when the multiplicative form meets a level or season ≤ 0.
 */
export function runSmoothing(series: ArrayLike<number>, count: number, p: SmoothingParameters, horizon = 1, forecasts: Float64Array | null = null): number {
  const stepper = new SmoothingStepper(p, horizon);
  let squared = 0;
  let observed = 0;
  const rows = forecasts === null ? count : series.length;
  for (let t = 0; t < rows; t++) {
    const y = series[t];
    if (t < count && !Number.isNaN(y)) {
      squared += (y - stepper.oneStep()) ** 2;
      observed++;
    }
    const ahead = stepper.next(y);
    if (Number.isNaN(ahead)) return NaN;
    if (forecasts !== null) forecasts[t] = ahead;
  }
  return squared / Math.max(1, observed);
}

/**
 * A smoothing method run one row at a time with fixed parameters: `next(y)` takes the row's value and returns the
 * forecast made at it of the row `horizon` ahead; `oneStep()` is the forecast of the next row before it is given.
 * runSmoothing is this stepper over a series. It allocates nothing after it is made.
 */
export class SmoothingStepper {
  // [level, slope, the value given]: numbers kept in a typed array, so stepping stores and boxes none.
  private readonly state = new Float64Array(3);
  private readonly ring: Float64Array;
  private readonly made = new Float64Array(1);
  private t = 0;
  private broken = false;
  private readonly m: number;

  constructor(
    private readonly p: SmoothingParameters,
    private readonly horizon = 1,
  ) {
    const seasonal = hasSeason(p.method);
    this.m = seasonal ? p.season : 1;
    this.ring = Float64Array.from(seasonal ? p.seasonal : [0]);
    this.state[LEVEL] = p.level;
    this.state[SLOPE] = hasTrend(p.method) ? p.trend : 0;
  }

  /** The one-step forecast of the next row, made at the row before it (what `next` will be given). */
  oneStep(): number {
    const { p, ring, state } = this;
    const seasonal = hasSeason(p.method);
    const base = state[LEVEL] + (hasTrend(p.method) ? p.phi : 0) * state[SLOPE];
    if (!seasonal) return base;
    const s = ring[this.t % this.m];
    return p.method === 'multiplicative' ? base * s : base + s;
  }

  /** Takes the next value and returns the forecast made at it (NaN once a multiplicative state is not positive). */
  next(y: number): number {
    this.state[GIVEN] = y;
    this.update();
    this.forecastInto(this.horizon, this.made, 0);
    return this.made[0];
  }

  /**
   * Takes the next value, `values[index]`, and writes the forecasts made at it into `into` from `at`, one per entry
   * of `rowsAhead` (as `ahead` gives them). Every number passes through arrays, so nothing is boxed in a hot loop.
   */
  nextFrom(values: ArrayLike<number>, index: number, rowsAhead: readonly number[], into: { [index: number]: number }, at: number): void {
    this.state[GIVEN] = values[index];
    this.update();
    for (let s = 0; s < rowsAhead.length; s++) this.forecastInto(rowsAhead[s], into, at + s);
  }

  /**
   * The forecast of the row `rows` ahead of the last value given (the same as `next` returned for its own horizon;
   * NaN once a multiplicative state is not positive).
   */
  ahead(rows: number): number {
    this.forecastInto(rows, this.made, 0);
    return this.made[0];
  }

  private update(): void {
    const { p, ring, m, state } = this;
    const y = state[GIVEN];
    const multiplicative = p.method === 'multiplicative';
    const trend = hasTrend(p.method);
    const seasonal = hasSeason(p.method);
    const phi = trend ? p.phi : 0;
    const j = this.t % m;
    const s = seasonal ? ring[j] : multiplicative ? 1 : 0;
    const level = state[LEVEL];
    const base = level + phi * state[SLOPE];
    if (Number.isNaN(y)) {
      // Missing: the state moves on as its own forecast.
      state[SLOPE] = phi * state[SLOPE];
      state[LEVEL] = base;
      this.t++;
      this.broken = this.broken || (multiplicative && !(base > 0));
      return;
    }
    const nextLevel = p.alpha * (seasonal ? (multiplicative ? y / s : y - s) : y) + (1 - p.alpha) * base;
    if (trend) state[SLOPE] = p.beta * (nextLevel - level) + (1 - p.beta) * phi * state[SLOPE];
    if (seasonal) ring[j] = p.gamma * (multiplicative ? y / base : y - base) + (1 - p.gamma) * s;
    state[LEVEL] = nextLevel;
    this.t++;
    this.broken = multiplicative && !(nextLevel > 0 && ring[j] > 0);
  }

  private forecastInto(rows: number, into: { [index: number]: number }, at: number): void {
    const { p, ring, m, state } = this;
    if (this.broken) {
      into[at] = NaN;
      return;
    }
    const phi = hasTrend(p.method) ? p.phi : 0;
    let damping = 0;
    for (let i = 1, power = 1; i <= rows; i++) damping += power *= phi;
    const ahead = state[LEVEL] + damping * state[SLOPE];
    if (!hasSeason(p.method)) {
      into[at] = ahead;
      return;
    }
    const sAhead = ring[(this.t - 1 + rows) % m];
    into[at] = p.method === 'multiplicative' ? ahead * sAhead : ahead + sAhead;
  }
}

const LEVEL = 0;
const SLOPE = 1;
const GIVEN = 2;

/**
 * The mean squared one-step error over rows [0, count) alone: runSmoothing's recursion in loops without its
 * forecast branch, one loop per form, as fitting calls it many times (same arithmetic, same order, same result).
 */
export function oneStepError(series: ArrayLike<number>, count: number, p: SmoothingParameters): number {
  const { alpha, beta, gamma } = p;
  let level = p.level;
  let squared = 0;
  // Rows with a value: the mean is over them (a missing value, NaN, adds no error and updates nothing).
  // (Counted in the loops below, which skip a NaN before counting.)
  let observed = 0;
  const mean = (sum: number) => sum / Math.max(1, observed);
  if (p.method === 'simple') {
    for (let t = 0; t < count; t++) {
      const y = series[t];
      if (Number.isNaN(y)) continue;
      squared += (y - level) ** 2;
      observed++;
      level = alpha * y + (1 - alpha) * level;
    }
    return mean(squared);
  }
  const phi = p.phi;
  let slope = p.trend;
  if (p.method === 'holt' || p.method === 'damped') {
    for (let t = 0; t < count; t++) {
      const y = series[t];
      const base = level + phi * slope;
      if (Number.isNaN(y)) {
        slope *= phi;
        level = base;
        continue;
      }
      squared += (y - base) ** 2;
      observed++;
      const next = alpha * y + (1 - alpha) * base;
      slope = beta * (next - level) + (1 - beta) * phi * slope;
      level = next;
    }
    return mean(squared);
  }
  const m = p.season;
  const ring = Float64Array.from(p.seasonal);
  if (p.method === 'additive') {
    for (let t = 0, j = 0; t < count; t++, j = j + 1 === m ? 0 : j + 1) {
      const y = series[t];
      const s = ring[j];
      const base = level + phi * slope;
      if (Number.isNaN(y)) {
        slope *= phi;
        level = base;
        continue;
      }
      squared += (y - (base + s)) ** 2;
      observed++;
      const next = alpha * (y - s) + (1 - alpha) * base;
      slope = beta * (next - level) + (1 - beta) * phi * slope;
      ring[j] = gamma * (y - base) + (1 - gamma) * s;
      level = next;
    }
    return mean(squared);
  }
  for (let t = 0, j = 0; t < count; t++, j = j + 1 === m ? 0 : j + 1) {
    const y = series[t];
    const s = ring[j];
    const base = level + phi * slope;
    if (Number.isNaN(y)) {
      slope *= phi;
      level = base;
      continue;
    }
    squared += (y - base * s) ** 2;
    observed++;
    const next = alpha * (y / s) + (1 - alpha) * base;
    slope = beta * (next - level) + (1 - beta) * phi * slope;
    ring[j] = gamma * (y / base) + (1 - gamma) * s;
    level = next;
    if (!(level > 0 && ring[j] > 0)) return NaN;
  }
  return mean(squared);
}

/** States at time −1 from the first rows (see the file's comment); null when there are too few rows. */
export function initialStates(
  series: ArrayLike<number>,
  method: SmoothingMethod,
  season: number,
): Pick<SmoothingParameters, 'level' | 'trend' | 'seasonal'> | null {
  const m = hasSeason(method) ? season : 1;
  if (series.length < 2 * m) return null;
  let first = 0;
  let second = 0;
  for (let j = 0; j < m; j++) {
    first += series[j] / m;
    second += series[m + j] / m;
  }
  const trend = hasTrend(method) ? (second - first) / m : 0;
  const level = hasTrend(method) ? first - (trend * (m + 1)) / 2 : first;
  if (!hasSeason(method)) return { level: hasTrend(method) ? level : series[0], trend, seasonal: [] };
  const seasonal: number[] = [];
  for (let j = 0; j < m; j++) {
    const base = level + (j + 1) * trend;
    seasonal.push(method === 'multiplicative' ? series[j] / base : series[j] - base);
  }
  return { level, trend, seasonal };
}

const logistic = (u: number) => 1 / (1 + Math.exp(-u));
const logit = (v: number) => Math.log(v / (1 - v));

/**
 * Fits a method to rows [0, count) of `series` by least squares on the one-step errors; null when it cannot be
 * fitted (fewer than two seasons of rows, or the multiplicative form on values that are not all positive).
 */
export function fitSmoothing(series: ArrayLike<number>, count: number, method: SmoothingMethod, season = 1): SmoothingFit | null {
  const fitted = Float64Array.from({ length: count }, (_, i) => series[i]);
  if (method === 'multiplicative' && !fitted.every((v) => v > 0 || Number.isNaN(v))) return null;
  const gappy = fitted.some((v) => Number.isNaN(v));
  const states = initialStates(gappy ? interpolated(fitted) : fitted, method, season);
  if (states === null || count < 3) return null;
  const lo = 0.0001;
  const hi = 0.9999;
  const parameters = (u: Float64Array): SmoothingParameters => {
    const alpha = lo + (hi - lo) * logistic(u[0]);
    const beta = hasTrend(method) ? lo + (hi - lo) * logistic(u[1]) : 0;
    const gamma = hasSeason(method) ? lo + (1 - alpha - lo) * logistic(u[2]) : 0;
    const phi = method === 'damped' ? 0.8 + 0.18 * logistic(u[hasSeason(method) ? 3 : 2]) : 1;
    return { method, season: hasSeason(method) ? season : 1, alpha, beta, gamma, phi, ...states };
  };
  // Small α, β and γ to start with: the multiplicative form can diverge over long series with large ones.
  const start: number[] = [logit((0.3 - lo) / (hi - lo))];
  if (hasTrend(method)) start.push(logit((0.05 - lo) / (hi - lo)));
  if (hasSeason(method)) start.push(logit(0.1 / 0.7));
  if (method === 'damped') start.push(logit(0.5));
  const best = minimise((u) => oneStepError(fitted, count, parameters(u)), start, { evaluations: 60 * start.length });
  const chosen = parameters(best.point);
  return { ...chosen, meanSquaredError: oneStepError(fitted, count, chosen) };
}
