/**
 * How good a model's outputs are, in the data's own units: forecast errors (MAE, RMSE, MAPE), scale-free forecast
 * errors (MASE and sMAPE as the M4 competition defines them) and classification scores (accuracy, per-class precision, recall and F1, their macro average, the confusion matrix). Definitions
 * are common practice: MAE = mean |y − ŷ|, RMSE = √(mean (y − ŷ)²), MAPE = 100 · mean |y − ŷ| / |y| over the
 * positions where y ≠ 0 (undefined, null, when every y is 0); sMAPE = 200 · mean |y − ŷ| / (|y| + |ŷ|) over the
 * positions where |y| + |ŷ| > 0 (Makridakis, Spiliotis & Assimakopoulos, "The M4 Competition", IJF 2020, eq. 1);
 * MASE = mean |y − ŷ| / scale, the scale being the in-sample mean absolute error of the seasonal naive forecast,
 * (1 / (n − m)) Σ_{t=m}^{n−1} |y_t − y_{t−m}| over the fitting rows (Hyndman & Koehler, "Another look at measures
 * of forecast accuracy", IJF 22, 2006; m = 1 without a season, as M4 does); precision_k = TP_k / (TP_k + FP_k), recall_k =
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
  /** Symmetric MAPE in percent (0 to 200); null when every actual and forecast is 0. */
  readonly smape: number | null;
  /** Mean absolute scaled error; null when no scale was given (or the scale is 0). */
  readonly mase: number | null;
  /** Positions scored. */
  readonly count: number;
}

/** Accumulates forecast errors position by position. */
export class ForecastErrorSum {
  private absolute = 0;
  private squared = 0;
  private percent = 0;
  private percentCount = 0;
  private symmetric = 0;
  private symmetricCount = 0;
  private scaled = 0;
  private scaledCount = 0;
  private n = 0;

  /** Adds one position: what happened, what was forecast, and the MASE scale of its series (if known). */
  add(actual: number, forecast: number, scale = NaN): void {
    const e = actual - forecast;
    this.absolute += Math.abs(e);
    this.squared += e * e;
    if (actual !== 0) {
      this.percent += Math.abs(e / actual);
      this.percentCount++;
    }
    const size = Math.abs(actual) + Math.abs(forecast);
    if (size > 0) {
      this.symmetric += Math.abs(e) / size;
      this.symmetricCount++;
    }
    if (scale > 0) {
      this.scaled += Math.abs(e) / scale;
      this.scaledCount++;
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
      smape: this.symmetricCount === 0 ? null : (200 * this.symmetric) / this.symmetricCount,
      mase: this.scaledCount === 0 ? null : this.scaled / this.scaledCount,
      count: n,
    };
  }
}

/** Forecast errors of `forecast` against `actual` (same length), with MASE when `scale` is given. */
export function forecastErrors(actual: ArrayLike<number>, forecast: ArrayLike<number>, scale = NaN): ForecastErrors {
  const sum = new ForecastErrorSum();
  for (let i = 0; i < actual.length; i++) sum.add(actual[i], forecast[i], scale);
  return sum.result();
}

/**
 * The MASE scale of a series: the mean absolute error of the seasonal naive forecast (lag `season`, 1 for none)
 * over rows [0, count), in the series' units (Hyndman & Koehler 2006), over the pairs of rows that both have a value.
 * NaN with no such pair (`count ≤ season`).
 */
export function maseScale(series: ArrayLike<number>, count: number, season = 1): number {
  let sum = 0;
  let pairs = 0;
  for (let t = season; t < count; t++) {
    const d = Math.abs(series[t] - series[t - season]);
    // A pair with a missing value (NaN) is left out.
    if (Number.isNaN(d)) continue;
    sum += d;
    pairs++;
  }
  return pairs > 0 ? sum / pairs : NaN;
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
