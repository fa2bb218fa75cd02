/**
 * `weft train`: fit a model to a file of your own, with progress, checkpoints, resume and a loss curve.
 *
 * Why one file of this length: one run's state (paths, history, the trainer and its threads, the resume checks)
 * threads through every step from the flags to the files written; preparing data (datasets.ts, pairs.ts) and
 * reporting (report.ts) live apart.
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { utf8Text } from './text-bytes.js';
import { availableParallelism } from 'node:os';
import { basename, extname, resolve } from 'node:path';
import { ATTENTION_FORMS, EncoderDecoderModel, MAX_HIDDEN, buildModel, stackMembers } from '@weft/cells';
import type { AnyModelDescription, LayerDescription, ModelDescription, SequenceModel } from '@weft/cells';
import { AdamRule, Trainer } from '@weft/optim';
import { startTrainingThreads } from '@weft/optim/node';
import type { ThreadGroup } from '@weft/optim';
import type { TrainableModel, TrainingEvent, TrainingSummary } from '@weft/optim';
import { SLIDING_ROWS, detectDelimiter, isJsonRecords, readTable, sha256Hex } from '@weft/io';
import type { ForecastIntervals } from '@weft/io';
import { checkWritable, loadCheckpoint, saveCheckpoint, saveWeightFile, writeFileAtomic } from '@weft/io/node';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag, numberFlag } from './args.js';
import { prepareClassification, prepareForecast, prepareText } from './datasets.js';
import type { HeldOutReport, Prepared, Task } from './datasets.js';
import { pairsDescription, preparePairs } from './pairs.js';
import type { PairsPrepared } from './pairs.js';
import { runResults } from './results.js';
import { reportLines } from '@weft/io';
import { backendFlag, chooseBackend } from './backend.js';
import { CommandError } from './errors.js';
import { cellModuleFlags, cellPlansFrom } from './cell-module.js';
import { lossCurveSvg, sparkline } from './plot.js';
import type { LossPoint } from './plot.js';
import { ProgressView, formatSeconds } from './progress.js';

export const trainFlags: FlagSpec[] = [
  {
    name: 'task',
    value: 'forecast|text|classify|pairs',
    description:
      'what to learn; by default .txt/.md files are text, CSVs with label and sequence columns are classify, with source and target columns pairs (an encoder-decoder), other CSVs forecast',
  },
  { name: 'cell', value: 'lstm|gru|plain', description: 'recurrent cell', fallback: 'lstm' },
  ...cellModuleFlags,
  { name: 'hidden', value: 'NUMBER', description: 'hidden units per layer', fallback: '64; 32 on sliding windows' },
  { name: 'layers', value: 'NUMBER', description: 'stacked layers', fallback: '1' },
  { name: 'bidirectional', switch: true, description: 'read sequences both ways (classify; pairs: the encoder)' },
  { name: 'dropout', value: 'RATE', description: 'dropout between layers while training', fallback: '0' },
  {
    name: 'window',
    value: 'STEPS',
    description: 'truncated-backpropagation window: new steps per update; on sliding windows, the rows of each window',
    fallback: '32; on sliding windows two seasons, else 24 rows, at most 64 and a quarter of the training rows',
  },
  { name: 'lookback', value: 'STEPS', description: 'also back-propagate through this many steps before each window (forecast, text)', fallback: '0' },
  {
    name: 'streams',
    value: 'NUMBER',
    description: 'parallel streams (forecast, text) or sequences per batch (classify, pairs, sliding windows)',
    fallback: '8; 32 windows on sliding windows',
  },
  {
    name: 'epochs',
    value: 'NUMBER',
    description: 'passes over the training data (at most: see --patience)',
    fallback: '20; on sliding windows enough for about 2,000 updates',
  },
  { name: 'rate', value: 'NUMBER', description: 'Adam learning rate', fallback: '0.005' },
  { name: 'clip', value: 'NUMBER', description: 'clip the global gradient norm to this', fallback: '1' },
  {
    name: 'workers',
    value: 'N',
    description: 'training threads, this one included: each batch is cut into shards of 8 rows computed in parallel, the same weights for any N',
    fallback: 'the cores, at most one per shard',
  },
  { name: 'seed', value: 'TEXT', description: 'seed for every random choice', fallback: '1' },
  {
    name: 'validation',
    value: 'SHARE',
    description:
      'share of the data for validation: stopping and keeping the best weights (before the test part of a series or text; a seeded share of sequences)',
    fallback: '0.1',
  },
  {
    name: 'test',
    value: 'SHARE',
    description:
      'share of the data for the test, scored once for the verdict against the baselines and never used for stopping (the end of a series or text; a seeded share of sequences)',
    fallback: '0.1',
  },
  {
    name: 'examples',
    value: 'sliding|streams',
    description:
      'how a series becomes training examples: sliding windows (every training row ends one window of --window rows, read relative to its last row) or long streams cut into windows with carried state (forecast)',
    fallback: `sliding up to ${SLIDING_ROWS} training rows, else streams`,
  },
  {
    name: 'ensemble',
    value: 'K',
    description:
      'train K models from seeds <seed>, <seed>/2, … <seed>/K and forecast the median of their forecasts; the weight file holds all K, stacked into one model (forecast)',
    fallback: '1',
  },
  {
    name: 'hybrid',
    value: 'auto|yes|no',
    description:
      'on top of exponential smoothing: the model reads the forecasts of the smoothing method best on the validation part and forecasts their correction; auto trains it and the plain model and keeps the one better on the validation part (forecast, sliding windows)',
    fallback: 'auto',
  },
  {
    name: 'interval',
    value: 'LEVEL|none',
    description:
      "prediction intervals meant to hold this share of values (split conformal on the validation part's errors), recorded in the weight file, scored on the test part (coverage, MSIS) and printed by weft run (forecast)",
    fallback: '0.95',
  },
  {
    name: 'log',
    value: 'auto|yes|no',
    description:
      "read the targets as logarithms (sliding windows): auto where every value is above 0 and the season's swing grows with the level (Holt-Winters fits the training rows better with a multiplicative season than an additive one); windows read relative to their last value already scale with the level",
    fallback: 'no',
  },
  {
    name: 'missing',
    value: 'interpolate|carry|segments|refuse',
    description:
      'missing readings (empty, NA, N/A, NaN, null, None, -, and skipped times of a regular time column): fill inputs across each gap linearly, or carry the last value, each with a 0/1 "was missing" input per column with holes; segments keeps every hole out of the training windows; refuse stops at the first; a missing target is never trained on or scored (forecast, sliding windows)',
    fallback: 'interpolate',
  },
  {
    name: 'gap-limit',
    value: 'ROWS',
    description: 'the longest gap a training window may hold; longer gaps cut the series into segments (forecast)',
    fallback: 'half the window',
  },
  {
    name: 'missing-marker',
    value: 'TEXT',
    description:
      'one more cell text read as missing, such as -999 (write --missing-marker=-999 for one that starts with a dash); several separated by commas (forecast)',
  },
  {
    name: 'time-column',
    value: 'NAME',
    description: "the column of times of a series (dates, date-times, year-months, year-quarters, years): gives the season's candidates",
    fallback: 'a column named like a time, or the first whose values are times',
  },
  { name: 'validate-every', value: 'STEPS', description: 'validate this often (and at each epoch end)' },
  {
    name: 'patience',
    value: 'NUMBER',
    description: 'stop after this many validations without improvement; the best weights are kept either way',
    fallback: '3; 5 on sliding windows',
  },
  {
    name: 'transform',
    value: 'none|differences|log-returns',
    description: 'forecast the change of the target instead of its level, inverted on output (forecast)',
    fallback: 'none',
  },
  {
    name: 'season',
    value: 'ROWS|none',
    description: 'season of a series for the seasonal baselines (forecast)',
    fallback: "from the time column's spacing or the differences' autocorrelation, by the 90% test",
  },
  {
    name: 'horizon',
    value: 'ROWS',
    description:
      'forecast this many rows ahead: on sliding windows every row from 1 to ROWS at once (one output per row ahead, each scored), on streams the row ROWS ahead alone',
    fallback: '1',
  },
  { name: 'columns', value: 'A,B', description: 'input columns of a series CSV', fallback: 'every numeric column' },
  { name: 'target', value: 'A,B', description: 'columns to forecast', fallback: 'the input columns' },
  { name: 'tokens', value: 'characters|words', description: 'what a text model predicts', fallback: 'characters' },
  { name: 'embedding', value: 'NUMBER', description: 'embedding width for token inputs', fallback: '16' },
  { name: 'label-column', value: 'NAME', description: 'label column of a classify CSV', fallback: 'label' },
  { name: 'sequence-column', value: 'NAME', description: 'sequence column of a classify CSV (space-separated items)', fallback: 'sequence' },
  {
    name: 'id-column',
    value: 'NAME|none',
    description:
      "a long table's column naming each series or sequence: with a label column, classify the sequences (one step per row); without, forecast every series with one model",
    fallback: 'for a forecast, a text column whose names share times, if any',
  },
  {
    name: 'short-series',
    value: 'skip|refuse',
    description: 'many series: leave out, with a note, a series too short for a window, the horizon and its parts, or stop at it',
    fallback: 'skip',
  },
  {
    name: 'id-inputs',
    value: 'yes|no',
    description: 'many series: the model also reads which series a window is from (a 0/1 input per series, so it learns a vector per series)',
    fallback: 'no',
  },
  { name: 'step-column', value: 'NAME', description: 'in a long table, the column ordering the steps of a sequence', fallback: 'file order' },
  { name: 'source-column', value: 'NAME', description: 'source column of a pairs CSV', fallback: 'source' },
  { name: 'target-column', value: 'NAME', description: 'target column of a pairs CSV', fallback: 'target' },
  { name: 'attention', value: 'general|dot|additive|none', description: 'how each decoding step looks at the source (pairs)', fallback: 'general' },
  { name: 'reverse-source', switch: true, description: 'feed each source to the encoder reversed (pairs)' },
  { name: 'max-target', value: 'TOKENS', description: 'longest target the decoder writes; longer targets in the data are an error (pairs)', fallback: '100' },
  { name: 'out', value: 'FILE', description: 'where the weight file goes', fallback: '<data name>.weft.json' },
  { name: 'checkpoint', value: 'FILE', description: 'where checkpoints go', fallback: '<out>.checkpoint.json' },
  { name: 'checkpoint-every', value: 'STEPS', description: 'write a checkpoint this often (and at the end)', fallback: '200' },
  { name: 'resume', value: 'CHECKPOINT', description: 'continue from a checkpoint of the same model and data' },
  { name: 'start-over', switch: true, description: 'replace the checkpoint an earlier run left at --checkpoint instead of refusing' },
  { name: 'store', value: 'f32|f16|i8', description: 'how the weight file stores numbers', fallback: 'f32' },
  backendFlag,
  { name: 'quiet', switch: true, description: 'no progress and no notes: print only the final result lines' },
  { name: 'results', value: 'FILE', description: "also write the run's result as JSON (validation, held-out figures against the best baseline, files)" },
  { name: 'debug', switch: true, description: 'show stack traces' },
];

/** The largest data file `weft train` and `weft score` read (checked before reading: a larger one is refused). */
export const MAX_DATA_BYTES = 32 * 1024 * 1024;

