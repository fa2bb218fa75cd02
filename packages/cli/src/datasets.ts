/**
 * Turning the user's files into training data, and remembering how (the metadata a weight file needs to be run on
 * new data with nothing else):
 * - a CSV of numeric series → forecasting up to `horizon` rows ahead, prepared by `prepareSeries` in @weft/io (the
 *   pipeline the browser page and a user's program share) and batched here;
 * - a text file → next-character (or next-word) prediction;
 * - a labelled CSV of sequences → sequence classification.
 * Validation data is the last share of a series or text (time order kept), or a seeded random share of sequences.
 *
 * Why one file of this length: the three tasks' preparations (forecast, text, classify) produce one shape (Prepared,
 * HeldOutReport) and share their held-out splits; side by side they stay alike.
 */
import { Random, fail, indexOfLargest } from '@weft/core';
import type { ModelDescription, SequenceModel } from '@weft/cells';
import { sequenceBatches, streamBatches, wholeStream } from '@weft/optim';
import { figuresOn, forEachOutputBatch } from '@weft/optim/internal';
import type { DataSource, LabelledSequence } from '@weft/optim';
import {
  UNKNOWN_TOKEN,
  buildVocabulary,
  chooseLogistic,
  predictLogistic,
  summaryFeatures,
  textBaselines,
  classificationReport,
  columnNamed,
  columnStatistics,
  decimal,
  parseTable,
  readStepTable,
} from '@weft/io';
import { fieldPath } from '@weft/io/internal';
import { prepareSeries } from '@weft/io';
import type {
  ChosenSettings,
  ClassificationReport,
  ForecastIntervals,
  HeldOutReport,
  PreparedSeries,
  SeriesPreparation,
  Table,
  WeightMetadata,
} from '@weft/io';

export type { HeldOutReport } from '@weft/io';
export type { Contender } from '@weft/io/internal';
import { CommandError } from './errors.js';

export type Task = 'forecast' | 'text' | 'classify';

export interface Prepared {
  readonly task: Task;
  readonly input: ModelDescription['input'];
  readonly outputWidth: number;
  readonly train: DataSource;
  readonly validation: DataSource;
  readonly metadata: WeightMetadata;
  /** Lines to show the user about what preparation did (columns left out, and why). */
  readonly notes?: readonly string[];
  /** The model and every baseline on the test part, in the data's own units (forecasts: with their intervals scored). */
  readonly heldOut: (model: SequenceModel, intervals?: ForecastIntervals) => HeldOutReport;
  /** Forecasts: split conformal half-widths at a level from the validation part's errors (see prepareSeries). */
  readonly intervals?: (model: SequenceModel, level: number) => number[];
  /** The model's figure on the validation part, in the test figure's units (for ranking runs without the test). */
  readonly validationFigure?: (model: SequenceModel) => number;
  /** Settings chosen from the data for flags that were not given. */
  readonly chosen?: ChosenSettings;
}

/** The command's preparation settings: a series' (SeriesPreparation, @weft/io), and the other tasks'. */
export interface PrepareOptions extends SeriesPreparation {
  readonly tokens: 'characters' | 'words';
  readonly embedding: number;
  readonly batch: number;
}

/**
 * A series file prepared by `prepareSeries` (@weft/io), with its examples turned into batches: sliding windows
 * shuffled into batches, or long streams read in windows with carried state; validation and test read in order.
 */
