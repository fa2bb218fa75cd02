/**
 * The classifier baseline a practitioner tries first on sequences: summary features of each sequence (per column:
 * mean, deviation, minimum, maximum, last value and least-squares slope over the steps) into a multinomial logistic
 * regression with an L2 penalty (common practice; Hastie, Tibshirani & Friedman, "The Elements of Statistical
 * Learning", 2nd ed., §4.4), features standardised on the training sequences. The loss
 *   L(W) = −(1/n) Σ_i log softmax(W x_i)_{y_i} + (λ/2) ‖W without its bias column‖²
 * is convex; it is minimised by gradient descent with Armijo backtracking (Nocedal & Wright, "Numerical
 * Optimization", 2nd ed., Alg. 3.1) until the gradient's norm is below 1e-6 or 2,000 steps.
 */

/** The summary features of one sequence of `width` numbers per step (steps × width, row-major). */
export function summaryFeatures(values: ArrayLike<number>, steps: number, width: number): number[] {
  const out: number[] = [];
  for (let c = 0; c < width; c++) {
    let mean = 0;
    let low = Infinity;
    let high = -Infinity;
    for (let t = 0; t < steps; t++) {
      const v = values[t * width + c];
      mean += v / steps;
      low = Math.min(low, v);
      high = Math.max(high, v);
    }
    let variance = 0;
    let sxy = 0;
    let sxx = 0;
    const tMean = (steps - 1) / 2;
    for (let t = 0; t < steps; t++) {
      const v = values[t * width + c];
      variance += (v - mean) ** 2 / steps;
      sxy += (t - tMean) * (v - mean);
      sxx += (t - tMean) ** 2;
    }
    out.push(mean, Math.sqrt(variance), low, high, values[(steps - 1) * width + c], sxx > 0 ? sxy / sxx : 0);
  }
  return out;
}

/** A fitted logistic regression: weights per class over [1, standardised features]. */
export interface LogisticModel {
  /** classes × (features + 1), the bias first in each row. */
  readonly weights: Float64Array;
  /** How many classes. */
  readonly classes: number;
  /** How many features per row. */
  readonly features: number;
  /** The training features' means. */
  readonly mean: Float64Array;
  /** The training features' deviations (1 where a feature is constant). */
  readonly deviation: Float64Array;
  /** The L2 penalty λ. */
  readonly penalty: number;
}

function standardise(rows: readonly (readonly number[])[], features: number) {
  const mean = new Float64Array(features);
  const deviation = new Float64Array(features);
  for (const row of rows) for (let f = 0; f < features; f++) mean[f] += row[f] / rows.length;
  for (const row of rows) for (let f = 0; f < features; f++) deviation[f] += (row[f] - mean[f]) ** 2 / rows.length;
  for (let f = 0; f < features; f++) deviation[f] = deviation[f] > 0 ? Math.sqrt(deviation[f]) : 1;
  return { mean, deviation };
}

/** The penalised loss and (into `gradient`) its gradient at `w`, over standardised rows `x` (n × (features + 1)). */
export function logisticLoss(
  w: Float64Array,
  x: Float64Array,
  labels: ArrayLike<number>,
  classes: number,
  penalty: number,
  gradient: Float64Array | null,
): number {
  const p = w.length / classes;
  const n = labels.length;
  const scores = new Float64Array(classes);
  let loss = 0;
  gradient?.fill(0);
  for (let i = 0; i < n; i++) {
    let most = -Infinity;
    for (let k = 0; k < classes; k++) {
      let s = 0;
      for (let f = 0; f < p; f++) s += w[k * p + f] * x[i * p + f];
      scores[k] = s;
      most = Math.max(most, s);
    }
    let sum = 0;
    for (let k = 0; k < classes; k++) sum += Math.exp(scores[k] - most);
    const logSum = most + Math.log(sum);
    loss += (logSum - scores[labels[i]]) / n;
    if (gradient !== null) {
      for (let k = 0; k < classes; k++) {
        const residual = Math.exp(scores[k] - logSum) - (k === labels[i] ? 1 : 0);
        for (let f = 0; f < p; f++) gradient[k * p + f] += (residual * x[i * p + f]) / n;
      }
    }
  }
  for (let k = 0; k < classes; k++) {
    for (let f = 1; f < p; f++) {
      loss += (penalty / 2) * w[k * p + f] ** 2;
      if (gradient !== null) gradient[k * p + f] += penalty * w[k * p + f];
    }
  }
  return loss;
}

/** Fits the regression on feature rows and class indexes (0 … classes − 1) with penalty λ. */
export function fitLogistic(rows: readonly (readonly number[])[], labels: ArrayLike<number>, classes: number, penalty: number): LogisticModel {
  const features = rows[0]?.length ?? 0;
  const p = features + 1;
  const { mean, deviation } = standardise(rows, features);
  const x = new Float64Array(rows.length * p);
  rows.forEach((row, i) => {
    x[i * p] = 1;
    for (let f = 0; f < features; f++) x[i * p + 1 + f] = (row[f] - mean[f]) / deviation[f];
  });
  const w = new Float64Array(classes * p);
  const gradient = new Float64Array(w.length);
  const trial = new Float64Array(w.length);
  let loss = logisticLoss(w, x, labels, classes, penalty, gradient);
  let step = 1;
  for (let iteration = 0; iteration < 2000; iteration++) {
    let norm = 0;
    for (const g of gradient) norm += g * g;
    if (Math.sqrt(norm) < 1e-6) break;
    // Armijo: shrink the step until the loss falls by at least 1e-4 · step · ‖g‖².
    for (step = Math.min(step * 2, 64); ; step /= 2) {
      for (let i = 0; i < w.length; i++) trial[i] = w[i] - step * gradient[i];
      const next = logisticLoss(trial, x, labels, classes, penalty, null);
      if (next <= loss - 1e-4 * step * norm || step < 1e-12) {
        w.set(trial);
        loss = logisticLoss(w, x, labels, classes, penalty, gradient);
        break;
      }
    }
  }
  return { weights: w, classes, features, mean, deviation, penalty };
}

/** The most likely class of a feature row. */
export function predictLogistic(model: LogisticModel, row: readonly number[]): number {
  const p = model.features + 1;
  let best = 0;
  let bestScore = -Infinity;
  for (let k = 0; k < model.classes; k++) {
    let s = model.weights[k * p];
    for (let f = 0; f < model.features; f++) s += model.weights[k * p + 1 + f] * ((row[f] - model.mean[f]) / model.deviation[f]);
    if (s > bestScore) [best, bestScore] = [k, s];
  }
  return best;
}

/** The penalties tried when one is chosen on validation rows. */
export const LOGISTIC_PENALTIES = [1e-4, 1e-3, 1e-2, 1e-1, 1] as const;

/** Fits one regression per penalty and keeps the one most accurate on the validation rows (the smaller λ on ties). */
export function chooseLogistic(
  train: readonly (readonly number[])[],
  trainLabels: ArrayLike<number>,
  validation: readonly (readonly number[])[],
  validationLabels: ArrayLike<number>,
  classes: number,
): LogisticModel {
  let best: LogisticModel | null = null;
  let bestAccuracy = -1;
  for (const penalty of LOGISTIC_PENALTIES) {
    const model = fitLogistic(train, trainLabels, classes, penalty);
    let correct = 0;
    validation.forEach((row, i) => (correct += predictLogistic(model, row) === validationLabels[i] ? 1 : 0));
    const accuracy = validation.length === 0 ? 0 : correct / validation.length;
    if (accuracy > bestAccuracy) [best, bestAccuracy] = [model, accuracy];
  }
  return best as LogisticModel;
}