/** A data file's text (strict UTF-8: text-bytes.ts), refused before it is read when it is missing or larger than MAX_DATA_BYTES. */
export function readData(path: string): string {
  if (!existsSync(path)) throw new CommandError(`${path}: no such file`);
  const size = statSync(path).size;
  if (size > MAX_DATA_BYTES)
    throw new CommandError(
      `${path}: ${(size / 1048576).toFixed(1)} MB; weft reads data files of at most ${MAX_DATA_BYTES / 1048576} MB (a small model learns from a sample: cut the file, or keep the last rows)`,
    );
  return utf8Text(readFileSync(path), path);
}

function guessTask(path: string, text: string, args: ParsedArgs): Task | 'pairs' {
  const extension = extname(path).toLowerCase();
  if (extension === '.txt' || extension === '.md') return 'text';
  const header = isJsonRecords(text, path)
    ? readTable(text, path).header
    : text
        .split(/\r?\n/, 1)[0]
        .split(detectDelimiter(text, path))
        .map((h) => h.trim());
  if (header.includes('source') && header.includes('target')) return 'pairs';
  // A long table with an id column: sequences to classify when it has labels, else series to forecast.
  const id = args.flags.get('id-column');
  if (id !== undefined && id !== 'none') return header.includes(args.flags.get('label-column') ?? 'label') ? 'classify' : 'forecast';
  return header.includes('label') && header.includes('sequence') ? 'classify' : 'forecast';
}

