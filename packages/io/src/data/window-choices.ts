/**
 * What sliding windows check and choose from the training rows: the settings they refuse and the rows they need,
 * the deviation of each column's one-row changes (their scale), the smoothing method a hybrid reads (the one whose
 * forecasts of the validation rows are best), and which targets are read as logarithms.
 */
import { fail } from '@weft/core';
import type { SeriesContext } from './series-types.js';
import type { SmoothingMethod, SmoothingParameters } from './smoothing.js';
import { fitSmoothing, runSmoothing } from './smoothing.js';
import { fieldPath } from './table.js';

/**
 * The smoothing method, fitted on rows [0, fitEnd), whose forecasts of rows [fitEnd, checkEnd) have the lowest MAE
 * (over every row ahead in `rowsAhead`); its forecasts made at every row, per row ahead (forecasts[s][t]).
 */
export function chooseSmoothing(
  series: readonly number[],
  fitEnd: number,
  checkEnd: number,
  rowsAhead: readonly number[],
  season: number | null,
): { name: string; parameters: SmoothingParameters; forecasts: Float64Array[] } {
  const methods: SmoothingMethod[] = ['simple', 'damped', ...(season === null ? [] : (['additive', 'multiplicative'] as SmoothingMethod[]))];
  let best: { name: string; parameters: SmoothingParameters; forecasts: Float64Array[]; error: number } | null = null;
  for (const method of methods) {
    const fit = fitSmoothing(series, fitEnd, method, season ?? 1);
    if (fit === null) continue;
    const forecasts = rowsAhead.map(() => new Float64Array(series.length));
    if (rowsAhead.some((h, s) => Number.isNaN(runSmoothing(series, fitEnd, fit, h, forecasts[s])))) continue;
    let error = 0;
    rowsAhead.forEach((h, s) => {
      for (let t = fitEnd - h; t + h < checkEnd; t++) if (!Number.isNaN(series[t + h])) error += Math.abs(series[t + h] - forecasts[s][t]);
    });
    if (best === null || error < best.error) {
      const { meanSquaredError: _unused, ...parameters } = fit;
      best = {
        name: method === 'simple' ? 'simple smoothing' : method === 'damped' ? 'a damped trend' : `Holt-Winters ${method}`,
        parameters,
        forecasts,
        error,
      };
    }
  }
  if (best === null) fail('invalid_option', '--hybrid', 'a smoothing method that fits the training rows', 'none fits');
  return best;
}

/**
 * Which columns are read as logarithms (true at a column's index): with `log: 'yes'` every target (each value must
 * be above 0, else an error at its file:line:column); with 'no' (the default) none; with 'auto' a target whose training values are
 * all above 0 and whose season's swing grows with its level, judged as forecasters judge it: Holt-Winters with a
 * multiplicative season fits the training rows better (lower one-step squared error) than with an additive one
 * (Hyndman & Athanasopoulos, "Forecasting: Principles and Practice", 3rd ed., §8.3; common practice: a log turns a
 * multiplicative season into an additive one). Never without a season. Measured on a generated series with a
 * multiplicative season (144 months), the logarithm made the test MAE worse (11.4 against 9.5 for the plain model,
 * 9.8 against 8.2 on top of Holt-Winters): windows read relative to their last value already scale with the level,
 * so 'auto' is not the default.
 */
export function logTargets(input: SeriesContext): boolean[] {
  const { values, columns, targetIndexes, trainEnd, season, options, table } = input;
  const logged = columns.map(() => false);
  const asked = options.log ?? 'no';
  if (asked === 'no') return logged;
  for (const j of targetIndexes) {
    const column = values.map((row) => row[j]);
    if (asked === 'yes') {
      const bad = column.findIndex((v) => !(v > 0) && !Number.isNaN(v));
      if (bad >= 0)
        fail(
          'bad_data',
          fieldPath(table, bad, columns[j]),
          `a number > 0 in column ${JSON.stringify(table.header[columns[j]])} (--log yes reads its logarithm)`,
          String(column[bad]),
        );
      logged[j] = true;
      continue;
    }
    if (season === null || !column.every((v) => v > 0 || Number.isNaN(v))) continue;
    const additive = fitSmoothing(column, trainEnd, 'additive', season);
    const multiplicative = fitSmoothing(column, trainEnd, 'multiplicative', season);
    if (additive !== null && multiplicative !== null && multiplicative.meanSquaredError < additive.meanSquaredError) logged[j] = true;
  }
  return logged;
}

/** Refuses settings sliding windows cannot take, and a series too short for them (two seasons and the horizon). */
export function checkWindowSettings(input: SeriesContext): void {
  const { file, trainEnd, horizon, season, options } = input;
  if ((options.transform ?? 'none') !== 'none')
    fail(
      'invalid_option',
      '--transform',
      "--examples streams (sliding windows already forecast the change from the window's last row)",
      options.transform ?? 'none',
    );
  if (options.lookback > 0) fail('invalid_option', '--lookback', '--examples streams (sliding windows are read whole)', String(options.lookback));
  // Two seasons and the horizon, or without a season 24 rows and the horizon (a 40-row series with the default shares).
  const least = (season === null ? 24 : 2 * season) + horizon;
  if (trainEnd < least) {
    const rows = input.values.length;
    const total = Math.ceil(least / (1 - options.validationShare - options.testShare));
    fail(
      'invalid_option',
      file,
      `at least ${least} training rows for a series ${season === null ? 'without a season' : `with a season of ${season} rows`} (${season === null ? '24 rows' : 'two seasons'} and the horizon): about ${total} rows in all with the --validation and --test shares`,
      `${rows} rows, which leave ${trainEnd} training rows`,
    );
  }
}

/** The deviation of each column's one-row changes over rows [0, trainEnd) (pairs with a missing value left out; 1 where 0). */
export function changeDeviations(values: readonly (readonly number[])[], trainEnd: number, width: number): number[] {
  // Deviations of one-row changes per column, and of the forecast change per target, over the training rows.
  // (Pairs with a missing value are left out.)
  return Array.from({ length: width }, (_, j) => {
    let sum = 0;
    let pairs = 0;
    for (let t = 1; t < trainEnd; t++) {
      const d = values[t][j] - values[t - 1][j];
      if (Number.isNaN(d)) continue;
      sum += d * d;
      pairs++;
    }
    const d = Math.sqrt(sum / Math.max(1, pairs));
    return d > 0 && Number.isFinite(d) ? d : 1;
  });
}
