/**
 * Turning the user's files into training data, and remembering how (the metadata a weight file needs to be run on
 * new data with nothing else):
 * - a CSV of numeric series → next-value forecasting `horizon` rows ahead, values normalised per column;
 * - a text file → next-character (or next-word) prediction;
 * - a labelled CSV of sequences → sequence classification.
 * Validation data is the last share of a series or text (time order kept), or a seeded random share of sequences.
 */
import { Random } from '@weft/core';
import type { ModelDescription, SequenceModel } from '@weft/cells';
import { classificationMetrics, sequenceBatches, streamBatches } from '@weft/optim';
import type { Batch, DataSource, LabelledSequence } from '@weft/optim';
import { Tape, lastStepsValues } from './evaluate.js';
import type { WeightMetadata } from '@weft/io';
import { columnStatistics, decimal, numberAt, parseCsv } from './csv.js';
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
  /** The held-out baseline and how to read the model's validation figure against it. */
  readonly baseline: { readonly name: string; readonly value: number; readonly metric: string };
  /** The model's figure on the held-out data, in the baseline's terms (data units for forecasts). */
  readonly heldOut: (model: SequenceModel) => number;
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
}

export function prepareForecast(text: string, file: string, options: PrepareOptions): Prepared {
  const table = parseCsv(text, file);
  // A column of numbers is used; a column with no number at all (dates, names) is left out, and said so; a column
  // of numbers with some cells that are not is an error at its first such cell, never quietly dropped.
  const numericColumns: number[] = [];
  const leftOut: string[] = [];
  table.header.forEach((name, c) => {
    let numbers = 0;
    let firstBad = -1;
    table.rows.forEach((row, r) => {
      if (!Number.isNaN(decimal(row.fields[c]))) numbers++;
      else if (firstBad < 0) firstBad = r;
    });
    if (firstBad < 0) numericColumns.push(c);
    else if (numbers === 0) leftOut.push(`${name} (no numbers: ${JSON.stringify(table.rows[firstBad].fields[c].trim().slice(0, 40))} at line ${table.rows[firstBad].line})`);
    else if (options.columns === undefined) {
      throw new CommandError(`${file}:${table.rows[firstBad].line}:${c + 1}: ${JSON.stringify(table.rows[firstBad].fields[c].trim().slice(0, 80))} in column "${name}" is not a decimal number `
        + `(${numbers} of ${table.rows.length} cells there are); fix the cell, or choose the columns with --columns`, 1);
    }
  });
  const pick = (names: string[] | undefined, fallback: number[], flag: string): number[] =>
    names === undefined
      ? fallback
      : names.map((name) => {
          const at = table.header.indexOf(name);
          if (at < 0) throw new CommandError(`${file}: no column named ${JSON.stringify(name)} (for --${flag}); columns are ${table.header.join(', ')}`, 2);
          return at;
        });
  const columns = pick(options.columns, numericColumns, 'columns');
  if (columns.length === 0) throw new CommandError(`${file}: no numeric columns to forecast`);
  const targets = pick(options.targets, columns, 'target');
  for (const t of targets) if (!columns.includes(t)) throw new CommandError(`--target ${table.header[t]} must be one of the input columns (${columns.map((c) => table.header[c]).join(', ')})`, 2);
  const rows = table.rows.length;
  const values: number[][] = table.rows.map((_, r) => columns.map((c) => numberAt(table, r, c, file)));
  const validationRows = Math.max(options.window + options.horizon + 1, Math.round(rows * options.validationShare));
  const trainRows = rows - validationRows;
  if (trainRows < options.streams * options.window + options.horizon) {
    throw new CommandError(`${file}: ${rows} rows are too few for ${options.streams} streams of ${options.window}-row windows plus a validation share of ${options.validationShare}`);
  }
  const { mean, deviation } = columnStatistics(values.slice(0, trainRows), columns.length);
  const normalised = values.map((row) => row.map((v, j) => (v - mean[j]) / deviation[j]));
  const targetIndexes = targets.map((t) => columns.indexOf(t));
  const flat = (from: number, to: number) => normalised.slice(from, to).flat();
  const train = streamBatches({ kind: 'values', values: flat(0, trainRows), features: columns.length, targetColumns: targetIndexes, horizon: options.horizon }, { streams: options.streams, window: options.window, lookback: options.lookback });
  // Validation reads the held-out rows as one stream, warmed up by the window before them.
  const validationFrom = trainRows - options.window;
  const heldOutSteps = Math.floor((rows - validationFrom - options.horizon) / options.window) * options.window;
  const validation = streamBatches({ kind: 'values', values: flat(validationFrom, validationFrom + heldOutSteps + options.horizon), features: columns.length, targetColumns: targetIndexes, horizon: options.horizon }, { streams: 1, window: options.window });
  // Naive baseline on the same positions: the value now, as the forecast for `horizon` rows ahead (persistence).
  let naive = 0;
  let count = 0;
  for (let t = validationFrom; t < validationFrom + heldOutSteps; t++) {
    for (const j of targetIndexes) {
      naive += Math.abs(values[t + options.horizon][j] - values[t][j]);
      count++;
    }
  }
  return {
    task: 'forecast',
    input: { kind: 'values', width: columns.length },
    outputWidth: targets.length,
    train,
    validation,
    metadata: {
      task: 'forecast',
      columns: columns.map((c) => table.header[c]),
      targetColumns: targets.map((c) => table.header[c]),
      horizon: options.horizon,
      normalisation: { mean, deviation },
    },
    notes: options.columns === undefined && leftOut.length > 0 ? [`left out columns that hold no numbers: ${leftOut.join('; ')}`] : [],
    baseline: { name: `persistence (the value now, ${options.horizon} rows ahead)`, value: naive / count, metric: 'held-out MAE' },
    heldOut: (model) => {
      // Mean absolute error in the data's own units, over every target column and held-out position.
      let error = 0;
      let n = 0;
      forEachBatch(model, validation, (batch, outputs) => {
        const targetsTensor = batch.targets.kind === 'values' ? batch.targets.values.data : null;
        for (let i = 0; i < outputs.length; i++) {
          const j = targetIndexes[i % targetIndexes.length];
          error += Math.abs(outputs[i] - (targetsTensor as ArrayLike<number>)[i]) * deviation[j];
          n++;
        }
      });
      return error / n;
    },
  };
}