export function prepareForecast(text: string, file: string, options: PrepareOptions): Prepared {
  const series = prepareSeries(text, file, options);
  const examples = series.examples;
  if (examples.kind === 'windows') {
    const features = series.inputWidth;
    // Forecasts are read in window order: a batch source shuffles its batches, so each chunk of windows is a source
    // of one batch, read in turn.
    const inOrder = (set: readonly LabelledSequence[]): DataSource[] => {
      const chunks: DataSource[] = [];
      for (let i = 0; i < set.length; i += 256) chunks.push(sequenceBatches(set.slice(i, i + 256), { batchSize: 256, features }));
      return chunks;
    };
    const validationInOrder = inOrder(examples.validationForecasts);
    const testInOrder = inOrder(examples.test);
    return {
      ...common(series),
      train: sequenceBatches([...examples.train], { batchSize: examples.batch, features, seed: options.seed }),
      validation: sequenceBatches([...examples.validation], { batchSize: 256, features }),
      validationFigure: (model) => series.validationFigure(...outputsOf(model, validationInOrder)),
      heldOut: (model, intervals) => series.heldOut(...outputsOf(model, testInOrder), intervals),
      intervals: (model, level) => series.intervals(...outputsOf(model, validationInOrder), level),
    };
  }
  const { values, features, horizon, trainEnd, testStart, rows } = examples;
  const targetOptions = (to: number) =>
    'columns' in examples.targets
      ? { targetColumns: [...examples.targets.columns] }
      : { targets: examples.targets.values.slice(0, to * examples.targets.width), targetWidth: examples.targets.width };
  const weights = examples.targetWeights;
  const weightWidth = 'columns' in examples.targets ? examples.targets.columns.length : examples.targets.width;
  const data = (to: number) => ({
    kind: 'values' as const,
    values: values.slice(0, to * features),
    features,
    ...targetOptions(to),
    ...(weights === undefined ? {} : { targetWeights: weights.slice(0, to * weightWidth) }),
    horizon,
  });
  // Validation and test read the series from its first row as one stream (the runtime's forecast at each row, as
  // `weft run` makes it), every row before their own first target carrying state only.
  const validation = wholeStream(data(testStart), { window: examples.window, scoredFrom: trainEnd - horizon });
  const test = wholeStream(data(rows), { window: examples.window, scoredFrom: testStart - horizon });
  return {
    ...common(series),
    train: streamBatches(data(trainEnd), { streams: examples.streams, window: examples.window, lookback: examples.lookback }),
    validation,
    validationFigure: (model) => series.validationFigure(...outputsOf(model, [validation])),
    heldOut: (model, intervals) => series.heldOut(...outputsOf(model, [test]), intervals),
    intervals: (model, level) => series.intervals(...outputsOf(model, [validation]), level),
  };
}

/** What every prepared series hands the command as it is. */
function common(series: PreparedSeries): Pick<Prepared, 'task' | 'input' | 'outputWidth' | 'metadata' | 'notes' | 'chosen'> {
  return {
    task: 'forecast',
    input: { kind: 'values', width: series.inputWidth },
    outputWidth: series.outputWidth,
    metadata: series.metadata,
    notes: series.notes,
    ...(series.chosen === undefined ? {} : { chosen: series.chosen }),
  };
}

/** A model's outputs on sources read in turn, every row of every batch in order, and their width. */
function outputsOf(model: SequenceModel, sources: readonly DataSource[]): [number[], number] {
  const outputs: number[] = [];
  let width = model.outputWidth;
  for (const source of sources) {
    forEachOutputBatch(model, source, (_batch, rows) => {
      width = rows.width;
      for (let i = 0; i < rows.outputs.length; i++) outputs.push(rows.outputs[i]);
    });
  }
  return [outputs, width];
}

export function tokenize(text: string, mode: 'characters' | 'words'): string[] {
  return mode === 'characters' ? [...text] : (text.match(/\S+/g) ?? []);
}

export const UNKNOWN = UNKNOWN_TOKEN;

/** Tokens of warm-up before the first scored token of a text part: state only, never scored. */
const TEXT_WARM_UP = 256;

