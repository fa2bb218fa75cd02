/**
 * Seasons, found the way a forecaster finds them:
 * - autocorrelation r_k = Σ (y_t − ȳ)(y_{t−k} − ȳ) / Σ (y_t − ȳ)² (Box & Jenkins; common practice);
 * - the 90% seasonality test of the M4 competition's benchmarks (Makridakis, Spiliotis & Assimakopoulos 2020):
 *   seasonal at period m when |r_m| > 1.645 · √((1 + 2 Σ_{k<m} r_k²) / n), and only with at least 3m rows;
 * - candidates from a time column's spacing (rows under a day apart → a day and a week of rows, so hours → 24 and
 *   168; days → 7 and 365; weeks → 52; months → 12; quarters → 4; common practice), else from the autocorrelation of the differenced series (the trend
 *   removed, so a rising series does not look seasonal at every lag), each tested on the differences;
 * - classical decomposition's seasonal indices (Makridakis, Wheelwright & Hyndman, "Forecasting: Methods and
 *   Applications", 3rd ed., 1998, §4/3; common practice): a centred moving average of order m (2×m when m is
 *   even), the ratio (or difference) of each row to it, averaged per position in the season and normalised to
 *   mean 1 (or 0).
 */

/** Autocorrelations r_1 … r_most of a series (index 0 holds r_0 = 1); zeros for a constant series. */
export function autocorrelations(series: ArrayLike<number>, most: number): Float64Array {
  const n = series.length;
  const out = new Float64Array(most + 1);
  let mean = 0;
  for (let t = 0; t < n; t++) mean += series[t] / n;
  let variance = 0;
  for (let t = 0; t < n; t++) variance += (series[t] - mean) ** 2;
  if (!(variance > 0)) return out;
  out[0] = 1;
  for (let k = 1; k <= most && k < n; k++) {
    let s = 0;
    for (let t = k; t < n; t++) s += (series[t] - mean) * (series[t - k] - mean);
    out[k] = s / variance;
  }
  return out;
}

/** The 90% limit of the M4 seasonality test at lag m, from the autocorrelations r_1 … r_{m−1} and n rows. */
export function seasonalityLimit(acf: ArrayLike<number>, m: number, n: number): number {
  let sum = 1;
  for (let k = 1; k < m; k++) sum += 2 * acf[k] ** 2;
  return (1.645 * Math.sqrt(sum)) / Math.sqrt(n);
}

/** Whether a series is seasonal at period m by the M4 test (false with fewer than 3m rows or m < 2). */
export function isSeasonal(series: ArrayLike<number>, m: number): boolean {
  if (!(m >= 2) || series.length < 3 * m) return false;
  const acf = autocorrelations(series, m);
  return Math.abs(acf[m]) > seasonalityLimit(acf, m, series.length);
}

/** First differences y_t − y_{t−1}. */
export function differences(series: ArrayLike<number>): Float64Array {
  const out = new Float64Array(Math.max(0, series.length - 1));
  for (let t = 1; t < series.length; t++) out[t - 1] = series[t] - series[t - 1];
  return out;
}

/** How rows are spaced in time, as a time column says: in words, and the seasons a forecaster tries first. */
export interface Spacing {
  /** The gap between rows in words: "hours", "15 minutes", "days", "months", … */
  readonly unit: string;
  /** The seasons to try, in rows: a day and a week of rows under a day apart, 7 and 365 for days, … */
  readonly seasons: readonly number[];
}

/** One season tried: its autocorrelation on the differences and the 90% limit it was held to. */
export interface SeasonCandidate {
  /** Rows in the season. */
  readonly rows: number;
  /** Autocorrelation of the differenced series at that lag. */
  readonly autocorrelation: number;
  /** The 90% limit of the test (NaN when too few rows to test). */
  readonly limit: number;
  /** Why it was not chosen, or null for the chosen one. */
  readonly rejected: string | null;
}

/** The season chosen for a series and why, in words a report can print. */
export interface SeasonChoice {
  /** Rows in the season, or null for none. */
  readonly season: number | null;
  /** Why, in words: where the candidates came from and what the test found. */
  readonly reason: string;
  /** Every candidate tried. */
  readonly candidates: readonly SeasonCandidate[];
}

/**
 * Chooses a season from the fitting rows of a series: the candidates of the time column's spacing when given
 * (else the peaks of the differences' autocorrelation, lags 2 … min(longest, n/3)), each tested by the M4 test
 * on the differences with a positive autocorrelation; the shortest passing candidate whose autocorrelation is within
 * 0.1 of the highest wins (our rule).
 */