export function tokenize(text: string, mode: 'characters' | 'words'): string[] {
  return mode === 'characters' ? [...text] : (text.match(/\S+/g) ?? []);
}

export const UNKNOWN = '<unknown>';

export function prepareText(text: string, file: string, options: PrepareOptions): Prepared {
  const pieces = tokenize(text, options.tokens);
  const validationCount = Math.max(options.window + 1, Math.round(pieces.length * options.validationShare));
  const trainPieces = pieces.slice(0, pieces.length - validationCount);
  if (trainPieces.length < options.streams * options.window + 1) {
    throw new CommandError(`${file}: ${pieces.length} ${options.tokens} are too few for ${options.streams} streams of ${options.window}-token windows`);
  }
  const vocabulary = [UNKNOWN, ...[...new Set(trainPieces)].sort()];
  const index = new Map(vocabulary.map((v, i) => [v, i]));
  const ids = (list: string[]) => Int32Array.from(list, (p) => index.get(p) ?? 0);
  const trainIds = ids(trainPieces);
  const validationIds = ids(pieces.slice(pieces.length - validationCount));
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
    baseline: { name: 'unigram frequencies of the training text', value: unigram, metric: 'validation perplexity' },
    heldOut: (model) => Math.exp(averageCrossEntropy(model, validationSource)),
  };
}