/** The first place where two descriptions differ, as "layers[0].hidden is 32 in the checkpoint, 64 requested". */
function firstDifference(saved: unknown, requested: unknown, path = 'model'): string | null {
  if (typeof saved !== 'object' || saved === null || typeof requested !== 'object' || requested === null) {
    return JSON.stringify(saved) === JSON.stringify(requested)
      ? null
      : `${path} is ${JSON.stringify(saved)} in the checkpoint, ${JSON.stringify(requested)} requested`;
  }
  const keys = [...new Set([...Object.keys(saved), ...Object.keys(requested)])];
  for (const key of keys) {
    const where = Array.isArray(saved) ? `${path}[${key}]` : `${path}.${key}`;
    const found = firstDifference((saved as Record<string, unknown>)[key], (requested as Record<string, unknown>)[key], where);
    if (found !== null) return found;
  }
  return null;
}

/** What `train` did, for programs that drive the verb directly. */
export interface TrainOutcome {
  /** The trainer's summary. */
  readonly summary: TrainingSummary;
  /** The weight file written (absolute path). */
  readonly out: string;
  /** The checkpoint written (absolute path). */
  readonly checkpoint: string;
  /** The SVG loss curve written (absolute path). */
  readonly curve: string;
  /** The model and the baselines on the held-out data. */
  readonly heldOut: HeldOutReport;
  /** The data as the verb prepared it (inputs, targets, metadata, held-out rows). */
  readonly prepared: Prepared | PairsPrepared;
}

/**
 * Runs `weft train` with parsed arguments: prepares the data, trains with progress and checkpoints, compares with the
 * baselines, saves; `log` receives the result lines.
 */
