/**
 * `weft score MODEL DATA`: how good a trained model is on a labelled file, beside the baselines, in the data's
 * units and scale-free. The file is cut as `weft train` cuts its data: a scored part (the end of a series or text,
 * a seeded share of sequences or pairs) and the rest, on which the baselines are fitted; when the file is the one
 * the model was trained on (its SHA-256 matches the weight file's record) the scored part is that run's own test
 * part, so `score` repeats `train`'s verdict, and a scored part that overlaps the rows trained on or stopped by is
 * named in a warning. Forecasts: MAE, RMSE, MAPE, sMAPE and MASE per target (the model's state starts at zero on
 * the first row and runs through every row) against the same forecasting baselines and season rule as `train`.
 * Classifiers: accuracy, per-class precision, recall and F1, macro-F1 and the counts by class, against the
 * majority class and a logistic regression on summary features. Next-token models: perplexity against unigram and
 * Kneser-Ney n-gram models. Encoder-decoders: exact match, token accuracy and BLEU (transduce.ts). Plain text, or
 * `--format json` for scripts.
 */
import { readData } from './train.js';
import { Random, fail, indexOfLargest } from '@weft/core';
import { chooseLogistic, classificationReport, createTranslator, parseTable, predictLogistic, readStepTable, summaryFeatures } from '@weft/io';
import { fieldPath, sha256Hex } from '@weft/io/internal';
import type { Table, Translator } from '@weft/io';
import { isEncoderDecoder } from '@weft/cells';
import { loadWeightFile } from '@weft/io/node';
import { createRuntime } from '@weft/io/runtime';
import type { Runtime } from '@weft/io/runtime';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag, numberFlag } from './args.js';
import { backendFlag, chooseBackend } from './backend.js';
import { DEFAULT_SHARE, scoredItems } from './scored-part.js';
import type { ScoredPart } from './scored-part.js';
import type { HeldOutReport } from './datasets.js';
import { CommandError } from './errors.js';
import { cellModuleFlags, cellPlansFrom } from './cell-module.js';
import { scoreTransduction } from './transduce.js';
import { reportJson, reportLines } from '@weft/io';
import { scoreForecast } from './score-forecast.js';
import { logits, scoreText } from './score-text.js';

export const scoreFlags: FlagSpec[] = [
  ...cellModuleFlags,
  { name: 'format', value: 'text|json', description: 'plain text, or JSON for scripts', fallback: 'text' },
  {
    name: 'season',
    value: 'ROWS|none',
    description: 'season for the seasonal baselines (forecast)',
    fallback: "as weft train chooses it: the time column's spacing or the differences' autocorrelation",
  },
  {
    name: 'test',
    value: 'SHARE',
    description: 'share of the file scored (the end of a series or text, a seeded share of sequences); the rest fits the baselines',
    fallback: "the training run's test part when this is its data file, else 0.2",
  },
  { name: 'label-column', value: 'NAME', description: 'label column of a classify CSV', fallback: 'label' },
  { name: 'beam', value: 'WIDTH', description: 'decode by beam search of this width (pairs)', fallback: '1' },
  backendFlag,
  { name: 'debug', switch: true, description: 'show stack traces' },
];

export async function score(args: ParsedArgs): Promise<string> {
  const [modelPath, dataPath] = args.positional;
  if (modelPath === undefined || dataPath === undefined)
    throw new CommandError('weft score needs a weight file and a labelled data file (see weft score --help)', 2);
  if (args.positional.length > 2) throw new CommandError(`weft score takes a weight file and one data file, got ${args.positional.length} arguments`, 2);
  const format = choiceFlag(args, 'format', ['text', 'json'] as const, 'text');
  const text = readData(dataPath);
  const plans = await cellPlansFrom(args);
  const file = await loadWeightFile(modelPath, { plans });
  const bytes = new TextEncoder().encode(text);
  const training = file.metadata.training as Record<string, unknown> | undefined;
  const split = typeof file.metadata.split === 'object' && file.metadata.split !== null ? (file.metadata.split as Record<string, unknown>) : null;
  const part: ScoredPart = {
    share: args.flags.has('test') ? numberFlag(args, 'test', DEFAULT_SHARE, { min: 0.01, max: 0.99 }) : undefined,
    trainedOn: typeof training?.dataDigest === 'string' && training.dataDigest === (await sha256Hex(new Uint8Array(bytes))),
    split,
  };
  if (isEncoderDecoder(file.model)) {
    const report = await scoreTransduction(file, args, modelPath, dataPath, part);
    return format === 'json' ? `${JSON.stringify(reportJson(report), null, 2)}\n` : `${reportLines(report).join('\n')}\n`;
  }
  const runtime = await createRuntime(file, { backend: chooseBackend(args).name, plans });
  const meta = file.metadata as Record<string, unknown>;
  const season = args.flags.get('season') === 'none' ? null : args.flags.has('season') ? numberFlag(args, 'season', 1, { whole: true, min: 1 }) : undefined;
  const report =
    meta.task === 'forecast'
      ? scoreForecast(runtime, meta, text, dataPath, season, part)
      : meta.task === 'classification'
        ? scoreClassifier(runtime, meta, text, dataPath, args.flags.get('label-column') ?? 'label', part)
        : meta.task === 'next-token'
          ? scoreText(runtime, meta, text, dataPath, part)
          : null;
  if (report === null)
    throw new CommandError(
      `${modelPath}: its metadata names no task weft score knows (${JSON.stringify(meta.task)}); expected forecast, classification or next-token`,
    );
  return format === 'json' ? `${JSON.stringify(reportJson(report), null, 2)}\n` : `${reportLines(report).join('\n')}\n`;
}