export function prepareClassification(text: string, file: string, options: PrepareOptions & { labelColumn: string; sequenceColumn: string }): Prepared {
  const table = parseCsv(text, file);
  const labelAt = table.header.indexOf(options.labelColumn);
  const sequenceAt = table.header.indexOf(options.sequenceColumn);
  if (labelAt < 0 || sequenceAt < 0) {
    throw new CommandError(`${file}: needs columns ${JSON.stringify(options.labelColumn)} and ${JSON.stringify(options.sequenceColumn)}; found ${table.header.join(', ')}`, 2);
  }
  const labels = [...new Set(table.rows.map((r) => r.fields[labelAt].trim()))].sort();
  const items = table.rows.map((r) => r.fields[sequenceAt].trim().split(/\s+/).filter((s) => s !== ''));
  items.forEach((list, i) => {
    if (list.length === 0) throw new CommandError(`${file}:${table.rows[i].line}:${sequenceAt + 1}: an empty sequence`);
  });
  // Numbers or tokens, decided by every item: a file of numbers with one item that is not is an error there,
  // not a quiet switch to tokens.
  const total = items.reduce((n, list) => n + list.length, 0);
  const numbers = items.reduce((n, list) => n + list.filter((s) => !Number.isNaN(decimal(s))).length, 0);
  const numeric = numbers === total;
  if (!numeric && numbers >= total / 2) {
    const row = items.findIndex((list) => list.some((s) => Number.isNaN(decimal(s))));
    const bad = items[row].find((s) => Number.isNaN(decimal(s)))!;
    throw new CommandError(`${file}:${table.rows[row].line}:${sequenceAt + 1}: ${JSON.stringify(bad.slice(0, 80))} in a sequence of numbers is not a decimal number (${numbers} of ${total} items are)`);
  }
  const vocabulary = numeric ? null : [UNKNOWN, ...[...new Set(items.flat())].sort()];
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
  const order = sequences.map((_, i) => i);
  new Random(`${options.seed}:split`).shuffle(order);
  const validationCount = Math.max(1, Math.round(sequences.length * options.validationShare));
  const validationSet = order.slice(0, validationCount).map((i) => sequences[i]);
  const trainSet = order.slice(validationCount).map((i) => sequences[i]);
  if (trainSet.length === 0) throw new CommandError(`${file}: too few sequences to keep a validation share of ${options.validationShare}`);
  const validation = sequenceBatches(validationSet, { batchSize: 64, features: 1 });
  const majority = Math.max(...labels.map((_, k) => validationSet.filter((s) => s.label === k).length)) / validationSet.length;
  return {
    task: 'classify',
    input: numeric ? { kind: 'values', width: 1 } : { kind: 'embedding', vocabulary: vocabulary!.length, width: options.embedding },
    outputWidth: labels.length,
    train: sequenceBatches(trainSet, { batchSize: options.batch, features: 1, seed: options.seed }),
    validation,
    metadata: {
      task: 'classification',
      classes: labels,
      ...(numeric ? { normalisation: { mean: [mean], deviation: [deviation] } } : { vocabulary: vocabulary ?? [], tokens: 'words' }),
      sequenceColumn: options.sequenceColumn,
    },
    baseline: { name: 'always the most common class', value: majority, metric: 'validation accuracy' },
    heldOut: (model) => {
      let correct = 0;
      let n = 0;
      forEachBatch(model, validation, (batch, outputs) => {
        if (batch.targets.kind !== 'classes') return;
        const metrics = classificationMetrics(outputs, batch.targets.classes, null, batch.batch, labels.length);
        correct += metrics.accuracy * metrics.count;
        n += metrics.count;
      });
      return correct / n;
    },
  };
}

/**
 * Runs the model over every batch of a source without recording (state carried across stream windows) and hands
 * each batch's outputs at the loss positions (every step, or each row's last valid step) to `visit`.
 */
export function forEachBatch(model: SequenceModel, source: DataSource, visit: (batch: Batch, outputs: Float32Array | Float64Array) => void): void {
  const tape = new Tape({ recording: false });
  let carried: import('@weft/core').Tensor[] | null = null;
  for (let i = 0; i < source.batchesPerEpoch; i++) {
    const batch = source.batch(0, i);
    const result = model.run(tape, batch.input, { lengths: batch.lengths, initialState: source.carriesState && carried !== null ? carried : undefined });
    visit(batch, batch.targets.perStep ? result.outputs.data : lastStepsValues(result.outputs, batch.lengths));
    if (source.carriesState) carried = result.state.map((t) => tape.keep(t));
    tape.clear();
  }
}

/** Mean cross-entropy (nats) of a next-token model over a source. */
export function averageCrossEntropy(model: SequenceModel, source: DataSource): number {
  let total = 0;
  let n = 0;
  forEachBatch(model, source, (batch, outputs) => {
    if (batch.targets.kind !== 'classes') return;
    const m = classificationMetrics(outputs, batch.targets.classes, null, batch.targets.classes.length, model.outputSize);
    total += m.crossEntropy * m.count;
    n += m.count;
  });
  return total / n;
}
