/**
 * Turning the user's files into training data, and remembering how (the metadata a weight file needs to be run on
 * new data with nothing else):
 * - a CSV of numeric series → next-value forecasting `horizon` rows ahead, values normalised per column;
 * - a text file → next-character (or next-word) prediction;
 * - a labelled CSV of sequences → sequence classification.
 * Validation data is the last share of a series or text (time order kept), or a seeded random share of sequences.
 *
 * Why one file of this length: the three tasks' preparations (forecast, text, classify) produce one shape (Prepared,
 * HeldOutReport) and share their normalisation and held-out splits; side by side they stay alike.
 */
import { Random, fail } from '@weft/core';
import type { ModelDescription, SequenceModel } from '@weft/cells';
import { figuresOn, forEachOutputBatch, sequenceBatches, streamBatches } from '@weft/optim';
import type { Batch, DataSource, LabelledSequence } from '@weft/optim';
import { ForecastErrorSum, UNKNOWN_TOKEN, buildVocabulary, classificationReport, columnNamed, columnStatistics, decimal, fieldPath, forecastBaselines, parseTable, readSeries, readStepTable } from '@weft/io';
import type { ClassificationReport, ForecastErrors, Table, WeightMetadata } from '@weft/io';
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
  /** The model and every baseline on the same held-out data, in the data's own units. */
  readonly heldOut: (model: SequenceModel) => HeldOutReport;
}

/** One row of a held-out comparison: a model or a baseline, and its figures. */
export interface Contender {
  readonly name: string;
  /** How a baseline forecasts, in words (empty for the model). */
  readonly description: string;
  /** The figure the verdict compares (MAE, perplexity: lower is better; accuracy: higher). */
  readonly value: number;
  /** Forecast errors per target (forecasts only). */
  readonly perTarget?: readonly ForecastErrors[];
  readonly overall?: ForecastErrors;
  /** Classification scores (classify only). */
  readonly scores?: ClassificationReport;
  /** Transduction scores (pairs only): exact-match rate, token accuracy, corpus BLEU, each in [0, 1]. */
  readonly transduction?: { readonly exactMatch: number; readonly tokenAccuracy: number; readonly bleu: number };
}

export interface HeldOutReport {
  /** What `value` is: "MAE" (in the data's units), "perplexity", "accuracy" or "exact match". */
  readonly metric: string;
  readonly lowerIsBetter: boolean;
  /** What was held out, in words. */
  readonly what: string;
  readonly model: Contender;
  readonly baselines: readonly Contender[];
  /** Target names (forecasts), or class names (classify). */
  readonly names: readonly string[];
}

export interface PrepareOptions {
  readonly window: number;
  readonly lookback: number;
  readonly streams: number;
  readonly validationShare: number;
  readonly horizon: number;
  readonly columns?: string[];
  readonly targets?: string[];
  readonly tokens: 'characters' | 'words';
  readonly embedding: number;
  readonly batch: number;
  readonly seed: string;
  /** Rows in a season for the seasonal-naive baseline; null for none; undefined to detect one. */
  readonly season?: number | null;
  /** Forecast the change instead of the level: differences y(t+h) − y(t), or log returns ln(y(t+h) / y(t)). */
  readonly transform?: 'none' | 'differences' | 'log-returns';
}

/** A target transform and its inverse, from the level now (y) and the level ahead (ahead) or the change (change). */
export const TRANSFORMS = {
  differences: { forward: (ahead: number, y: number) => ahead - y, inverse: (change: number, y: number) => y + change },
  'log-returns': { forward: (ahead: number, y: number) => Math.log(ahead / y), inverse: (change: number, y: number) => y * Math.exp(change) },
} as const;

