/**
 * `@weft/io/internal`: the package's working parts that its index does not offer users: the sibling packages and
 * the tests import them from here. Nothing here is part of the public surface; names may change between releases.
 */
export { decodeBase64Into, decodedLength, encodeBase64 } from './base64.js';
export { fromHalfBits, toHalfBits } from './half.js';
export { dequantizeRows, quantizeRows } from './quantize.js';
export { sha256Hex } from './digest.js';
export { FORMAT_TAG, FORMAT_VERSION } from './weight-file.js';
export { metadataProblems } from './metadata.js';
export { layoutProblems } from './layout-check.js';
export { detectDelimiter, fieldPath } from './data/table.js';
export { ForecastErrorSum } from './data/scores.js';
export { rowsAheadOf } from './data/baselines.js';
export { leastSquares } from './data/least-squares.js';
export type { MinimiseOptions, MinimiseResult } from './data/minimise.js';
export { minimise } from './data/minimise.js';
export { SmoothingStepper, initialStates, oneStepError } from './data/smoothing.js';
export { lineSlope } from './data/theta.js';
export { autocorrelations, seasonalIndices, seasonalityLimit } from './data/seasonality.js';
export type { Contender, ForecastReportParts } from './data/verdict.js';
export { bestOf, forecastWords, withIntervals } from './data/verdict.js';
export { LOGISTIC_PENALTIES, logisticLoss } from './data/logistic.js';
export { calendarCopies } from './data/time-column.js';
export { seriesMetadata } from './forecast-metadata.js';
export { MISSING_MARKERS, fillColumn, missingTest } from './data/missing.js';
export type { NgramCounts } from './data/transduction.js';
export type { StepSequence, StepTable, StepTableOptions } from './data/steps.js';
export { SLIDING_ROWS } from './data/prepare-series.js';
export type { PrepareOne, SeriesIdColumn } from './data/panel.js';
export { seriesIdColumn, seriesRows } from './data/panel.js';
export { panelReport, pooledBaselineWidths, pooledHalfWidths } from './data/panel-report.js';
export type { SeriesParts } from './data/series-checks.js';
export { seriesParts } from './data/series-checks.js';
export { IntervalScoreSum } from './data/intervals.js';