export function prepareText(text: string, file: string, options: PrepareOptions): Prepared {
  const pieces = tokenize(text, options.tokens);
  const testCount = Math.max(2, Math.round(pieces.length * options.testShare));
  const validationCount = Math.max(2, Math.round(pieces.length * options.validationShare));
  const trainEnd = pieces.length - testCount - validationCount;
  const testStart = pieces.length - testCount;
  if (trainEnd < options.streams * options.window + 1) {
    throw new CommandError(
      `${file}: ${pieces.length} ${options.tokens} leave ${Math.max(0, trainEnd)} to train on (after ${validationCount} for validation and ${testCount} for the test), too few for ${options.streams} streams of ${options.window}-token windows (${options.streams * options.window + 1}); lower --streams or --window, or the --validation and --test shares`,
    );
  }
  const trainPieces = pieces.slice(0, trainEnd);
  const vocabulary = buildVocabulary(trainPieces);
  const index = new Map(vocabulary.map((v, i) => [v, i]));
  const ids = Int32Array.from(pieces, (p) => index.get(p) ?? 0);
  const trainIds = ids.subarray(0, trainEnd);
  let unseen = 0;
  for (let i = trainEnd; i < pieces.length; i++) if (!index.has(pieces[i])) unseen++;
  // A part read as one stream from a warm-up before it; its first token is predicted from the one before it.
  const reading = (from: number, to: number) => {
    const begin = Math.max(0, from - 1 - TEXT_WARM_UP);
    return wholeStream(
      { kind: 'tokens', tokens: ids.subarray(begin, to), vocabulary: vocabulary.length },
      { window: options.window, scoredFrom: from - 1 - begin },
    );
  };
  const validation = reading(trainEnd, testStart);
  const test = reading(testStart, pieces.length);
  // Baselines: unigram (add-one) and interpolated Kneser–Ney with its order chosen on the validation part, both
  // counted on training and validation for the test, as the forecast baselines are fitted.
  const most = options.tokens === 'characters' ? 6 : 3;
  const judged = textBaselines(ids, trainEnd, testStart, vocabulary.length, most);
  const partsLine = `parts of ${file}, in order: training ${trainEnd} ${options.tokens}; validation, for stopping and keeping weights, ${validationCount}; test, scored once at the end, the last ${testCount}`;
  return {
    task: 'text',
    input: { kind: 'embedding', vocabulary: vocabulary.length, width: options.embedding },
    outputWidth: vocabulary.length,
    train: streamBatches(
      { kind: 'tokens', tokens: trainIds, vocabulary: vocabulary.length },
      { streams: options.streams, window: options.window, lookback: options.lookback },
    ),
    validation,
    metadata: {
      task: 'next-token',
      tokens: options.tokens,
      vocabulary,
      split: { kind: 'text', tokens: pieces.length, trainingTokens: trainEnd, validationTokens: validationCount, testTokens: testCount },
    },
    notes: [
      ...(unseen > 0
        ? [
            `${unseen} of the ${pieces.length - trainEnd} validation and test ${options.tokens} never occur in the training text; the model reads them as ${UNKNOWN}`,
          ]
        : []),
    ],
    validationFigure: (model) => Math.exp(averageCrossEntropy(model, validation)),
    heldOut: (model) => ({
      metric: 'perplexity',
      lowerIsBetter: true,
      what: `the last ${testCount} ${options.tokens} of ${file}, used for neither training nor stopping, each predicted from those before it`,
      model: { name: 'model', description: '', value: Math.exp(averageCrossEntropy(model, test)) },
      baselines: [
        { name: 'unigram', description: 'each token as often as in the training and validation text (add-one)', value: judged.unigram },
        {
          name: `${judged.order}-gram`,
          description: `interpolated Kneser-Ney over ${options.tokens}, order ${judged.order} of 1-${most} chosen on the validation part (validation perplexity ${judged.orderLosses.map((l, i) => `${i + 1}: ${Number(Math.exp(l).toPrecision(4))}`).join(', ')})`,
          value: judged.ngram,
        },
      ],
      names: [],
      context: [partsLine],
    }),
  };
}

export interface ClassifyOptions extends PrepareOptions {
  readonly labelColumn: string;
  readonly sequenceColumn: string;
  /** Set for a long table (one step per row): the column naming each row's sequence. */
  readonly idColumn?: string;
  /** For a long table: the column ordering the steps of a sequence (default file order). */
  readonly stepColumn?: string;
}

export function prepareClassification(text: string, file: string, options: ClassifyOptions): Prepared {
  const table = parseTable(text, { file });
  if (options.idColumn !== undefined) return prepareStepClassification(table, file, options);
  const labelAt = table.header.indexOf(options.labelColumn);
  const sequenceAt = table.header.indexOf(options.sequenceColumn);
  if (labelAt < 0 || sequenceAt < 0) {
    throw new CommandError(
      `${file}: needs columns ${JSON.stringify(options.labelColumn)} and ${JSON.stringify(options.sequenceColumn)} (or a long table: one step per row, with --id-column); found ${table.header.join(', ')}`,
      2,
    );
  }
  const labels = [...new Set(table.rows.map((r) => r.fields[labelAt].trim()))].sort();
  onlyOneClass(labels, table.rows.length > 0 ? fieldPath(table, 0, labelAt) : `${file}:1:1`);
  const items = table.rows.map((r) =>
    r.fields[sequenceAt]
      .trim()
      .split(/\s+/)
      .filter((s) => s !== ''),
  );
  items.forEach((list, i) => {
    if (list.length === 0) fail('bad_data', fieldPath(table, i, sequenceAt), 'a sequence of at least one item', 'an empty field');
  });
  // Numbers or tokens, decided by every item: a file of numbers with one item that is not is an error there,
  // not a quiet switch to tokens.
  const total = items.reduce((n, list) => n + list.length, 0);
  const numbers = items.reduce((n, list) => n + list.filter((s) => !Number.isNaN(decimal(s))).length, 0);
  const numeric = numbers === total;
  if (!numeric && numbers >= total / 2) {
    const row = items.findIndex((list) => list.some((s) => Number.isNaN(decimal(s))));
    const bad = items[row].find((s) => Number.isNaN(decimal(s)))!;
    fail(
      'bad_data',
      fieldPath(table, row, sequenceAt),
      `a decimal number, as ${numbers} of the ${total} items of the sequences are`,
      JSON.stringify(bad.slice(0, 80)),
    );
  }
  const vocabulary = numeric ? null : buildVocabulary(items.flat());
  const index = new Map((vocabulary ?? []).map((v, i) => [v, i]));
  let mean = 0;
  let deviation = 1;
  if (numeric) {
    const statistics = columnStatistics(
      items.flat().map((s) => [decimal(s)]),
      1,
    );
    mean = statistics.mean[0];
    deviation = statistics.deviation[0];
  }
  const sequences: LabelledSequence[] = items.map((list, i) => ({
    ...(numeric ? { values: list.map((s) => (decimal(s) - mean) / deviation) } : { tokens: list.map((s) => index.get(s) ?? 0) }),
    label: labels.indexOf(table.rows[i].fields[labelAt].trim()),
  }));
  return classificationData(sequences, labels, 1, file, options, {
    input: numeric ? { kind: 'values', width: 1 } : { kind: 'embedding', vocabulary: vocabulary!.length, width: options.embedding },
    metadata: {
      task: 'classification',
      classes: labels,
      ...(numeric ? { normalisation: { mean: [mean], deviation: [deviation] } } : { vocabulary: vocabulary ?? [], tokens: 'words' }),
      sequenceColumn: options.sequenceColumn,
    },
    notes: [],
  });
}

