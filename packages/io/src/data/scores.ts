/**
 * How good a model's outputs are, in the data's own units: forecast errors (MAE, RMSE, MAPE) and classification
 * scores (accuracy, per-class precision, recall and F1, their macro average, the confusion matrix). Definitions
 * are common practice: MAE = mean |y − ŷ|, RMSE = √(mean (y − ŷ)²), MAPE = 100 · mean |y − ŷ| / |y| over the
 * positions where y ≠ 0 (undefined, null, when every y is 0); precision_k = TP_k / (TP_k + FP_k), recall_k =
 * TP_k / (TP_k + FN_k), F1_k their harmonic mean, each 0 when its denominator is 0; macro-F1 the unweighted mean
 * of F1_k over the classes, every class counting alike however rare (macro-averaging as Manning, Raghavan &
 * Schütze, "Introduction to Information Retrieval", 2008, §13.6, describe it for precision; the test works
 * their example).
 */

/** How far forecasts were from what happened. */
export interface ForecastErrors {
  /** Mean absolute error, in the data's units. */
  readonly mae: number;
  /** Root mean squared error, in the data's units. */
  readonly rmse: number;
  /** Percent; null when every actual value is 0. */
  readonly mape: number | null;
  /** Positions scored. */
  readonly count: number;
}

/** Accumulates forecast errors position by position. */
export class ForecastErrorSum {
  private absolute = 0;
  private squared = 0;
  private percent = 0;
  private percentCount = 0;
  private n = 0;

  /** Adds one position: what happened and what was forecast. */
  add(actual: number, forecast: number): void {
    const e = actual - forecast;
    this.absolute += Math.abs(e);
    this.squared += e * e;
    if (actual !== 0) {
      this.percent += Math.abs(e / actual);
      this.percentCount++;
    }
    this.n++;
  }

  /** The errors over the positions added so far (NaN when there are none). */
  result(): ForecastErrors {
    const n = this.n;
    return {
      mae: n === 0 ? NaN : this.absolute / n,
      rmse: n === 0 ? NaN : Math.sqrt(this.squared / n),
      mape: this.percentCount === 0 ? null : (100 * this.percent) / this.percentCount,
      count: n,
    };
  }
}

/** Forecast errors of `forecast` against `actual` (same length). */
export function forecastErrors(actual: ArrayLike<number>, forecast: ArrayLike<number>): ForecastErrors {
  const sum = new ForecastErrorSum();
  for (let i = 0; i < actual.length; i++) sum.add(actual[i], forecast[i]);
  return sum.result();
}

/** One class's scores. */
export interface ClassScores {
  /** Of the examples predicted as this class, the share that truly are (0 when never predicted). */
  readonly precision: number;
  /** Of the examples that truly are this class, the share predicted as it. */
  readonly recall: number;
  /** The harmonic mean of precision and recall. */
  readonly f1: number;
  /** How many examples truly have the class. */
  readonly support: number;
  /** How many times the class was predicted. */
  readonly predicted: number;
}

/** A classifier's scores on labelled examples. */
export interface ClassificationReport {
  /** Share of examples whose predicted class is the true one. */
  readonly accuracy: number;
  /** The unweighted mean of the classes' F1 scores (each class counts alike, whatever its size). */
  readonly macroF1: number;
  /** Scores per class, by class index. */
  readonly perClass: readonly ClassScores[];
  /** confusion[actual][predicted]: counts. */
  readonly confusion: readonly (readonly number[])[];
  /** Examples scored. */
  readonly count: number;
  /** Classes never predicted (indexes), so a report can say so. */
  readonly neverPredicted: readonly number[];
}

/** The scores from a confusion matrix (rows: actual class, columns: predicted class). */
export function scoresFromConfusion(confusion: readonly (readonly number[])[]): ClassificationReport {
  const k = confusion.length;
  let count = 0;
  let correct = 0;
  const perClass: ClassScores[] = [];
  for (let c = 0; c < k; c++) {
    let support = 0;
    let predicted = 0;
    for (let j = 0; j < k; j++) {
      support += confusion[c][j];
      predicted += confusion[j][c];
    }
    const tp = confusion[c][c];
    count += support;
    correct += tp;
    const precision = predicted === 0 ? 0 : tp / predicted;
    const recall = support === 0 ? 0 : tp / support;
    const f1 = precision + recall === 0 ? 0 : (2 * precision * recall) / (precision + recall);
    perClass.push({ precision, recall, f1, support, predicted });
  }
  return {
    accuracy: count === 0 ? NaN : correct / count,
    macroF1: k === 0 ? NaN : perClass.reduce((s, c) => s + c.f1, 0) / k,
    perClass,
    confusion: confusion.map((row) => [...row]),
    count,
    neverPredicted: perClass.flatMap((c, i) => (c.predicted === 0 ? [i] : [])),
  };
}

/** The scores of predicted class indexes against actual ones, over `classes` classes. */
export function classificationReport(actual: ArrayLike<number>, predicted: ArrayLike<number>, classes: number): ClassificationReport {
  const confusion = Array.from({ length: classes }, () => new Array<number>(classes).fill(0));
  for (let i = 0; i < actual.length; i++) confusion[actual[i]][predicted[i]]++;
  return scoresFromConfusion(confusion);
}