export function chooseSeason(series: ArrayLike<number>, spacing: Spacing | null = null, longest = 800): SeasonChoice {
  const diff = differences(series);
  const n = diff.length;
  const fromTime = spacing !== null;
  let lags: number[];
  const most = Math.min(longest, Math.floor(n / 3));
  if (fromTime) lags = [...spacing.seasons];
  else lags = [];
  // From a time column only the candidates' lags (and those below them, for the test's limit) are needed.
  const acf = autocorrelations(diff, fromTime ? Math.max(1, ...lags) : most + 1);
  if (!fromTime) {
    // Local peaks of the differences' autocorrelation, highest first, at most five; each moved to the lag within
    // two rows of it whose multiples (up to three in range) have the highest mean autocorrelation, since noise can
    // shift a single peak by a row where the whole comb of a true period cannot.
    const comb = (k: number) => {
      let sum = 0;
      let count = 0;
      for (let j = k; j <= most && count < 3; j += k, count++) sum += acf[j];
      return count === 0 ? -Infinity : sum / count;
    };
    const peaks = new Set<number>();
    const found: number[] = [];
    for (let k = 2; k <= most; k++) if (acf[k] > 0 && acf[k] > acf[k - 1] && acf[k] >= acf[k + 1]) found.push(k);
    for (const k of found.sort((a, b) => acf[b] - acf[a] || a - b).slice(0, 5)) {
      let best = k;
      for (let j = Math.max(2, k - 2); j <= Math.min(most, k + 2); j++) if (comb(j) > comb(best)) best = j;
      peaks.add(best);
    }
    lags = [...peaks];
  }
  const candidates: SeasonCandidate[] = lags.map((m) => {
    if (3 * m > n) return { rows: m, autocorrelation: NaN, limit: NaN, rejected: `fewer than 3 seasons (${3 * m + 1} rows) to test it in ${n + 1} rows` };
    const limit = seasonalityLimit(acf, m, n);
    const r = acf[m];
    return {
      rows: m,
      autocorrelation: r,
      limit,
      rejected: r > limit ? null : `autocorrelation of the differences ${r.toFixed(3)}, not above the 90% limit ${limit.toFixed(3)}`,
    };
  });
  // The shortest passing season within 0.1 of the highest autocorrelation wins: a daily cycle in hourly rows also
  // shows at 168 rows (and, in noisy differences, at 25), and the weekly season is chosen only when the week adds
  // clearly to the day.
  const top = Math.max(-Infinity, ...candidates.filter((c) => c.rejected === null).map((c) => c.autocorrelation));
  const passing = candidates.filter((c) => c.rejected === null && c.autocorrelation >= top - 0.1).sort((a, b) => a.rows - b.rows);
  const source = fromTime ? `the time column (rows ${spacing.unit} apart)` : 'the autocorrelation of the differenced series';
  if (passing.length === 0) {
    const tried = candidates.length === 0 ? 'no candidate peak' : candidates.map((c) => `${c.rows} rows: ${c.rejected}`).join('; ');
    return { season: null, reason: `no season: candidates from ${source}; ${tried}`, candidates };
  }
  const chosen = passing[0];
  const final = candidates.map((c) =>
    c === chosen || c.rejected !== null ? c : { ...c, rejected: `${chosen.rows} rows is shorter, or clearly stronger (by 0.1)` },
  );
  return {
    season: chosen.rows,
    reason: `season of ${chosen.rows} rows from ${source}: autocorrelation of the differences ${chosen.autocorrelation.toFixed(3)}, above the 90% limit ${chosen.limit.toFixed(3)}`,
    candidates: final,
  };
}

/**
 * Classical decomposition's seasonal indices for positions 0 … m − 1 (position j is row t with t mod m = j), from
 * rows [0, count): multiplicative (ratios, mean 1) or additive (differences, mean 0).
 */
export function seasonalIndices(series: ArrayLike<number>, count: number, m: number, multiplicative: boolean): Float64Array {
  const sums = new Float64Array(m);
  const counts = new Float64Array(m);
  const half = Math.floor(m / 2);
  for (let t = half; t + half < count && t - half >= 0; t++) {
    // Centred moving average: order m when odd; 2×m (half weights at both ends) when even.
    let average = 0;
    if (m % 2 === 1) {
      for (let i = t - half; i <= t + half; i++) average += series[i];
      average /= m;
    } else {
      for (let i = t - half + 1; i < t + half; i++) average += series[i];
      average = (average + 0.5 * series[t - half] + 0.5 * series[t + half]) / m;
    }
    sums[t % m] += multiplicative ? series[t] / average : series[t] - average;
    counts[t % m]++;
  }
  const out = new Float64Array(m);
  let mean = 0;
  for (let j = 0; j < m; j++) {
    out[j] = counts[j] > 0 ? sums[j] / counts[j] : multiplicative ? 1 : 0;
    mean += out[j] / m;
  }
  for (let j = 0; j < m; j++) out[j] = multiplicative ? out[j] / mean : out[j] - mean;
  return out;
}
