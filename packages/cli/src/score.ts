/**
 * `weft score MODEL DATA`: how good a trained model is on a labelled file, beside the baselines, in the data's
 * units. Forecast models: MAE, RMSE and MAPE per target over every row whose target row is in the file (the
 * model's state starts at zero on the first row), against persistence, the training mean (recorded in the weight
 * file), seasonal naive (`--season ROWS`, or detected in the file) and a linear least-squares fit made on the
 * file itself (so it is flattered: it has seen the answers). Classifiers: accuracy, per-class precision, recall
 * and F1, macro-F1, the counts by actual and predicted class, against always predicting the file's most common
 * class. Next-token models: perplexity against a uniform guess over the vocabulary. Encoder-decoders (pairs): exact
 * match, token accuracy and corpus BLEU against copying the source (transduce.ts). Plain text, or
 * `--format json` for scripts.
 */
import { existsSync, readFileSync } from 'node:fs';
import { fail, logSumExp } from '@weft/core';
import { classificationReport, createTranslator, detectSeason, fieldPath, fitLinear, numberAt, parseTable, readStepTable, scoreForecaster } from '@weft/io';
import type { SeriesSplit, Table } from '@weft/io';
import { isEncoderDecoder } from '@weft/cells';
import { loadWeightFile } from '@weft/io/node';
import { createRuntime } from '@weft/io/runtime';
import type { Runtime } from '@weft/io/runtime';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag, numberFlag } from './args.js';
import { backendFlag, chooseBackend } from './backend.js';
import type { Contender, HeldOutReport } from './datasets.js';
import { CommandError } from './errors.js';
import { scoreTransduction } from './transduce.js';
import { reportJson, reportLines } from './report.js';

export const scoreFlags: FlagSpec[] = [
  { name: 'format', value: 'text|json', description: 'plain text, or JSON for scripts', fallback: 'text' },
  { name: 'season', value: 'ROWS|none', description: 'season for the seasonal-naive baseline (forecast)', fallback: 'detected in the file' },
  { name: 'label-column', value: 'NAME', description: 'label column of a classify CSV', fallback: 'label' },
  { name: 'beam', value: 'WIDTH', description: 'decode by beam search of this width (pairs)', fallback: '1' },
  backendFlag,
  { name: 'debug', switch: true, description: 'show stack traces' },
];

function logits(row: ArrayLike<number>): { best: number; logSumExp: number } {
  let best = 0;
  for (let k = 1; k < row.length; k++) if (row[k] > row[best]) best = k;
  return { best, logSumExp: logSumExp(row, 0, row.length) };
}

export async function score(args: ParsedArgs): Promise<string> {
  const [modelPath, dataPath] = args.positional;
  if (modelPath === undefined || dataPath === undefined) throw new CommandError('weft score needs a weight file and a labelled data file (see weft score --help)', 2);
  if (args.positional.length > 2) throw new CommandError(`weft score takes a weight file and one data file, got ${args.positional.length} arguments`, 2);
  const format = choiceFlag(args, 'format', ['text', 'json'] as const, 'text');
  if (!existsSync(dataPath)) throw new CommandError(`${dataPath}: no such file`);
  const file = await loadWeightFile(modelPath);
  if (isEncoderDecoder(file.model)) {
    const report = await scoreTransduction(file, args, modelPath, dataPath);
    return format === 'json' ? `${JSON.stringify(reportJson(report), null, 2)}\n` : `${reportLines(report).join('\n')}\n`;
  }
  const runtime = await createRuntime(file, { backend: chooseBackend(args).name });
  const meta = file.metadata as Record<string, unknown>;
  const text = readFileSync(dataPath, 'utf8');
  const season = args.flags.get('season') === 'none' ? null : args.flags.has('season') ? numberFlag(args, 'season', 1, { whole: true, min: 1 }) : undefined;
  const report =
    meta.task === 'forecast' ? scoreForecast(runtime, meta, text, dataPath, season)
      : meta.task === 'classification' ? scoreClassifier(runtime, meta, text, dataPath, args.flags.get('label-column') ?? 'label')
        : meta.task === 'next-token' ? scoreText(runtime, meta, text, dataPath)
          : null;
  if (report === null) throw new CommandError(`${modelPath}: its metadata names no task weft score knows (${JSON.stringify(meta.task)}); expected forecast, classification or next-token`);
  return format === 'json' ? `${JSON.stringify(reportJson(report), null, 2)}\n` : `${reportLines(report).join('\n')}\n`;
}