/** A classifier needs two classes: `where` is the file:line:column of the first label. */
function onlyOneClass(labels: readonly string[], where: string): void {
  if (labels.length < 2)
    fail('bad_data', where, 'labels of at least two classes (a classifier needs them)', `the label ${JSON.stringify(labels[0] ?? '')} on every sequence`);
}

/** A labelled long table (one step per row, several numbers per step) as sequences, normalised per column. */
function prepareStepClassification(table: Table, file: string, options: ClassifyOptions): Prepared {
  const read = readStepTable(table, {
    idColumn: options.idColumn as string,
    stepColumn: options.stepColumn,
    labelColumn: options.labelColumn,
    columns: options.columns,
  });
  const labels = [...new Set(read.sequences.map((q) => q.label as string))].sort();
  const width = read.columns.length;
  const labelAt = columnNamed(table, options.labelColumn, 'the labels');
  onlyOneClass(labels, table.rows.length > 0 ? fieldPath(table, 0, labelAt) : `${file}:1:1`);
  const statistics = columnStatistics(
    read.sequences.flatMap((q) => q.steps),
    width,
  );
  const sequences: LabelledSequence[] = read.sequences.map((q) => ({
    values: q.steps.flatMap((step) => step.map((v, j) => (v - statistics.mean[j]) / statistics.deviation[j])),
    label: labels.indexOf(q.label as string),
  }));
  return classificationData(sequences, labels, width, file, options, {
    input: { kind: 'values', width },
    metadata: {
      task: 'classification',
      classes: labels,
      columns: [...read.columns],
      normalisation: statistics,
      idColumn: options.idColumn,
      ...(options.stepColumn === undefined ? {} : { stepColumn: options.stepColumn }),
    },
    notes: read.leftOut.length > 0 ? [`left out columns that hold no numbers: ${read.leftOut.join('; ')}`] : [],
  });
}

/** Features of a sequence for the logistic baseline: summaries of numbers, or token shares and the length. */
function sequenceFeatures(q: LabelledSequence, features: number, vocabulary: number): number[] {
  if (q.values !== undefined) return summaryFeatures(q.values, q.values.length / features, features);
  const tokens = q.tokens ?? [];
  const shares = new Array<number>(vocabulary).fill(0);
  for (let i = 0; i < tokens.length; i++) shares[tokens[i]] += 1 / tokens.length;
  return [...shares, tokens.length];
}

