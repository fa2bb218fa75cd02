/** The split, scores and options of the forecasting baselines (baselines.ts), as types. */
import type { ForecastErrors } from './scores.js';
import type { SeasonChoice, Spacing } from './seasonality.js';
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
  /**
   * Rows ahead to score, each up to `horizon` (default: `horizon` alone). Every one scores the same target rows,
   * t + horizon for t in `positions`, each forecast made `h` rows before its target row.
   */
  readonly rowsAhead?: readonly number[];
}

/** Errors at one number of rows ahead. */
export interface StepErrors {
  /** Rows ahead of the row the forecasts were made at. */
  readonly rowsAhead: number;
  /** Errors over every target there (MASE: the mean over targets of the scaled errors). */
  readonly overall: ForecastErrors;
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
  /** With several rows ahead (`SeriesSplit.rowsAhead`), the errors at each, nearest first. */
  readonly byRowsAhead?: readonly StepErrors[];
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
  /** Each baseline's forecaster, in the order of `scores` (for scores computed later, such as intervals). */
  readonly forecasters: readonly Forecaster[];
}

/** A forecaster: the forecast of target k for row t + h, made at row t (h: the split's horizon unless given). */
export type Forecaster = (t: number, k: number, h: number) => number;

/** Options of `forecastBaselines`. */
export interface BaselineOptions {
  /** Rows in a season, or null for none; undefined chooses one (chooseSeason). */
  readonly season?: number | null;
  /** How the rows are spaced in time (from a time column), for the season's candidates. */
  readonly spacing?: Spacing | null;
}
