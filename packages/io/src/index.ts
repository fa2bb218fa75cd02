/** @weft/io: the weight file, checkpoints, the data path (tables, scores, baselines), and (under `@weft/io/runtime`) the inference runtime. */
export type { NamedValues, ReadOptions, StoredDType, WeightFile, WeightMetadata, WriteOptions } from './weight-file.js';
export { readWeightFile, writeWeightFile } from './weight-file.js';
export type { LoadOptions } from './model-file.js';
export { loadEncoderDecoder, loadModel, modelTensors } from './model-file.js';
export type { SavedModel } from './model-file.js';
export { readWeightFileBlob, weightFileBlob } from './blob.js';
export type { TrainingState } from '@weft/core';
export type { Checkpoint, TrainingStateSource } from './checkpoint.js';
export { readCheckpoint, writeCheckpoint } from './checkpoint.js';
export { checkMetadata } from './metadata.js';
export type { Delimiter, Table, TableOptions, TableRow } from './data/table.js';
export { columnNamed, columnStatistics, decimal, numberAt, parseTable } from './data/table.js';
export { isJsonRecords, parseJsonRecords, readTable } from './data/json-records.js';
export type { ClassScores, ClassificationReport, ForecastErrors } from './data/scores.js';
export { classificationReport, forecastErrors, maseScale, scoresFromConfusion } from './data/scores.js';
export type { BaselineOptions, BaselineScore, ForecastBaselines, Forecaster, SeriesSplit, StepErrors } from './data/baselines.js';
export { bestBaseline, fitLinear, forecastBaselines, linearForecast, scoreForecaster } from './data/baselines.js';
export type { SmoothingFit, SmoothingMethod, SmoothingParameters } from './data/smoothing.js';
export { fitSmoothing, runSmoothing } from './data/smoothing.js';
export type { ThetaForecast } from './data/theta.js';
export { thetaForecasts } from './data/theta.js';
export type { SeasonCandidate, SeasonChoice, Spacing } from './data/seasonality.js';
export { chooseSeason, differences, isSeasonal } from './data/seasonality.js';
export type { NgramOrderChoice, TextBaselines } from './data/ngram.js';
export { KneserNeyModel, chooseNgramOrder, textBaselines } from './data/ngram.js';
export type { HeldOutReport, SeriesFigures, TransductionFigures } from './data/verdict.js';
export { forecastReport, reportJson, reportLines, verdict } from './data/verdict.js';
export type { LogisticModel } from './data/logistic.js';
export { chooseLogistic, fitLogistic, predictLogistic, summaryFeatures } from './data/logistic.js';
export type { CalendarPosition } from './data/calendar.js';
export { calendarFor, calendarInputs } from './data/calendar.js';
export type { TimeColumn } from './data/time-column.js';
export { parseTime, readTimeColumn, timeSpacing } from './data/time-column.js';
export type { ForecastRow, ForecastWindow, RowForecaster } from './forecaster.js';
export { createRowForecaster, createSeriesForecasters } from './forecaster.js';
export { forecastIntervals, forecastMissing, forecastPanel, forecastRowsAhead, forecastWindow } from './forecast-metadata.js';
export type { ForecastPanel } from './forecast-metadata.js';
export type { MissingRecord, MissingRule } from './data/missing.js';
export type { FilledTimes } from './data/skipped-times.js';
export { insertSkippedTimes } from './data/skipped-times.js';
export type { Translator } from './translate.js';
export { UNKNOWN_TOKEN, createTranslator, splitTokens } from './translate.js';
export type { BleuScore } from './data/transduction.js';
export { corpusBleu, exactMatchRate, tokenAccuracy } from './data/transduction.js';
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
export { prepareSeries, prepareTable } from './data/prepare-series.js';
export { preparePanel } from './data/panel.js';
export type { IntervalScores } from './data/intervals.js';
export { baselineErrors, baselineIntervals, conformalHalfWidth, scoreIntervals } from './data/intervals.js';