function scoreForecast(runtime: Runtime, meta: Record<string, unknown>, text: string, name: string, season: number | null | undefined): HeldOutReport {
  const translator = createTranslator(meta);
  const table = parseTable(text, { file: name });
  const at = translator.inputNames.map((c) => {
    const i = table.header.indexOf(c);
    if (i < 0) throw new CommandError(`${name}: no column ${JSON.stringify(c)}, which the model reads (it reads ${translator.inputNames.join(', ')})`);
    return i;
  });
  const horizon = Number(meta.horizon);
  const values = table.rows.map((_, r) => at.map((c) => numberAt(table, r, c)));
  const targets = translator.outputNames.map((t) => translator.inputNames.indexOf(t));
  if (values.length <= horizon + 1) throw new CommandError(`${name}: ${values.length} rows are too few to score forecasts ${horizon} rows ahead`);
  // The model's forecast made at every row, in real units.
  const streams = runtime.streams(1);
  const input = new Float32Array(at.length);
  const row: Record<string, number> = {};
  const forecasts = values.map((v) => {
    translator.inputNames.forEach((c, j) => (row[c] = v[j]));
    return Object.values(translator.outputs(streams.step(translator.inputs(row, input))));
  });
  const firstTarget = values.map((v) => v[targets[0]]);
  const chosenSeason = season === undefined ? detectSeason(firstTarget) : season;
  if (chosenSeason !== null && !(chosenSeason < values.length - horizon)) {
    fail('invalid_option', `${name}:${table.rows[table.rows.length - 1].line}:1 (--season)`, `a season shorter than the ${values.length - horizon} rows that have a target row, which end near this line`, String(chosenSeason));
  }
  const back = chosenSeason === null ? 0 : Math.ceil(horizon / chosenSeason) * chosenSeason;
  const first = Math.max(0, back - horizon);
  const positions: number[] = [];
  for (let t = first; t + horizon < values.length; t++) positions.push(t);
  const split: SeriesSplit = { values, targets, horizon, trainRows: values.length, positions };
  const normalisation = meta.normalisation as { mean: number[] };
  const contender = (name: string, description: string, forecast: (t: number, k: number) => number): Contender => {
    const scored = scoreForecaster(split, forecast);
    return { name, description, value: scored.overall.mae, perTarget: scored.perTarget, overall: scored.overall };
  };
  const weights = fitLinear(split);
  const baselines = [
    contender('persistence', `the value now, as the forecast ${horizon} row${horizon === 1 ? '' : 's'} ahead`, (t, k) => values[t][targets[k]]),
    contender('training mean', 'the mean of the training rows, from the weight file', (_t, k) => normalisation.mean[targets[k]]),
    ...(chosenSeason === null ? [] : [contender('seasonal naive', `the value one season (${chosenSeason} rows) before the forecast row`, (t, k) => values[t + horizon - back][targets[k]])]),
    contender('linear', 'least squares on the current inputs, fitted on this file itself, so it has seen the answers', (t, k) => {
      let s = weights[k][0];
      for (let c = 0; c < values[t].length; c++) s += weights[k][c + 1] * values[t][c];
      return s;
    }),
  ];
  const model = contender('model', '', (t, k) => forecasts[t][k]);
  return {
    metric: 'MAE',
    lowerIsBetter: true,
    what: `${positions.length} forecasts of ${translator.outputNames.join(', ')}, ${horizon} row${horizon === 1 ? '' : 's'} ahead, over ${name} (the model's state starts at zero on its first row)`,
    model,
    baselines,
    names: translator.outputNames,
  };
}

/** The class probabilities of every sequence of a long table (one step per row), in the order ids first appear. */
export function classifyStepTable(runtime: Runtime, meta: Record<string, unknown>, table: Table, labelColumn?: string): { id: string; line: number; label: string | null; probabilities: number[] }[] {
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
    return { id: q.id, line: q.line, label: q.label, probabilities: Array.from(last, (z) => Math.exp(z - logSumExp)) };
  });
}

