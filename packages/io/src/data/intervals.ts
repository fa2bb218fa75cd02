/**
 * Prediction intervals and how they are scored.
 * - Split conformal intervals (Vovk, Gammerman & Shafer, "Algorithmic Learning in a Random World", 2005; as
 *   Angelopoulos & Bates, "A Gentle Introduction to Conformal Prediction", 2021, state it): the absolute errors of
 *   forecasts on rows the model was not fitted to (the validation part) are sorted, and the ⌈(n + 1)·level⌉-th
 *   smallest of the n is the half-width: forecast ± it covers a new value with probability at least `level` when
 *   errors are exchangeable. A series' errors are not (they drift and cluster in time), so the coverage is a
 *   target, checked on the test part, not a guarantee.
 * - Scores, as the M4 competition scored intervals (Makridakis, Spiliotis & Assimakopoulos, IJF 36, 2020): the
 *   share of actual values inside, and the mean scaled interval score MSIS = mean of [(U − L) + (2/α)(L − y)·[y < L]
 *   + (2/α)(y − U)·[y > U]] divided by the series' MASE scale, α = 1 − level.
 */
import { fail } from '@weft/core';
import { rowsAheadOf } from './baselines.js';
import type { Forecaster, SeriesSplit } from './baselines.js';

/** The conformal half-width at `level` from absolute errors (Infinity when there are too few for the level). */
export function conformalHalfWidth(errors: readonly number[], level: number): number {
  if (!(level > 0 && level < 1)) fail('invalid_option', 'interval level', 'a share between 0 and 1 (0.95 for 95%)', String(level));
  const sorted = errors
    .filter((e) => Number.isFinite(e))
    .map(Math.abs)
    .sort((a, b) => a - b);
  const rank = Math.ceil((sorted.length + 1) * level);
  return rank > sorted.length ? Infinity : sorted[rank - 1];
}

/** How prediction intervals did on scored values. */
export interface IntervalScores {
  /** The level asked for (0.95 for 95%). */
  readonly level: number;
  /** Share of actual values inside their interval. */
  readonly coverage: number;
  /** Mean width of the intervals, in the data's units. */
  readonly meanWidth: number;
  /** Mean scaled interval score (null without a scale). */
  readonly msis: number | null;
  /** Values scored. */
  readonly count: number;
}

/** Adds scored values one at a time. */
export class IntervalScoreSum {
  private inside = 0;
  private width = 0;
  private scored = 0;
  private scaledCount = 0;
  private n = 0;

  constructor(private readonly level: number) {}

  /** One value and its interval [lower, upper], with its series' MASE scale. */
  add(actual: number, lower: number, upper: number, scale = NaN): void {
    const alpha = 1 - this.level;
    if (actual >= lower && actual <= upper) this.inside++;
    this.width += upper - lower;
    const score = upper - lower + (actual < lower ? (2 / alpha) * (lower - actual) : 0) + (actual > upper ? (2 / alpha) * (actual - upper) : 0);
    if (scale > 0) {
      this.scored += score / scale;
      this.scaledCount++;
    }
    this.n++;
  }

  /** The scores so far. */
  result(): IntervalScores {
    return {
      level: this.level,
      coverage: this.n === 0 ? NaN : this.inside / this.n,
      meanWidth: this.n === 0 ? NaN : this.width / this.n,
      msis: this.scaledCount === 0 ? null : this.scored / this.scaledCount,
      count: this.n,
    };
  }
}

/** Scores prediction intervals on a split's observed target rows (every row ahead), each target scaled by its MASE scale. */
export function scoreIntervals(
  split: SeriesSplit,
  forecast: Forecaster,
  intervals: { readonly level: number; readonly halfWidth: readonly number[] },
  scales: readonly number[],
): IntervalScores {
  const sum = new IntervalScoreSum(intervals.level);
  const steps = rowsAheadOf(split);
  const targets = split.targets.length;
  steps.forEach((h, s) => {
    for (const position of split.positions) {
      const target = position + split.horizon;
      for (let k = 0; k < targets; k++) {
        const actual = split.values[target][split.targets[k]];
        // A target never observed (NaN) is not scored.
        if (Number.isNaN(actual)) continue;
        const f = forecast(target - h, k, h);
        const half = intervals.halfWidth[s * targets + k];
        sum.add(actual, f - half, f + half, scales[k]);
      }
    }
  });
  return sum.result();
}

/**
 * Each baseline's split conformal intervals at `level`, as the model's are made: half-widths per row ahead and target
 * from its own errors on the target rows [from, fitRows) (the validation part; the baselines were fitted on them too,
 * so these errors are in-sample and the intervals, if anything, narrow), scored on the split's test rows. In the
 * order of `baselines.scores`.
 */
export function baselineIntervals(
  split: SeriesSplit,
  baselines: { readonly forecasters: readonly Forecaster[]; readonly scales: readonly number[] },
  level: number,
  from: number,
  halfWidths?: readonly (readonly number[])[],
): IntervalScores[] {
  const errors = halfWidths === undefined ? baselineErrors(split, baselines, from) : null;
  return baselines.forecasters.map((forecast, b) => {
    const halfWidth = halfWidths?.[b] ?? errors![b].map((e) => conformalHalfWidth(e, level));
    return scoreIntervals(split, forecast, { level, halfWidth }, baselines.scales);
  });
}

/**
 * Each baseline's errors (actual − forecast) on the target rows [from, fitRows), per row ahead and target (rows
 * ahead outer), in the order of `baselines.forecasters`: what its intervals are made from (baselineIntervals), or,
 * for many series, pooled with other series' (panel.ts); `halfWidths` then gives baselineIntervals the result.
 */
export function baselineErrors(split: SeriesSplit, baselines: { readonly forecasters: readonly Forecaster[] }, from: number): number[][][] {
  const steps = rowsAheadOf(split);
  return baselines.forecasters.map((forecast) =>
    steps.flatMap((h) =>
      split.targets.map((j, k) => {
        const errors: number[] = [];
        for (let r = Math.max(from, h); r < split.fitRows; r++) errors.push(split.values[r][j] - forecast(r - h, k, h));
        return errors;
      }),
    ),
  );
}