export function prepareForecast(text: string, file: string, options: PrepareOptions): Prepared {
  const table = parseTable(text, { file });
  const series = readSeries(table, { columns: options.columns, targets: options.targets, choices: { columns: 'with --columns', targets: 'for --target' } });
  const columns = series.columns.map((name) => table.header.indexOf(name));
  const targets = series.targets.map((name) => table.header.indexOf(name));
  const leftOut = series.leftOut;
  const rows = table.rows.length;
  const values = series.values;
  const validationRows = Math.max(options.window + options.horizon + 1, Math.round(rows * options.validationShare));
  const trainRows = rows - validationRows;
  if (trainRows < options.streams * options.window + options.horizon) {
    throw new CommandError(`${file}: ${rows} rows are too few for ${options.streams} streams of ${options.window}-row windows plus a validation share of ${options.validationShare}`);
  }
  const { mean, deviation } = columnStatistics(values.slice(0, trainRows), columns.length);
  const normalised = values.map((row) => row.map((v, j) => (v - mean[j]) / deviation[j]));
  const targetIndexes = targets.map((t) => columns.indexOf(t));
  const flat = (from: number, to: number) => normalised.slice(from, to).flat();
  // With a transform, the model learns the change over `horizon` rows (row s holds the change from s − h to s).
  const transform = options.transform ?? 'none';
  let change: { mean: number[]; deviation: number[]; rows: number[][] } | null = null;
  if (transform !== 'none') {
    if (transform === 'log-returns') {
      values.forEach((row, r) => targetIndexes.forEach((j, k) => {
        if (!(row[j] > 0)) fail('bad_data', fieldPath(table, r, targets[k]), `a number > 0 in column ${JSON.stringify(table.header[targets[k]])} (log returns need positive values)`, String(row[j]));
      }));
    }
    const f = TRANSFORMS[transform].forward;
    const raw = values.map((row, s) => targetIndexes.map((j) => (s < options.horizon ? 0 : f(row[j], values[s - options.horizon][j]))));
    const statistics = columnStatistics(raw.slice(options.horizon, trainRows), targetIndexes.length);
    change = { ...statistics, rows: raw.map((row) => row.map((v, k) => (v - statistics.mean[k]) / statistics.deviation[k])) };
  }
  const targetOptions = (from: number, to: number) => change === null
    ? { targetColumns: targetIndexes }
    : { targets: change.rows.slice(from, to).flat(), targetWidth: targetIndexes.length };
  const train = streamBatches({ kind: 'values', values: flat(0, trainRows), features: columns.length, ...targetOptions(0, trainRows), horizon: options.horizon }, { streams: options.streams, window: options.window, lookback: options.lookback });
  // Validation reads the held-out rows as one stream, warmed up by the window before them.
  const validationFrom = trainRows - options.window;
  const heldOutSteps = Math.floor((rows - validationFrom - options.horizon) / options.window) * options.window;
  const validation = streamBatches({ kind: 'values', values: flat(validationFrom, validationFrom + heldOutSteps + options.horizon), features: columns.length, ...targetOptions(validationFrom, validationFrom + heldOutSteps + options.horizon), horizon: options.horizon }, { streams: 1, window: options.window });
  // The scored positions: rows t ≥ trainRows whose forecast (of row t + horizon) lies in the held-out stream; the
  // warm-up window before them carries state only. The baselines are scored on exactly these positions.
  const positions: number[] = [];
  for (let t = trainRows; t < validationFrom + heldOutSteps; t++) positions.push(t);
  if (positions.length === 0) throw new CommandError(`${file}: the validation share leaves no held-out rows to score; raise --validation`);
  if (options.season !== undefined && options.season !== null && !(options.season < trainRows)) {
    // The training rows end at this line: a season must fit in them.
    fail('invalid_option', `${file}:${table.rows[trainRows - 1].line}:1 (--season)`, `a season shorter than the ${trainRows} training rows (of ${rows}), which end at this line`, String(options.season));
  }
  const baselines = forecastBaselines({ values, targets: targetIndexes, horizon: options.horizon, trainRows, positions }, { season: options.season });
  const targetNames = targets.map((c) => table.header[c]);
  const firstScored = table.rows[trainRows].line;
  const lastScored = table.rows[positions[positions.length - 1] + options.horizon].line;
  return {
    task: 'forecast',
    input: { kind: 'values', width: columns.length },
    outputWidth: targets.length,
    train,
    validation,
    metadata: {
      task: 'forecast',
      columns: columns.map((c) => table.header[c]),
      targetColumns: targetNames,
      horizon: options.horizon,
      normalisation: { mean, deviation },
      ...(change === null || transform === 'none' ? {} : { targetTransform: { kind: transform, mean: change.mean, deviation: change.deviation } }),
    },
    notes: options.columns === undefined && leftOut.length > 0 ? [`left out columns that hold no numbers: ${leftOut.join('; ')}`] : [],
    heldOut: (model) => {
      // Errors in the data's own units, per target and overall, at the scored positions.
      const sums = targetIndexes.map(() => new ForecastErrorSum());
      const all = new ForecastErrorSum();
      let position = 0;
      forEachOutputBatch(model, validation, (_batch, { outputs }) => {
        for (let i = 0; i < outputs.length; i += targetIndexes.length) {
          const t = validationFrom + position++;
          if (t < trainRows || t >= validationFrom + heldOutSteps) continue;
          targetIndexes.forEach((j, k) => {
            const forecast = change === null || transform === 'none'
              ? outputs[i + k] * deviation[j] + mean[j]
              : TRANSFORMS[transform].inverse(outputs[i + k] * change.deviation[k] + change.mean[k], values[t][j]);
            const actual = values[t + options.horizon][j];
            sums[k].add(actual, forecast);
            all.add(actual, forecast);
          });
        }
      });
      const overall = all.result();
      return {
        metric: 'MAE',
        lowerIsBetter: true,
        what: `${positions.length} forecasts of ${targetNames.join(', ')}, ${options.horizon} row${options.horizon === 1 ? '' : 's'} ahead, for lines ${firstScored + options.horizon}–${lastScored} of ${file} (the last ${rows - trainRows} rows, not trained on)`,
        model: { name: 'model', description: '', value: overall.mae, perTarget: sums.map((s) => s.result()), overall },
        baselines: baselines.map((b) => ({ name: b.name, description: b.description, value: b.overall.mae, perTarget: b.perTarget, overall: b.overall })),
        names: targetNames,
      };
    },
  };
}

