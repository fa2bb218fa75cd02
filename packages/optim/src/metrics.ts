/**
 * Metrics computed from outputs and targets, outside the tape (common practice): mean cross-entropy (in nats)
 * with its perplexity e^{loss} and the accuracy of the arg-max class, and mean squared and mean absolute error,
 * each over the positions whose weight is positive.
 */
import { logSumExp } from '@weft/core';
import type { FloatArray } from '@weft/core';

/** How well outputs (logits) predict target classes, over the positions with positive weight. */
export interface ClassificationMetrics {
  /** Mean cross-entropy in nats. */
  readonly crossEntropy: number;
  /** e^crossEntropy: the effective number of equally likely choices. */
  readonly perplexity: number;
  /** Share of positions whose arg-max class is the target, in [0, 1]. */
  readonly accuracy: number;
  /** Positions counted. */
  readonly count: number;
}

/** How far output values are from target values, over the positions with positive weight. */
export interface RegressionMetrics {
  /** Mean of squared differences. */
  readonly meanSquaredError: number;
  /** Mean of absolute differences. */
  readonly meanAbsoluteError: number;
  /** Values counted. */
  readonly count: number;
}

/** Rows of [rows, classes] logits against one target per row; rows with weight 0 are skipped. */
export function classificationMetrics(
  logits: FloatArray,
  targets: Int32Array,
  weights: FloatArray | null,
  rows: number,
  classes: number,
): ClassificationMetrics {
  let total = 0;
  let correct = 0;
  let count = 0;
  for (let r = 0; r < rows; r++) {
    const w = weights === null ? 1 : weights[r];
    if (!(w > 0)) continue;
    const base = r * classes;
    let best = 0;
    let max = -Infinity;
    for (let j = 0; j < classes; j++) {
      if (logits[base + j] > max) {
        max = logits[base + j];
        best = j;
      }
    }
    total += w * (logSumExp(logits, base, classes) - logits[base + targets[r]]);
    if (best === targets[r]) correct += w;
    count += w;
  }
  const crossEntropy = count > 0 ? total / count : 0;
  return { crossEntropy, perplexity: Math.exp(crossEntropy), accuracy: count > 0 ? correct / count : 0, count };
}

/** Predictions against targets, `width` values per row, weighted per row or per value; weight 0 is skipped. */
export function regressionMetrics(predictions: FloatArray, targets: FloatArray, weights: FloatArray | null, rows: number, width: number): RegressionMetrics {
  let squared = 0;
  let absolute = 0;
  let count = 0;
  // Weights per row, or per value (rows × width).
  const perValue = weights !== null && weights.length === rows * width && width !== 1;
  for (let r = 0; r < rows; r++) {
    const rowWeight = weights === null ? 1 : perValue ? 1 : weights[r];
    if (!(rowWeight > 0)) continue;
    for (let j = 0; j < width; j++) {
      const w = perValue ? weights![r * width + j] : rowWeight;
      if (!(w > 0)) continue;
      const d = predictions[r * width + j] - targets[r * width + j];
      squared += w * d * d;
      absolute += w * Math.abs(d);
      count += w;
    }
  }
  return { meanSquaredError: count > 0 ? squared / count : 0, meanAbsoluteError: count > 0 ? absolute / count : 0, count };
}