function scoreClassifier(runtime: Runtime, meta: Record<string, unknown>, text: string, name: string, labelColumn: string): HeldOutReport {
  const translator = createTranslator(meta);
  const classes = translator.outputNames;
  const table = parseTable(text, { file: name });
  if (typeof meta.idColumn === 'string') {
    const labelAt = table.header.indexOf(labelColumn);
    const results = classifyStepTable(runtime, meta, table, labelColumn);
    const actual = results.map((r) => {
      const k = classes.indexOf(r.label as string);
      if (k < 0) throw new CommandError(`${name}:${r.line}:${table.rows.find((row) => row.line === r.line)?.starts[labelAt] ?? 1}: ${JSON.stringify((r.label ?? '').slice(0, 80))} is not a class the model knows (${classes.join(', ')})`);
      return k;
    });
    const predicted = results.map((r) => r.probabilities.indexOf(Math.max(...r.probabilities)));
    return classifierReport(actual, predicted, classes, `${results.length} labelled sequences (${table.rows.length} step rows) of ${name}`);
  }
  const sequenceColumn = String(meta.sequenceColumn ?? 'sequence');
  const labelAt = table.header.indexOf(labelColumn);
  const sequenceAt = table.header.indexOf(sequenceColumn);
  if (labelAt < 0 || sequenceAt < 0) throw new CommandError(`${name}: needs columns ${JSON.stringify(labelColumn)} and ${JSON.stringify(sequenceColumn)} to score; found ${table.header.join(', ')}`, 2);
  const tokens = Array.isArray(meta.vocabulary) && meta.vocabulary.length > 0;
  const norm = meta.normalisation as { mean: number[]; deviation: number[] } | undefined;
  const actual: number[] = [];
  const predicted: number[] = [];
  table.rows.forEach((r, i) => {
    const label = r.fields[labelAt].trim();
    const k = classes.indexOf(label);
    if (k < 0) throw new CommandError(`${fieldPath(table, i, labelAt)}: ${JSON.stringify(label.slice(0, 80))} is not a class the model knows (${classes.join(', ')})`);
    const items = r.fields[sequenceAt].trim().split(/\s+/).filter((s) => s !== '');
    if (items.length === 0) fail('bad_data', fieldPath(table, i, sequenceAt), 'a sequence of at least one item', 'an empty field');
    const input = tokens
      ? translator.tokenIds(items.join(' ')).ids
      : Float32Array.from(items, (s, j) => {
          const v = Number(s);
          if (!Number.isFinite(v)) throw new CommandError(`${fieldPath(table, i, sequenceAt)}: item ${j + 1} ${JSON.stringify(s.slice(0, 80))} is not a number`);
          return (v - (norm?.mean[0] ?? 0)) / (norm?.deviation[0] ?? 1);
        });
    const out = runtime.run(input, items.length, 1);
    predicted.push(logits(out.subarray((items.length - 1) * classes.length, items.length * classes.length)).best);
    actual.push(k);
  });
  return classifierReport(actual, predicted, classes, `${actual.length} labelled sequences of ${name}`);
}

function classifierReport(actual: number[], predicted: number[], classes: readonly string[], what: string): HeldOutReport {
  const counts = classes.map((_, k) => actual.filter((a) => a === k).length);
  const majorityClass = counts.indexOf(Math.max(...counts));
  const scores = classificationReport(actual, predicted, classes.length);
  const majority = classificationReport(actual, actual.map(() => majorityClass), classes.length);
  return {
    metric: 'accuracy',
    lowerIsBetter: false,
    what,
    model: { name: 'model', description: '', value: scores.accuracy, scores },
    baselines: [{ name: 'majority class', description: `always ${JSON.stringify(classes[majorityClass])}, the most common class in this file`, value: majority.accuracy, scores: majority }],
    names: classes,
  };
}

function scoreText(runtime: Runtime, meta: Record<string, unknown>, text: string, name: string): HeldOutReport {
  const translator = createTranslator(meta);
  const { ids, pieces, unknown } = translator.tokenIds(text);
  if (ids.length < 2) throw new CommandError(`${name}: fewer than two tokens to score`);
  const streams = runtime.streams(1);
  const token = new Int32Array(1);
  let crossEntropy = 0;
  for (let p = 0; p + 1 < ids.length; p++) {
    token[0] = ids[p];
    const out = streams.step(token);
    crossEntropy += logits(out).logSumExp - out[ids[p + 1]];
  }
  const vocabulary = translator.outputNames.length;
  return {
    metric: 'perplexity',
    lowerIsBetter: true,
    what: `${ids.length - 1} next-token predictions over ${name}${unknown > 0 ? ` (${unknown} of ${pieces.length} pieces not in the vocabulary, read as the unknown token)` : ''}`,
    model: { name: 'model', description: '', value: Math.exp(crossEntropy / (ids.length - 1)) },
    baselines: [{ name: 'uniform', description: `every one of the ${vocabulary} tokens alike`, value: vocabulary }],
    names: [],
  };
}
