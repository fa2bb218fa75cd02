/**
 * Row-wise softmax cross-entropy over integer targets, out-first.
 *
 * For each row r of the [rows, classes] logits z, with m = max_j z_j (the log-sum-exp shift, common practice):
 *   log p_j = z_j − m − log Σ_k exp(z_k − m),   loss_r = −log p_{target_r}.
 * Every exponent is ≤ 0, so no logit, however large, overflows. The probabilities are written to `probabilities`
 * (for the reverse sweep: ∂loss_r/∂z_j = p_j − [j = target_r]). `probabilities` may alias `logits`.
 */
import type { FloatArray } from '../dtype.js';

/**
 * log Σ_j exp(row[offset + j]) over `width` entries, shifted by the row's largest entry m so that no exponent is
 * positive: m + log Σ exp(row_j − m), summed in index order (common practice). The one log-sum-exp of weft's
 * JavaScript code; `crossEntropyRows` below fuses the same shift with writing the probabilities.
 */
export function logSumExp(row: ArrayLike<number>, offset: number, width: number): number {
  let m = -Infinity;
  for (let j = 0; j < width; j++) if (row[offset + j] > m) m = row[offset + j];
  let total = 0;
  for (let j = 0; j < width; j++) total += Math.exp(row[offset + j] - m);
  return m + Math.log(total);
}

/**
 * The index of the largest entry (the first of equals; -1 for none, NaN entries never chosen), by a loop: a spread
 * into Math.max overflows the call stack on large arrays (a 150,000-word vocabulary).
 */
export function indexOfLargest(values: ArrayLike<number>): number {
  let best = -1;
  for (let i = 0; i < values.length; i++) if (best < 0 ? !Number.isNaN(values[i]) : values[i] > values[best]) best = i;
  return best;
}

/**
 * Writes each row's loss into `losses` and its softmax probabilities into `probabilities` (see above); returns
 * `losses`. Aliasing: `probabilities` may alias `logits`; `losses` must not alias `probabilities` (a row's loss is
 * written before its probabilities are scaled).
 */
export function crossEntropyRows(
  losses: FloatArray,
  probabilities: FloatArray,
  logits: FloatArray,
  targets: Int32Array,
  rows: number,
  classes: number,
): FloatArray {
  for (let r = 0; r < rows; r++) {
    const base = r * classes;
    let m = -Infinity;
    for (let j = 0; j < classes; j++) if (logits[base + j] > m) m = logits[base + j];
    const target = targets[r];
    const targetLogit = logits[base + target];
    let total = 0;
    for (let j = 0; j < classes; j++) {
      const e = Math.exp(logits[base + j] - m);
      probabilities[base + j] = e;
      total += e;
    }
    const logTotal = Math.log(total);
    losses[r] = -(targetLogit - m - logTotal);
    const inverse = 1 / total;
    for (let j = 0; j < classes; j++) probabilities[base + j] *= inverse;
  }
  return losses;
}