export async function train(args: ParsedArgs, log: (line: string) => void = (line) => process.stdout.write(`${line}\n`)): Promise<TrainOutcome> {
  const [dataPath] = args.positional;
  if (dataPath === undefined) throw new CommandError('weft train needs a data file (see weft train --help)', 2);
  if (args.positional.length > 1) throw new CommandError(`weft train takes one data file, got ${args.positional.length}: ${args.positional.join(' ')}`, 2);
  const backend = chooseBackend(args);
  const text = readData(dataPath);
  // Where the files go, checked before any training: a folder that is missing or refuses files fails now, not
  // after the run.
  const out = resolve(args.flags.get('out') ?? `${basename(dataPath, extname(dataPath))}.weft.json`);
  const checkpoint = resolve(args.flags.get('checkpoint') ?? `${out.replace(/\.json$/i, '')}.checkpoint.json`);
  const curve = `${checkpoint.replace(/\.json$/i, '')}.loss.svg`;
  const resultsFile = args.flags.get('results');
  for (const path of [out, checkpoint, ...(resultsFile === undefined ? [] : [resolve(resultsFile)])]) checkWritable(path);
  const task = choiceFlag(args, 'task', ['forecast', 'text', 'classify', 'pairs'] as const, guessTask(dataPath, text, args));
  // A cell of your own (--cell-module): its plan builds the model, travels with checkpoints and the weight file.
  const plans = await cellPlansFrom(args);
  if (plans !== undefined && args.flags.has('cell')) throw new CommandError('--cell and --cell-module both name the cell; give one', 2);
  const cell: string = plans === undefined ? choiceFlag(args, 'cell', ['lstm', 'gru', 'plain'] as const, 'lstm') : Object.keys(plans)[0];
  let hidden = numberFlag(args, 'hidden', 64, { whole: true, min: 1, max: MAX_HIDDEN });
  const layerCount = numberFlag(args, 'layers', 1, { whole: true, min: 1, max: 16 });
  const dropout = numberFlag(args, 'dropout', 0, { min: 0, max: 0.95 });
  const seed = args.flags.get('seed') ?? '1';
  const options = {
    window: numberFlag(args, 'window', 32, { whole: true, min: 1, max: 100000 }),
    lookback: numberFlag(args, 'lookback', 0, { whole: true, min: 0, max: 100000 }),
    streams: numberFlag(args, 'streams', 8, { whole: true, min: 1, max: 4096 }),
    validationShare: numberFlag(args, 'validation', 0.1, { min: 0.01, max: 0.8 }),
    testShare: numberFlag(args, 'test', 0.1, { min: 0.01, max: 0.8 }),
    timeColumn: args.flags.get('time-column'),
    examples: args.flags.has('examples') ? choiceFlag(args, 'examples', ['sliding', 'streams'] as const, 'sliding') : undefined,
    given: new Set([...args.flags.keys(), ...args.switches]),
    hybrid: choiceFlag(args, 'hybrid', ['auto', 'yes', 'no'] as const, 'auto') === 'yes',
    log: choiceFlag(args, 'log', ['auto', 'yes', 'no'] as const, 'no'),
    horizon: numberFlag(args, 'horizon', 1, { whole: true, min: 1, max: 100000 }),
    columns: args.flags
      .get('columns')
      ?.split(',')
      .map((s) => s.trim()),
    targets: args.flags
      .get('target')
      ?.split(',')
      .map((s) => s.trim()),
    tokens: choiceFlag(args, 'tokens', ['characters', 'words'] as const, 'characters'),
    embedding: numberFlag(args, 'embedding', 16, { whole: true, min: 1, max: 4096 }),
    batch: numberFlag(args, 'streams', 8, { whole: true, min: 1, max: 4096 }),
    seed,
    transform: choiceFlag(args, 'transform', ['none', 'differences', 'log-returns'] as const, 'none'),
    season: args.flags.get('season') === 'none' ? null : args.flags.has('season') ? numberFlag(args, 'season', 1, { whole: true, min: 1 }) : undefined,
    missing: choiceFlag(args, 'missing', ['interpolate', 'carry', 'segments', 'refuse'] as const, 'interpolate'),
    gapLimit: args.flags.has('gap-limit') ? numberFlag(args, 'gap-limit', 1, { whole: true, min: 1, max: 100000 }) : undefined,
    missingMarkers: args.flags.get('missing-marker')?.split(','),
    ...(args.flags.has('id-column') ? { idColumn: args.flags.get('id-column') === 'none' ? null : args.flags.get('id-column') } : {}),
    shortSeries: choiceFlag(args, 'short-series', ['skip', 'refuse'] as const, 'skip'),
    idInputs: choiceFlag(args, 'id-inputs', ['yes', 'no'] as const, 'no') === 'yes',
  };
  if (options.validationShare + options.testShare > 0.9)
    throw new CommandError(
      `--validation ${options.validationShare} and --test ${options.testShare} leave less than a tenth of the data to train on; lower one of them`,
      2,
    );
  const ensemble = numberFlag(args, 'ensemble', 1, { whole: true, min: 1, max: 64 });
  if (plans !== undefined && ensemble > 1)
    throw new CommandError('--ensemble stacks models of the built-in cells; a cell of your own (--cell-module) trains one model', 2);
  if (plans !== undefined && args.flags.has('workers') && args.flags.get('workers') !== '1')
    throw new CommandError('--workers: training threads build the built-in cells; a cell of your own (--cell-module) trains on this thread (--workers 1)', 2);
  // Checked with the other flags, before any training.
  const intervalLevel = args.flags.get('interval') === 'none' ? null : numberFlag(args, 'interval', 0.95, { min: 0.5, max: 0.999 });
  for (const name of [
    'time-column',
    'examples',
    'hybrid',
    'ensemble',
    'log',
    'interval',
    'missing',
    'gap-limit',
    'missing-marker',
    'short-series',
    'id-inputs',
  ]) {
    if ((args.flags.has(name) || args.switches.has(name)) && task !== 'forecast')
      throw new CommandError(`--${name} applies to --task forecast, not ${task}`, 2);
  }
  if (options.lookback > 0 && task === 'classify')
    throw new CommandError('--lookback applies to streams (--task forecast or text); classify reads whole sequences', 2);
  if (options.lookback > options.window)
    throw new CommandError(
      `--lookback ${options.lookback} is longer than --window ${options.window}: it re-reads at most a window's steps before each window; lower it, or raise --window`,
      2,
    );
  if (options.lookback > 0 && task === 'pairs') throw new CommandError('--lookback applies to streams (--task forecast or text); pairs are read whole', 2);
  if (args.switches.has('bidirectional') && task !== 'classify' && task !== 'pairs')
    throw new CommandError('--bidirectional needs --task classify or pairs (forecasts and text are read forward in time)', 2);
  for (const name of ['source-column', 'target-column', 'attention', 'reverse-source', 'max-target']) {
    if ((args.flags.has(name) || args.switches.has(name)) && task !== 'pairs')
      throw new CommandError(`--${name} applies to --task pairs (an encoder-decoder), not ${task}`, 2);
  }
  const attention = choiceFlag(args, 'attention', [...ATTENTION_FORMS, 'none'] as const, 'general');
  let prepared: Prepared | PairsPrepared =
    task === 'pairs'
      ? preparePairs(text, dataPath, {
          ...options,
          sourceColumn: args.flags.get('source-column') ?? 'source',
          targetColumn: args.flags.get('target-column') ?? 'target',
          maxTarget: numberFlag(args, 'max-target', 100, { whole: true, min: 1, max: 100000 }),
        })
      : task === 'forecast'
        ? prepareForecast(text, dataPath, options)
        : task === 'text'
          ? prepareText(text, dataPath, options)
          : prepareClassification(text, dataPath, {
              ...options,
              labelColumn: args.flags.get('label-column') ?? 'label',
              sequenceColumn: args.flags.get('sequence-column') ?? 'sequence',
              idColumn: args.flags.get('id-column'),
              stepColumn: args.flags.get('step-column'),
            });
  // Under --quiet only the final result lines are printed (the held-out report, the summary, where files went).
  const info = args.switches.has('quiet') ? () => undefined : log;
  const chosen = prepared.task === 'pairs' ? undefined : prepared.chosen;
  if (chosen !== undefined) info(chosen.said);
  hidden = chosen?.hidden ?? hidden;
  for (const note of prepared.notes ?? []) info(note);
  const layers: LayerDescription[] = Array.from({ length: layerCount }, () => ({
    cell,
    hidden,
    ...(args.switches.has('bidirectional') ? { bidirectional: true } : {}),
  }));
  const rate = numberFlag(args, 'rate', 0.005, { min: 1e-9, max: 10 });
  const clip = numberFlag(args, 'clip', 1, { min: 1e-9 });
  const epochs = chosen?.epochs ?? numberFlag(args, 'epochs', 20, { whole: true, min: 1, max: 100000 });
  const patience = chosen?.patience ?? numberFlag(args, 'patience', 3, { whole: true, min: 1 });
  // --hybrid auto on sliding windows: train the plain model and the hybrid alike (same seed, same settings) and keep
  // the one better on the validation part; training is deterministic, so the run below repeats the winner exactly.
  if (
    prepared.task === 'forecast' &&
    (prepared.metadata.window !== undefined || prepared.metadata.panel !== undefined) &&
    !args.flags.has('hybrid') &&
    args.flags.get('resume') === undefined
  ) {
    const hybrid = prepareForecast(text, dataPath, { ...options, hybrid: true });
    const figure = async (candidate: Prepared): Promise<number> => {
      const trial = buildModel({ input: candidate.input, layers, dropout, readout: { width: candidate.outputWidth } }, { seed, plans });
      await new Trainer({
        model: trial,
        shardRows: SHARD_ROWS,
        data: candidate.train,
        validation: candidate.validation,
        optimizer: new AdamRule({ rate }),
        epochs,
        gradientNormLimit: clip,
        patience,
        seed,
      }).run();
      return candidate.validationFigure?.(trial) ?? Infinity;
    };
    const [plainFigure, hybridFigure] = [await figure(prepared), await figure(hybrid)];
    const metric = figureName(prepared);
    info(
      `tried both on the validation part: ${hybrid.chosen?.said.split(':')[0] ?? 'the hybrid'} ${metric} ${Number(hybridFigure.toPrecision(4))}, plain ${Number(plainFigure.toPrecision(4))}: training the ${hybridFigure < plainFigure ? 'hybrid' : 'plain model'} (--hybrid yes or no to choose)`,
    );
    if (hybridFigure < plainFigure) prepared = hybrid;
  } else if (
    args.flags.get('resume') !== undefined &&
    prepared.task === 'forecast' &&
    (prepared.metadata.window !== undefined || prepared.metadata.panel !== undefined) &&
    !args.flags.has('hybrid')
  ) {
    // A resumed run keeps the choice its checkpoint made.
    const saved = await loadCheckpoint(resolve(args.flags.get('resume') as string), { plans });
    const savedWindow = (saved.file.metadata.window ?? (saved.file.metadata.panel as { series?: { window?: unknown }[] } | undefined)?.series?.[0]?.window) as
      | { hybrid?: unknown }
      | undefined;
    if (savedWindow?.hybrid !== undefined) prepared = prepareForecast(text, dataPath, { ...options, hybrid: true });
  }
  const description: AnyModelDescription =
    prepared.task === 'pairs'
      ? pairsDescription({
          cell,
          hidden,
          layers: layerCount,
          bidirectional: args.switches.has('bidirectional'),
          dropout,
          embedding: options.embedding,
          attention: attention === 'none' ? null : attention,
          reverseSource: args.switches.has('reverse-source'),
          sourceVocabulary: prepared.sourceVocabulary.length,
          targetVocabulary: prepared.targetVocabulary.length,
        })
      : ({ input: prepared.input, layers, dropout, readout: { width: prepared.outputWidth } } satisfies ModelDescription);
  const dataDigest = await sha256Hex(new TextEncoder().encode(text));
  const store = choiceFlag(args, 'store', ['f32', 'f16', 'i8'] as const, 'f32');
  const every = numberFlag(args, 'checkpoint-every', 200, { whole: true, min: 1 });
  const model: TrainableModel = prepared.task === 'pairs' ? new EncoderDecoderModel(description, { seed, plans }) : buildModel(description, { seed, plans });
  const history: { training: LossPoint[]; validation: LossPoint[] } = { training: [], validation: [] };
  // A forecast of one column: its validation MAE shown in the data's units (the column's deviation undoes the scaling).
  // With differences, the error of the change is the error of the level, so its deviation serves; log returns
  // have no such factor and are shown normalised. Sliding windows scale the target's change by its own deviation.
  const forecastMeta = prepared.metadata as {
    columns?: string[];
    targetColumns?: string[];
    normalisation?: { deviation: number[] };
    targetTransform?: { kind: string; deviation: number[] };
    window?: { targetDeviation: number[] };
  };
  const maeScale =
    task !== 'forecast' ||
    forecastMeta.targetColumns?.length !== 1 ||
    prepared.metadata.panel !== undefined ||
    (prepared.task === 'forecast' && prepared.outputWidth !== 1)
      ? null
      : forecastMeta.window !== undefined
        ? forecastMeta.window.targetDeviation[0]
        : forecastMeta.targetTransform === undefined
          ? (forecastMeta.normalisation?.deviation[forecastMeta.columns?.indexOf(forecastMeta.targetColumns[0]) ?? -1] ?? null)
          : forecastMeta.targetTransform.kind === 'differences'
            ? forecastMeta.targetTransform.deviation[0]
            : null;
  const view = args.switches.has('quiet') ? null : new ProgressView(process.stderr, maeScale);
  const controller = new AbortController();
  const validateEvery = args.flags.has('validate-every') ? numberFlag(args, 'validate-every', 1, { whole: true, min: 1 }) : undefined;
  const metadataFor = (trainer: Trainer) => ({
    ...prepared.metadata,
    training: {
      data: basename(dataPath),
      dataDigest,
      steps: trainer.stepsTaken,
      seed,
      store,
      seconds: Number((earlierSeconds + (Date.now() - started) / 1000).toFixed(3)),
    },
    history: { training: thin(history.training).map((p) => [p.step, p.loss]), validation: thin(history.validation).map((p) => [p.step, p.loss]) },
  });
  // Shards of 8 rows whatever the thread count, so --workers changes the speed and never the weights.
  // (A cell of your own trains on this thread: the threads build built-in cells only.)
  const shardCount = plans === undefined ? Math.ceil(options.batch / SHARD_ROWS) : 1;
  const workerCount = Math.min(
    shardCount,
    args.flags.has('workers') ? numberFlag(args, 'workers', 1, { whole: true, min: 1, max: 256 }) : availableParallelism(),
  );
  // Seconds of earlier runs of this training (from the checkpoint resumed), so the summary times the whole run.
  let earlierSeconds = 0;
  const started = Date.now();
  const resume = args.flags.get('resume');
  if (resume === undefined && existsSync(checkpoint) && !args.switches.has('start-over')) {
    throw new CommandError(
      `${checkpoint} holds the checkpoint of an earlier run: continue it with --resume ${checkpoint}, or pass --start-over to replace it`,
      2,
    );
  }
  const threads: ThreadGroup | undefined = workerCount > 1 ? await startTrainingThreads({ count: workerCount, model }) : undefined;
  // The trainer (and a resumed run's state) made with the threads running: any refusal here ends them first.
  const makeTrainer = async (): Promise<Trainer> => {
    const trainer: Trainer = new Trainer({
      model,
      shardRows: SHARD_ROWS,
      ...(threads === undefined ? {} : { workers: threads }),
      data: prepared.train,
      validation: prepared.validation,
      optimizer: new AdamRule({ rate }),
      epochs,
      gradientNormLimit: clip,
      validateEvery,
      patience,
      seed,
      signal: controller.signal,
      onProgress: (event: TrainingEvent) => {
        if (event.kind === 'step') history.training.push({ step: event.step, loss: event.loss });
        if (event.kind === 'validation') history.validation.push({ step: event.step, loss: event.validationLoss! });
        view?.show(event);
      },
      afterStep: async (t) => {
        if (t.stepsTaken % every === 0) await saveCheckpoint(checkpoint, t, model, metadataFor(t));
      },
    });
    if (resume !== undefined) {
      const saved = await loadCheckpoint(resolve(resume), { plans });
      const difference = firstDifference(saved.file.model, description);
      if (difference !== null) throw new CommandError(`${resume}: the checkpoint does not match the requested model: ${difference}`);
      const savedTraining = saved.file.metadata.training as Record<string, unknown> | undefined;
      if (savedTraining?.dataDigest !== undefined && savedTraining.dataDigest !== dataDigest) {
        throw new CommandError(
          `${resume}: the checkpoint was trained on other data (${String(savedTraining.data)}, SHA-256 ${String(savedTraining.dataDigest).slice(0, 12)}…), not ${dataPath}`,
        );
      }
      trainer.restore(saved.snapshot);
      earlierSeconds =
        typeof savedTraining?.seconds === 'number' && Number.isFinite(savedTraining.seconds) && savedTraining.seconds >= 0 ? savedTraining.seconds : 0;
      const savedHistory = saved.file.metadata.history as { training?: number[][]; validation?: number[][] } | undefined;
      history.training.push(...(savedHistory?.training ?? []).map(([step, loss]) => ({ step, loss })));
      history.validation.push(...(savedHistory?.validation ?? []).map(([step, loss]) => ({ step, loss })));
      info(`resuming from ${resume} at step ${trainer.stepsTaken} of ${trainer.totalSteps}`);
    }
    return trainer;
  };
  let trainer: Trainer;
  try {
    trainer = await makeTrainer();
  } catch (error) {
    await threads?.close();
    throw error;
  }
  let interrupts = 0;
  const onInterrupt = () => {
    interrupts++;
    if (interrupts > 1) process.exit(130);
    controller.abort();
  };
  process.on('SIGINT', onInterrupt);
  const kind = task === 'pairs' ? `encoder-decoder (${attention === 'none' ? 'no' : attention} attention)` : `${task} model`;
  info(
    `training ${cell === 'lstm' ? 'an LSTM' : cell === 'gru' ? 'a GRU' : cell === 'plain' ? 'a plain recurrent' : `a ${cell}`} ${kind} (${layerCount} × ${hidden} hidden, ${model.parameters().reduce((n, p) => n + p.tensor.size, 0)} parameters) on ${dataPath}: ${trainer.totalSteps} steps, ${backend.name} backend, ${workerCount > 1 ? `${workerCount} threads` : 'this thread'}`,
  );
  let summary: TrainingSummary;
  try {
    summary = await trainer.run();
  } finally {
    process.off('SIGINT', onInterrupt);
    view?.finish();
    await threads?.close();
  }
  await saveCheckpoint(checkpoint, trainer, model, metadataFor(trainer));
  writeFileAtomic(curve, lossCurveSvg(history.training, history.validation, `weft train ${basename(dataPath)}: ${cell} ${task}`, summary.keptStep));
  if (summary.stoppedBy === 'signal') {
    log(`interrupted at step ${summary.steps}; checkpoint written to ${checkpoint}`);
    log(`resume with: ${resumeCommand(args, checkpoint)}`);
    throw new CommandError('', 130);
  }
  // --ensemble K: members 2…K trained alike from their own seeds (after the first, which the checkpoint holds, so a
  // resumed run repeats them exactly), then stacked into one model whose forecasts' median is the forecast.
  let final: TrainableModel = model;
  let keptMetadata: ReturnType<typeof metadataFor> & { members?: number; intervals?: unknown } = metadataFor(trainer);
  if (ensemble > 1 && prepared.task === 'forecast') {
    const members = [model as SequenceModel];
    // Ctrl-C while a member trains stops it as it stops the first: the checkpoint holds member 1, resuming repeats the rest.
    process.on('SIGINT', onInterrupt);
    for (let k = 2; k <= ensemble; k++) {
      const memberSeed = `${seed}/${k}`;
      const member = buildModel(description, { seed: memberSeed, plans });
      const memberThreads = workerCount > 1 ? await startTrainingThreads({ count: workerCount, model: member }) : undefined;
      let memberSummary: TrainingSummary;
      try {
        memberSummary = await new Trainer({
          model: member,
          shardRows: SHARD_ROWS,
          ...(memberThreads === undefined ? {} : { workers: memberThreads }),
          data: prepared.train,
          validation: prepared.validation,
          optimizer: new AdamRule({ rate }),
          epochs,
          gradientNormLimit: clip,
          validateEvery,
          patience,
          seed: memberSeed,
          signal: controller.signal,
        }).run();
      } finally {
        await memberThreads?.close();
      }
      if (memberSummary.stoppedBy === 'signal') {
        process.off('SIGINT', onInterrupt);
        log(`interrupted while training member ${k} of ${ensemble}; the checkpoint holds member 1: ${checkpoint}`);
        log(`resume with: ${resumeCommand(args, checkpoint)}`);
        throw new CommandError('', 130);
      }
      const figure = prepared.validationFigure?.(member);
      info(
        `member ${k} of ${ensemble} (seed ${memberSeed}): ${memberSummary.steps} steps, kept step ${memberSummary.keptStep}${figure === undefined ? '' : `, validation ${figureName(prepared)} ${Number(figure.toPrecision(4))}`}`,
      );
      members.push(member);
    }
    process.off('SIGINT', onInterrupt);
    final = stackMembers(members);
    keptMetadata = {
      ...keptMetadata,
      members: ensemble,
      training: { ...keptMetadata.training, seconds: Number((earlierSeconds + (Date.now() - started) / 1000).toFixed(3)) },
    };
  }
  // Prediction intervals from the validation part's errors (JSON has no Infinity: a part too short for the level
  // records null, an interval without bounds).
  let intervals: ForecastIntervals | undefined;
  if (prepared.task === 'forecast' && prepared.intervals !== undefined && intervalLevel !== null) {
    const level = intervalLevel;
    intervals = { level, halfWidth: prepared.intervals(final as SequenceModel, level) };
    keptMetadata = {
      ...keptMetadata,
      intervals: { level, method: 'split conformal', halfWidth: intervals.halfWidth.map((h) => (Number.isFinite(h) ? h : null)) },
    };
  }
  await saveWeightFile(out, final, { dtype: store, metadata: keptMetadata });
  const heldOut = prepared.task === 'pairs' ? prepared.heldOut(model as EncoderDecoderModel) : prepared.heldOut(final as SequenceModel, intervals);
  info(`loss ${sparkline(history.training.map((p) => p.loss))} ${history.training.at(-1)?.loss.toPrecision(4) ?? ''}`);
  for (const line of reportLines(heldOut)) log(line);
  const seconds = earlierSeconds + (Date.now() - started) / 1000;
  const ended = summary.stoppedBy === 'patience' ? `stopped early: ${patience} validations without improvement` : 'all epochs done';
  const kept =
    summary.bestValidation === null || summary.keptStep === summary.steps
      ? `the weights of step ${summary.keptStep}, the last`
      : `the weights of step ${summary.keptStep}, the best validation`;
  log(
    `finished ${summary.steps} steps in ${seconds < 10 ? `${seconds.toFixed(1)}s` : formatSeconds(seconds)}${earlierSeconds > 0 ? ' (resumed runs included)' : ''}; ${ended}; kept ${kept}`,
  );
  if (prepared.task === 'forecast') {
    const m = prepared.metadata as { columns?: string[]; targetColumns?: string[] };
    log(`columns read: ${(m.columns ?? []).join(', ')}; forecast: ${(m.targetColumns ?? []).join(', ')}`);
  }
  log(`weight file: ${out}`);
  log(`checkpoint:  ${checkpoint}`);
  log(`loss curve:  ${curve}`);
  const resultsPath = args.flags.get('results');
  if (resultsPath !== undefined) {
    const figure = prepared.task === 'pairs' ? null : (prepared.validationFigure?.(final as SequenceModel) ?? null);
    writeFileAtomic(resultsPath, `${JSON.stringify(runResults(summary, heldOut, out, figure))}\n`);
  }
  return { summary, out, checkpoint, curve, heldOut, prepared };
}

