/**
 * Losses on the tape, each to a scalar (shape [1]).
 *
 * crossEntropyAtTargets: the weighted mean over rows of −log softmax(z_r)[t_r], computed through the log-sum-exp
 * shift so that logits of any size stay finite (see kernels/softmax.ts). Per-row weights (0 for padding, 1
 * otherwise, or any non-negative value) let a masked batch count only its real positions. Backward (common
 * practice): ∂L/∂z_rj = w_r / Σw · (p_rj − [j = t_r]).
 *
 * meanSquaredError: mean over all elements of (p − y)², optionally weighted per row. Backward: ∂L/∂p = 2w(p − y)/n,
 * ∂L/∂y = −2w(p − y)/n, n the weighted element count.
 */
import type { FloatArray } from '../dtype.js';
import { fail, formatShape } from '../errors.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { lastAxis, requireBackend, requireRank, requireSameDType, requireShape } from './checks.js';

/** What softmax cross-entropy saves for backward. */
interface CrossEntropySaved {
  logits: Tensor;
  /** softmax of each row of the logits. */
  probabilities: FloatArray;
  /** The per-row weights, or null for all ones. */
  weights: FloatArray | null;
  targets: Int32Array;
  /** 1 / Σ weights (0 when they sum to 0). */
  normaliser: number;
}

const noIntegers = new Int32Array(0);

const crossEntropyKind: OperationKind<CrossEntropySaved> = {
  name: 'crossEntropyAtTargets',
  saves: () => ({ logits: noTensor, probabilities: noTensor.data, weights: null, targets: noIntegers, normaliser: 0 }),
  backward(node, tape): void {
    const { logits, probabilities, weights, targets, normaliser } = node.saved;
    const [rows, classes] = logits.shape;
    const share = node.output.gradient![0] * normaliser;
    const gl = tape.gradientOf(logits);
    for (let r = 0; r < rows; r++) {
      const w = weights === null ? share : share * weights[r];
      if (w === 0) continue;
      const base = r * classes;
      for (let j = 0; j < classes; j++) gl[base + j] += w * probabilities[base + j];
      gl[base + targets[r]] -= w;
    }
  },
};

/** Options of `crossEntropyAtTargets`. */
export interface CrossEntropyOptions {
  /** One non-negative weight per row (0 masks the row out). The loss is Σ w_r·loss_r / Σ w_r. */
  readonly weights?: FloatArray | readonly number[];
}

/** Weighted mean softmax cross-entropy of [rows, classes] logits against integer targets, one per row. */
export function crossEntropyAtTargets(tape: Tape, logits: Tensor, targets: Int32Array | readonly number[], options: CrossEntropyOptions = {}): Tensor {
  requireRank('crossEntropyAtTargets', 'logits', logits, 2);
  requireBackend(tape, 'crossEntropyAtTargets', 'logits', logits);
  const [rows, classes] = logits.shape;
  if (targets.length !== rows) {
    fail('shape_mismatch', 'crossEntropyAtTargets.targets', `${rows} targets (one per row of logits ${formatShape(logits.shape)})`, `${targets.length}`);
  }
  const picked = targets instanceof Int32Array ? targets : Int32Array.from(targets);
  for (let r = 0; r < rows; r++) {
    const t = (targets as ArrayLike<number>)[r];
    if (!Number.isInteger(t) || t < 0 || t >= classes) {
      fail('invalid_argument', `crossEntropyAtTargets.targets[${r}]`, `a class index in [0, ${classes})`, String(t));
    }
  }
  let weights: FloatArray | null = null;
  let total = rows;
  if (options.weights !== undefined) {
    const given = options.weights;
    if (given.length !== rows) {
      fail('shape_mismatch', 'crossEntropyAtTargets.weights', `${rows} weights`, `${given.length}`);
    }
    weights = tape.buffer(logits.dtype, rows);
    total = 0;
    for (let r = 0; r < rows; r++) {
      const w = given[r];
      if (!(w >= 0) || !Number.isFinite(w)) {
        fail('invalid_argument', `crossEntropyAtTargets.weights[${r}]`, 'a finite number ≥ 0', String(w));
      }
      weights[r] = w;
      total += w;
    }
  }
  const probabilities = tape.buffer(logits.dtype, logits.size);
  const losses = tape.buffer(logits.dtype, rows);
  tape.kernels.crossEntropyRows(losses, probabilities, logits.data, picked, rows, classes);
  let weighted = 0;
  for (let r = 0; r < rows; r++) weighted += weights === null ? losses[r] : weights[r] * losses[r];
  const normaliser = total > 0 ? 1 / total : 0;
  const out = tape.output([1], logits.dtype, logits.tracked);
  out.data[0] = weighted * normaliser;
  const saved = tape.record(crossEntropyKind, out);
  if (saved !== null) {
    saved.logits = logits;
    saved.probabilities = probabilities;
    saved.weights = weights;
    saved.targets = picked;
    saved.normaliser = normaliser;
  }
  return out;
}