export function tokenize(text: string, mode: 'characters' | 'words'): string[] {
  return mode === 'characters' ? [...text] : (text.match(/\S+/g) ?? []);
}

export const UNKNOWN = UNKNOWN_TOKEN;

export function prepareText(text: string, file: string, options: PrepareOptions): Prepared {
  const pieces = tokenize(text, options.tokens);
  const validationCount = Math.max(options.window + 1, Math.round(pieces.length * options.validationShare));
  const trainPieces = pieces.slice(0, pieces.length - validationCount);
  if (trainPieces.length < options.streams * options.window + 1) {
    throw new CommandError(`${file}: ${pieces.length} ${options.tokens} are too few for ${options.streams} streams of ${options.window}-token windows`);
  }
  const vocabulary = buildVocabulary(trainPieces);
  const index = new Map(vocabulary.map((v, i) => [v, i]));
  const ids = (list: string[]) => Int32Array.from(list, (p) => index.get(p) ?? 0);
  const trainIds = ids(trainPieces);
  const validationPieces = pieces.slice(pieces.length - validationCount);
  const validationIds = ids(validationPieces);
  const unseen = validationPieces.filter((p) => !index.has(p)).length;
  const counts = new Float64Array(vocabulary.length).fill(1);
  for (const id of trainIds) counts[id]++;
  const total = counts.reduce((s, c) => s + c, 0);
  let crossEntropy = 0;
  for (let i = 1; i < validationIds.length; i++) crossEntropy -= Math.log(counts[validationIds[i]] / total);
  const unigram = Math.exp(crossEntropy / (validationIds.length - 1));
  const validationSource = streamBatches({ kind: 'tokens', tokens: validationIds, vocabulary: vocabulary.length }, { streams: 1, window: Math.min(options.window, validationIds.length - 1) });
  return {
    task: 'text',
    input: { kind: 'embedding', vocabulary: vocabulary.length, width: options.embedding },
    outputWidth: vocabulary.length,
    train: streamBatches({ kind: 'tokens', tokens: trainIds, vocabulary: vocabulary.length }, { streams: options.streams, window: options.window, lookback: options.lookback }),
    validation: validationSource,
    metadata: { task: 'next-token', tokens: options.tokens, vocabulary },
    notes: unseen > 0 ? [`${unseen} of the ${validationCount} held-out ${options.tokens} never occur in the training text; the model reads them as ${UNKNOWN}`] : [],
    heldOut: (model) => ({
      metric: 'perplexity',
      lowerIsBetter: true,
      what: `the last ${validationCount} ${options.tokens} of ${file} (not trained on), each predicted from those before it`,
      model: { name: 'model', description: '', value: Math.exp(averageCrossEntropy(model, validationSource)) },
      baselines: [{ name: 'unigram', description: 'each token as often as in the training text', value: unigram }],
      names: [],
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
    throw new CommandError(`${file}: needs columns ${JSON.stringify(options.labelColumn)} and ${JSON.stringify(options.sequenceColumn)} (or a long table: one step per row, with --id-column); found ${table.header.join(', ')}`, 2);
  }
  const labels = [...new Set(table.rows.map((r) => r.fields[labelAt].trim()))].sort();
  onlyOneClass(labels, table.rows.length > 0 ? fieldPath(table, 0, labelAt) : `${file}:1:1`);
  const items = table.rows.map((r) => r.fields[sequenceAt].trim().split(/\s+/).filter((s) => s !== ''));
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
    fail('bad_data', fieldPath(table, row, sequenceAt), `a decimal number, as ${numbers} of the ${total} items of the sequences are`, JSON.stringify(bad.slice(0, 80)));
  }
  const vocabulary = numeric ? null : buildVocabulary(items.flat());
  const index = new Map((vocabulary ?? []).map((v, i) => [v, i]));
  let mean = 0;
  let deviation = 1;
  if (numeric) {
    const statistics = columnStatistics(items.flat().map((s) => [decimal(s)]), 1);
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
  if (labels.length < 2) fail('bad_data', where, 'labels of at least two classes (a classifier needs them)', `the label ${JSON.stringify(labels[0] ?? '')} on every sequence`);
}

/** A labelled long table (one step per row, several numbers per step) as sequences, normalised per column. */
function prepareStepClassification(table: Table, file: string, options: ClassifyOptions): Prepared {
  const read = readStepTable(table, { idColumn: options.idColumn as string, stepColumn: options.stepColumn, labelColumn: options.labelColumn, columns: options.columns });
  const labels = [...new Set(read.sequences.map((q) => q.label as string))].sort();
  const width = read.columns.length;
  const labelAt = columnNamed(table, options.labelColumn, 'the labels');
  onlyOneClass(labels, table.rows.length > 0 ? fieldPath(table, 0, labelAt) : `${file}:1:1`);
  const statistics = columnStatistics(read.sequences.flatMap((q) => q.steps), width);
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

function classificationData(
  sequences: LabelledSequence[], labels: string[], features: number, file: string, options: ClassifyOptions,
  shape: { input: ModelDescription['input']; metadata: WeightMetadata; notes: string[] },
): Prepared {
  const order = sequences.map((_, i) => i);
  new Random(`${options.seed}:split`).shuffle(order);
  const validationCount = Math.max(1, Math.round(sequences.length * options.validationShare));
  const validationSet = order.slice(0, validationCount).map((i) => sequences[i]);
  const trainSet = order.slice(validationCount).map((i) => sequences[i]);
  if (trainSet.length === 0) throw new CommandError(`${file}: too few sequences to keep a validation share of ${options.validationShare}`);
  const validation = sequenceBatches(validationSet, { batchSize: 64, features });
  // The majority class of the training sequences, scored on the validation sequences.
  const trainCounts = labels.map((_, k) => trainSet.filter((q) => q.label === k).length);
  const majorityClass = trainCounts.indexOf(Math.max(...trainCounts));
  const validationLabels = validationSet.map((q) => q.label ?? 0);
  const majority = classificationReport(validationLabels, validationLabels.map(() => majorityClass), labels.length);
  return {
    task: 'classify',
    input: shape.input,
    outputWidth: labels.length,
    train: sequenceBatches(trainSet, { batchSize: options.batch, features, seed: options.seed }),
    validation,
    metadata: shape.metadata,
    notes: shape.notes,
    heldOut: (model) => {
      const predicted: number[] = [];
      const actual: number[] = [];
      forEachOutputBatch(model, validation, (batch, { outputs }) => {
        if (batch.targets.kind !== 'classes') return;
        for (let r = 0; r < batch.batch; r++) {
          let best = 0;
          for (let k = 1; k < labels.length; k++) if (outputs[r * labels.length + k] > outputs[r * labels.length + best]) best = k;
          predicted.push(best);
          actual.push(batch.targets.classes[r]);
        }
      });
      const scores = classificationReport(actual, predicted, labels.length);
      return {
        metric: 'accuracy',
        lowerIsBetter: false,
        what: `${validationSet.length} sequences of ${file} held out at random (seed ${options.seed}), not trained on`,
        model: { name: 'model', description: '', value: scores.accuracy, scores },
        baselines: [{ name: 'majority class', description: `always ${JSON.stringify(labels[majorityClass])}, the most common class in training`, value: majority.accuracy, scores: majority }],
        names: labels,
      };
    },
  };
}

/** Mean cross-entropy (nats) of a next-token model over a source: the trainer's own evaluation. */
export function averageCrossEntropy(model: SequenceModel, source: DataSource): number {
  return figuresOn(model, source).loss;
}