/** The class probabilities of every sequence of a long table (one step per row), in the order ids first appear. */
export function classifyStepTable(
  runtime: Runtime,
  meta: Record<string, unknown>,
  table: Table,
  labelColumn?: string,
): { id: string; line: number; label: string | null; probabilities: number[]; steps: readonly (readonly number[])[] }[] {
  const translator = createTranslator(meta);
  const classes = translator.outputNames;
  const read = readStepTable(table, {
    idColumn: String(meta.idColumn),
    stepColumn: typeof meta.stepColumn === 'string' ? meta.stepColumn : undefined,
    labelColumn,
    columns: translator.inputNames,
  });
  const width = translator.inputNames.length;
  const step: Record<string, number> = {};
  return read.sequences.map((q) => {
    const values = new Float32Array(q.steps.length * width);
    q.steps.forEach((v, t) => {
      translator.inputNames.forEach((c, j) => (step[c] = v[j]));
      translator.inputs(step, values.subarray(t * width, (t + 1) * width));
    });
    const out = runtime.run(values, q.steps.length, 1);
    const last = out.subarray((q.steps.length - 1) * classes.length, q.steps.length * classes.length);
    const { logSumExp } = logits(last);
    return { id: q.id, line: q.line, label: q.label, probabilities: Array.from(last, (z) => Math.exp(z - logSumExp)), steps: q.steps };
  });
}

/** One labelled sequence scored: its class, the model's prediction and the baseline's summary features. */
interface ScoredItem {
  actual: number;
  predicted: number;
  features: number[];
}

function scoreClassifier(runtime: Runtime, meta: Record<string, unknown>, text: string, name: string, labelColumn: string, part: ScoredPart): HeldOutReport {
  const translator = createTranslator(meta);
  const classes = translator.outputNames;
  const table = parseTable(text, { file: name });
  const stepRows = typeof meta.idColumn === 'string';
  const items = stepRows ? stepTableItems(runtime, meta, table, labelColumn, translator) : sequenceColumnItems(runtime, meta, table, labelColumn, translator);
  const unit = stepRows ? `labelled sequences (${table.rows.length} step rows)` : 'labelled sequences';
  if (items.length < 3)
    throw new CommandError(`${name}: ${items.length} labelled sequences are too few to score beside baselines fitted on others (at least 3)`);
  const { scored, warning, same } = scoredItems(
    items.length,
    part,
    'sequences',
    { all: 'sequences', test: 'testSequences', fitted: ['trainingSequences', 'validationSequences'] },
    (seed) => new Random(`${seed}:split`),
  );
  const test = items.filter((_, i) => scored.has(i));
  const fit = items.filter((_, i) => !scored.has(i));
  // The baselines learn from the sequences not scored: the majority class, and the logistic regression with its
  // penalty chosen on every fifth of them.
  const counts = classes.map((_, k) => fit.filter((q) => q.actual === k).length);
  const majorityClass = indexOfLargest(counts);
  const learn = fit.filter((_, i) => i % 5 !== 4 || fit.length < 5);
  const check = fit.length < 5 ? fit : fit.filter((_, i) => i % 5 === 4);
  const logistic = chooseLogistic(
    learn.map((q) => q.features),
    learn.map((q) => q.actual),
    check.map((q) => q.features),
    check.map((q) => q.actual),
    classes.length,
  );
  const actual = test.map((q) => q.actual);
  const scores = classificationReport(
    actual,
    test.map((q) => q.predicted),
    classes.length,
  );
  const majority = classificationReport(
    actual,
    actual.map(() => majorityClass),
    classes.length,
  );
  const regression = classificationReport(
    actual,
    test.map((q) => predictLogistic(logistic, q.features)),
    classes.length,
  );
  return {
    metric: 'accuracy',
    lowerIsBetter: false,
    what: `${test.length} of the ${items.length} ${unit} of ${name}${same ? ", the training run's test part" : ', drawn at random'}`,
    model: { name: 'model', description: '', value: scores.accuracy, scores },
    baselines: [
      {
        name: 'majority class',
        description: `always ${JSON.stringify(classes[majorityClass])}, the most common class of the ${fit.length} sequences not scored`,
        value: majority.accuracy,
        scores: majority,
      },
      {
        name: 'logistic regression',
        description: `on summary features of each sequence, fitted on the ${fit.length} sequences not scored (L2 penalty ${logistic.penalty})`,
        value: regression.accuracy,
        scores: regression,
      },
    ],
    names: classes,
    context: warning === null ? [] : [warning],
  };
}