function classificationData(
  sequences: LabelledSequence[],
  labels: string[],
  features: number,
  file: string,
  options: ClassifyOptions,
  shape: { input: ModelDescription['input']; metadata: WeightMetadata; notes: string[] },
): Prepared {
  const order = sequences.map((_, i) => i);
  new Random(`${options.seed}:split`).shuffle(order);
  const testCount = Math.max(1, Math.round(sequences.length * options.testShare));
  const validationCount = Math.max(1, Math.round(sequences.length * options.validationShare));
  const testSet = order.slice(0, testCount).map((i) => sequences[i]);
  const validationSet = order.slice(testCount, testCount + validationCount).map((i) => sequences[i]);
  const trainSet = order.slice(testCount + validationCount).map((i) => sequences[i]);
  if (trainSet.length < 2)
    throw new CommandError(
      `${file}: ${sequences.length} sequences leave ${trainSet.length} to train on after ${validationCount} for validation and ${testCount} for the test; lower --validation or --test`,
    );
  const validation = sequenceBatches(validationSet, { batchSize: 64, features });
  const test = sequenceBatches(testSet, { batchSize: 64, features });
  const { majorityClass, majority, logistic, regression } = classifierBaselines(
    { train: trainSet, validation: validationSet, test: testSet },
    labels,
    features,
    shape.input,
  );
  const summaries =
    shape.input.kind === 'embedding' ? 'the share of each token and the length' : 'mean, deviation, minimum, maximum, last value and slope of each column';
  const partsLine = `parts of ${file}, a seeded shuffle (seed ${options.seed}): training ${trainSet.length} sequences; validation, for stopping and keeping weights, ${validationSet.length}; test, scored once at the end, ${testSet.length}`;
  return {
    task: 'classify',
    input: shape.input,
    outputWidth: labels.length,
    train: sequenceBatches(trainSet, { batchSize: options.batch, features, seed: options.seed }),
    validation,
    metadata: {
      ...shape.metadata,
      split: {
        kind: 'sequences',
        seed: options.seed,
        sequences: sequences.length,
        trainingSequences: trainSet.length,
        validationSequences: validationSet.length,
        testSequences: testSet.length,
      },
    },
    notes: shape.notes,
    validationFigure: (model) => predictedClasses(model, validation, labels.length).accuracy,
    heldOut: (model) => {
      const scores = predictedClasses(model, test, labels.length);
      return {
        metric: 'accuracy',
        lowerIsBetter: false,
        what: `${testSet.length} test sequences of ${file}, drawn at random (seed ${options.seed}), used for neither training nor stopping`,
        model: { name: 'model', description: '', value: scores.accuracy, scores },
        baselines: [
          {
            name: 'majority class',
            description: `always ${JSON.stringify(labels[majorityClass])}, the most common class in training`,
            value: majority.accuracy,
            scores: majority,
          },
          {
            name: 'logistic regression',
            description: `on ${summaries} of each sequence, L2 penalty ${logistic.penalty} chosen on the validation sequences`,
            value: regression.accuracy,
            scores: regression,
          },
        ],
        names: labels,
        context: [partsLine],
      };
    },
  };
}

/**
 * The majority class of the training sequences, and a logistic regression on summary features with its penalty
 * chosen on the validation sequences, both scored on the test sequences.
 */
function classifierBaselines(
  parts: { train: LabelledSequence[]; validation: LabelledSequence[]; test: LabelledSequence[] },
  labels: readonly string[],
  features: number,
  input: ModelDescription['input'],
): { majorityClass: number; majority: ClassificationReport; logistic: ReturnType<typeof chooseLogistic>; regression: ClassificationReport } {
  const labelsOf = (set: LabelledSequence[]) => set.map((q) => q.label ?? 0);
  const trainCounts = labels.map((_, k) => parts.train.filter((q) => q.label === k).length);
  const majorityClass = indexOfLargest(trainCounts);
  const testLabels = labelsOf(parts.test);
  const majority = classificationReport(
    testLabels,
    testLabels.map(() => majorityClass),
    labels.length,
  );
  const vocabulary = input.kind === 'embedding' ? input.vocabulary : 0;
  const featuresOf = (set: LabelledSequence[]) => set.map((q) => sequenceFeatures(q, features, vocabulary));
  const logistic = chooseLogistic(featuresOf(parts.train), labelsOf(parts.train), featuresOf(parts.validation), labelsOf(parts.validation), labels.length);
  const regression = classificationReport(
    testLabels,
    featuresOf(parts.test).map((row) => predictLogistic(logistic, row)),
    labels.length,
  );
  return { majorityClass, majority, logistic, regression };
}

/** The class the model predicts for each sequence of a source, scored against the labels. */
function predictedClasses(model: SequenceModel, source: DataSource, classes: number): ClassificationReport {
  const predicted: number[] = [];
  const actual: number[] = [];
  forEachOutputBatch(model, source, (batch, { outputs }) => {
    if (batch.targets.kind !== 'classes') return;
    for (let r = 0; r < batch.batch; r++) {
      let best = 0;
      for (let k = 1; k < classes; k++) if (outputs[r * classes + k] > outputs[r * classes + best]) best = k;
      predicted.push(best);
      actual.push(batch.targets.classes[r]);
    }
  });
  return classificationReport(actual, predicted, classes);
}

/** Mean cross-entropy (nats) of a next-token model over a source: the trainer's own evaluation. */
export function averageCrossEntropy(model: SequenceModel, source: DataSource): number {
  return figuresOn(model, source).loss;
}
