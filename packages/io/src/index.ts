/** @weft/io: the weight file, checkpoints, the data path (tables, scores, baselines), and (under `@weft/io/runtime`) the inference runtime. */
export { decodeBase64Into, decodedLength, encodeBase64 } from './base64.js';
export { fromHalfBits, toHalfBits } from './half.js';
export { dequantizeRows, quantizeRows } from './quantize.js';
export { sha256Hex } from './digest.js';
export type { NamedValues, ReadOptions, StoredDType, WeightFile, WeightMetadata, WriteOptions } from './weight-file.js';
export { FORMAT_TAG, FORMAT_VERSION, readWeightFile, writeWeightFile } from './weight-file.js';
export type { LoadOptions } from './model-file.js';
export { loadEncoderDecoder, loadModel, modelTensors } from './model-file.js';
export type { SavedModel } from './model-file.js';
export { readWeightFileBlob, weightFileBlob } from './blob.js';
export type { TrainingState } from '@weft/core';
export type { Checkpoint, TrainingStateSource } from './checkpoint.js';
export { readCheckpoint, writeCheckpoint } from './checkpoint.js';
export { checkMetadata, metadataProblems } from './metadata.js';
export { layoutProblems } from './layout-check.js';
export type { Delimiter, Table, TableOptions, TableRow } from './data/table.js';
export { columnNamed, columnStatistics, decimal, detectDelimiter, fieldPath, numberAt, parseTable } from './data/table.js';
export { isJsonRecords, parseJsonRecords, readTable } from './data/json-records.js';
export type { ClassScores, ClassificationReport, ForecastErrors } from './data/scores.js';
export { ForecastErrorSum, classificationReport, forecastErrors, maseScale, scoresFromConfusion } from './data/scores.js';
export type { BaselineOptions, BaselineScore, ForecastBaselines, Forecaster, SeriesSplit, StepErrors } from './data/baselines.js';
export { bestBaseline, fitLinear, forecastBaselines, linearForecast, rowsAheadOf, scoreForecaster } from './data/baselines.js';
export { leastSquares } from './data/least-squares.js';
export type { MinimiseOptions, MinimiseResult } from './data/minimise.js';
export { minimise } from './data/minimise.js';
export type { SmoothingFit, SmoothingMethod, SmoothingParameters } from './data/smoothing.js';
export { SmoothingStepper, fitSmoothing, initialStates, oneStepError, runSmoothing } from './data/smoothing.js';
export type { ThetaForecast } from './data/theta.js';
export { lineSlope, thetaForecasts } from './data/theta.js';
export type { SeasonCandidate, SeasonChoice, Spacing } from './data/seasonality.js';
export { autocorrelations, chooseSeason, differences, isSeasonal, seasonalIndices, seasonalityLimit } from './data/seasonality.js';
export type { NgramOrderChoice, TextBaselines } from './data/ngram.js';
export { KneserNeyModel, chooseNgramOrder, textBaselines } from './data/ngram.js';
export type { Contender, ForecastReportParts, HeldOutReport, SeriesFigures, TransductionFigures } from './data/verdict.js';
export { bestOf, forecastReport, forecastWords, reportJson, reportLines, verdict, withIntervals } from './data/verdict.js';
export type { LogisticModel } from './data/logistic.js';
export { LOGISTIC_PENALTIES, chooseLogistic, fitLogistic, logisticLoss, predictLogistic, summaryFeatures } from './data/logistic.js';
export type { CalendarPosition } from './data/calendar.js';
export { calendarFor, calendarInputs } from './data/calendar.js';
export type { TimeColumn } from './data/time-column.js';
export { calendarCopies, parseTime, readTimeColumn, timeSpacing } from './data/time-column.js';
export type { ForecastRow, ForecastWindow, RowForecaster } from './forecaster.js';
export { createRowForecaster, createSeriesForecasters } from './forecaster.js';
export { forecastIntervals, forecastMissing, forecastPanel, forecastRowsAhead, forecastWindow, seriesMetadata } from './forecast-metadata.js';
export type { ForecastPanel } from './forecast-metadata.js';
export type { MissingRecord, MissingRule } from './data/missing.js';
export { MISSING_MARKERS, fillColumn, missingTest } from './data/missing.js';
export type { FilledTimes } from './data/skipped-times.js';
export { insertSkippedTimes } from './data/skipped-times.js';
export type { Translator } from './translate.js';
export { UNKNOWN_TOKEN, createTranslator, splitTokens } from './translate.js';
export type { BleuScore, NgramCounts } from './data/transduction.js';
export { corpusBleu, exactMatchRate, tokenAccuracy } from './data/transduction.js';
export type { StepSequence, StepTable, StepTableOptions } from './data/steps.js';
export { readStepTable } from './data/steps.js';
export type { Series, SeriesOptions } from './data/series.js';
export { buildVocabulary, readSeries } from './data/series.js';
export type {
  ChosenSettings,
  ForecastIntervals,
  PanelPart,
  PreparedSeries,
  SeriesPreparation,
  SeriesStreams,
  SeriesWindows,
  WindowExample,
} from './data/prepare-series.js';
export { SLIDING_ROWS, prepareSeries, prepareTable } from './data/prepare-series.js';
export type { PrepareOne, SeriesIdColumn } from './data/panel.js';
export { preparePanel, seriesIdColumn, seriesRows } from './data/panel.js';
export { panelReport, pooledBaselineWidths, pooledHalfWidths } from './data/panel-report.js';
export type { SeriesParts } from './data/series-checks.js';
export { seriesParts } from './data/series-checks.js';
export type { IntervalScores } from './data/intervals.js';
export { IntervalScoreSum, baselineErrors, baselineIntervals, conformalHalfWidth, scoreIntervals } from './data/intervals.js';