/** The labelled sequences of a table of step rows (an id column), each run through the runtime. */
function stepTableItems(runtime: Runtime, meta: Record<string, unknown>, table: Table, labelColumn: string, translator: Translator): ScoredItem[] {
  const classes = translator.outputNames;
  const name = table.file;
  const items: ScoredItem[] = [];
  const labelAt = table.header.indexOf(labelColumn);
  const results = classifyStepTable(runtime, meta, table, labelColumn);
  results.forEach((r) => {
    const k = classes.indexOf(r.label as string);
    if (k < 0)
      throw new CommandError(
        `${name}:${r.line}:${table.rows.find((row) => row.line === r.line)?.starts[labelAt] ?? 1}: ${JSON.stringify((r.label ?? '').slice(0, 80))} is not a class the model knows (${classes.join(', ')})`,
      );
    let best = 0;
    for (let j = 1; j < r.probabilities.length; j++) if (r.probabilities[j] > r.probabilities[best]) best = j;
    items.push({ actual: k, predicted: best, features: summaryFeatures(r.steps.flat(), r.steps.length, translator.inputNames.length) });
  });
  return items;
}

/** The labelled sequences of a table with a sequence column (numbers or tokens), each run through the runtime. */
function sequenceColumnItems(runtime: Runtime, meta: Record<string, unknown>, table: Table, labelColumn: string, translator: Translator): ScoredItem[] {
  const classes = translator.outputNames;
  const name = table.file;
  const items: ScoredItem[] = [];
  const sequenceColumn = String(meta.sequenceColumn ?? 'sequence');
  const labelAt = table.header.indexOf(labelColumn);
  const sequenceAt = table.header.indexOf(sequenceColumn);
  if (labelAt < 0 || sequenceAt < 0)
    throw new CommandError(
      `${name}: needs columns ${JSON.stringify(labelColumn)} and ${JSON.stringify(sequenceColumn)} to score; found ${table.header.join(', ')}`,
      2,
    );
  const tokens = Array.isArray(meta.vocabulary) && meta.vocabulary.length > 0;
  const vocabulary = tokens ? (meta.vocabulary as unknown[]).length : 0;
  const norm = meta.normalisation as { mean: number[]; deviation: number[] } | undefined;
  table.rows.forEach((r, i) => {
    const label = r.fields[labelAt].trim();
    const k = classes.indexOf(label);
    if (k < 0)
      throw new CommandError(`${fieldPath(table, i, labelAt)}: ${JSON.stringify(label.slice(0, 80))} is not a class the model knows (${classes.join(', ')})`);
    const pieces = r.fields[sequenceAt]
      .trim()
      .split(/\s+/)
      .filter((s) => s !== '');
    if (pieces.length === 0) fail('bad_data', fieldPath(table, i, sequenceAt), 'a sequence of at least one item', 'an empty field');
    const raw = tokens
      ? null
      : pieces.map((s, j) => {
          const v = Number(s);
          if (!Number.isFinite(v))
            throw new CommandError(`${fieldPath(table, i, sequenceAt)}: item ${j + 1} ${JSON.stringify(s.slice(0, 80))} is not a number`);
          return v;
        });
    const ids = tokens ? translator.tokenIds(pieces.join(' ')).ids : null;
    const input = ids ?? Float32Array.from(raw!, (v) => (v - (norm?.mean[0] ?? 0)) / (norm?.deviation[0] ?? 1));
    const out = runtime.run(input, pieces.length, 1);
    let features: number[];
    if (ids !== null) {
      features = new Array<number>(vocabulary).fill(0);
      for (const id of ids) features[id] += 1 / ids.length;
      features.push(ids.length);
    } else features = summaryFeatures(raw!, raw!.length, 1);
    items.push({ actual: k, predicted: logits(out.subarray((pieces.length - 1) * classes.length, pieces.length * classes.length)).best, features });
  });
  return items;
}