/** What a forecast's validation figure is: MAE in the data's units for one target, MASE for several. */
function figureName(prepared: Prepared | PairsPrepared): 'MAE' | 'MASE' {
  const targets = (prepared.metadata as { targetColumns?: readonly string[] }).targetColumns?.length ?? 1;
  return targets > 1 || prepared.metadata.panel !== undefined ? 'MASE' : 'MAE';
}

/** Rows per shard of a batch (see --workers). */
const SHARD_ROWS = 8;

/** The command that resumes this run: the same data and flags, with --resume instead of --start-over. */
function resumeCommand(args: ParsedArgs, checkpoint: string): string {
  const quote = (text: string) => (/^[\w./:=,@%+-]+$/.test(text) ? text : `'${text.replace(/'/g, `'\\''`)}'`);
  const parts = ['weft', 'train', ...args.positional.map(quote)];
  for (const [name, value] of args.flags) if (name !== 'resume') parts.push(`--${name}`, quote(value));
  for (const name of args.switches) if (name !== 'start-over') parts.push(`--${name}`);
  parts.push('--resume', quote(checkpoint));
  return parts.join(' ');
}

/** At most 2,000 points, evenly picked, so checkpoints stay small on long runs. */
function thin(points: readonly LossPoint[]): LossPoint[] {
  if (points.length <= 2000) return [...points];
  const stride = points.length / 2000;
  return Array.from({ length: 2000 }, (_, i) => points[Math.floor(i * stride)]);
}