/** What the mean squared error saves for backward. */
interface SquaredErrorSaved {
  prediction: Tensor;
  target: Tensor;
  /** The per-row weights, or null for all ones. */
  weights: FloatArray | null;
  /** 2 / the weighted element count (0 for none). */
  factor: number;
}

const squaredErrorKind: OperationKind<SquaredErrorSaved> = {
  name: 'meanSquaredError',
  saves: () => ({ prediction: noTensor, target: noTensor, weights: null, factor: 0 }),
  backward(node, tape): void {
    const { prediction, target, weights } = node.saved;
    const factor = node.output.gradient![0] * node.saved.factor;
    const width = lastAxis(prediction);
    const n = prediction.size;
    const gp = prediction.tracked ? tape.gradientOf(prediction) : null;
    const gt = target.tracked ? tape.gradientOf(target) : null;
    for (let i = 0; i < n; i++) {
      const w = weights === null ? factor : factor * weights[weights.length === n ? i : Math.floor(i / width)];
      const d = w * (prediction.data[i] - target.data[i]);
      if (gp !== null) gp[i] += d;
      if (gt !== null) gt[i] -= d;
    }
  },
};

/** Options of `meanSquaredError`. */
export interface SquaredErrorOptions {
  /**
   * One non-negative weight per row (rows = all but the last axis; 0 masks a padded position), the loss then
   * Σ_r w_r Σ_c (p − y)² / (width · Σ_r w_r); or one per value (as many as the prediction has; 0 masks a value that
   * was never observed), the loss then Σ_i w_i (p_i − y_i)² / Σ_i w_i.
   */
  readonly weights?: FloatArray | readonly number[];
}

/** Mean over all elements of (prediction − target)², optionally weighted per row or per value. */
export function meanSquaredError(tape: Tape, prediction: Tensor, target: Tensor, options: SquaredErrorOptions = {}): Tensor {
  requireSameDType('meanSquaredError', 'target', target, prediction.dtype);
  requireBackend(tape, 'meanSquaredError', 'prediction', prediction);
  requireBackend(tape, 'meanSquaredError', 'target', target);
  requireShape('meanSquaredError', 'target', target, prediction.shape);
  const width = lastAxis(prediction);
  const rows = width === 0 ? 0 : prediction.size / width;
  let weights: FloatArray | null = null;
  let count = prediction.size;
  if (options.weights !== undefined) {
    const given = options.weights;
    // One weight per row, or one per value (a missing target weighs 0 beside its row's observed ones).
    const perValue = given.length === prediction.size && width !== 1;
    if (given.length !== rows && !perValue)
      fail('shape_mismatch', 'meanSquaredError.weights', `${rows} weights (one per row) or ${prediction.size} (one per value)`, `${given.length}`);
    weights = tape.buffer(prediction.dtype, given.length);
    let total = 0;
    for (let r = 0; r < given.length; r++) {
      const w = given[r];
      if (!(w >= 0) || !Number.isFinite(w)) fail('invalid_argument', `meanSquaredError.weights[${r}]`, 'a finite number ≥ 0', String(w));
      weights[r] = w;
      total += w;
    }
    count = perValue ? total : total * width;
  }
  let sum = 0;
  for (let i = 0; i < prediction.size; i++) {
    const d = prediction.data[i] - target.data[i];
    sum += weights === null ? d * d : weights[weights.length === prediction.size ? i : Math.floor(i / width)] * d * d;
  }
  const out = tape.output([1], prediction.dtype, prediction.tracked || target.tracked);
  out.data[0] = count === 0 ? 0 : sum / count;
  const saved = tape.record(squaredErrorKind, out);
  if (saved !== null) {
    saved.prediction = prediction;
    saved.target = target;
    saved.weights = weights;
    saved.factor = count === 0 ? 0 : 2 / count;
  }
  return out;
}
