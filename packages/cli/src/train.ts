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
import { ATTENTION_FORMS, EncoderDecoderModel, MAX_HIDDEN, buildModel } from '@weft/cells';
import { stackMembers } from '@weft/cells/internal';
import type { AnyModelDescription, LayerDescription, ModelDescription, SequenceModel } from '@weft/cells';
import { AdamRule, Trainer } from '@weft/optim';
import { startTrainingThreads } from '@weft/optim/node';
import type { ThreadGroup } from '@weft/optim';
import type { TrainableModel, TrainerOptions, TrainingEvent, TrainingSummary } from '@weft/optim';
import { isJsonRecords, readTable } from '@weft/io';
import { SLIDING_ROWS, detectDelimiter, sha256Hex } from '@weft/io/internal';
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
import { backendFlag, chooseBackend, kernelRecord, kernelsFlag } from './backend.js';
import { CommandError } from './errors.js';
import { cellModuleFlags, cellPlansFrom } from './cell-module.js';
import type { CellPlans } from '@weft/cells';
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
  kernelsFlag,
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
  const settings = await trainSettings(args);
  // Under --quiet only the final result lines are printed (the held-out report, the summary, where files went).
  const info = args.switches.has('quiet') ? () => undefined : log;
  let prepared = prepareData(args, settings);
  const chosen = prepared.task === 'pairs' ? undefined : prepared.chosen;
  if (chosen !== undefined) info(chosen.said);
  for (const note of prepared.notes ?? []) info(note);
  const schedule = scheduleOf(args, settings, chosen);
  prepared = await chooseHybrid(args, settings, prepared, schedule, info);
  const run = await startRun(args, settings, prepared, schedule, info, log);
  const { summary, trainer } = await trainModel(run);
  const { final, metadata } = await trainMembers(run, trainer);
  // Prediction intervals from the validation part's errors (JSON has no Infinity: a part too short for the level
  // records null, an interval without bounds).
  let intervals: ForecastIntervals | undefined;
  let kept: typeof metadata & { intervals?: unknown } = metadata;
  if (prepared.task === 'forecast' && prepared.intervals !== undefined && settings.intervalLevel !== null) {
    const level = settings.intervalLevel;
    intervals = { level, halfWidth: prepared.intervals(final as SequenceModel, level) };
    kept = { ...kept, intervals: { level, method: 'split conformal', halfWidth: intervals.halfWidth.map((h) => (Number.isFinite(h) ? h : null)) } };
  }
  await saveWeightFile(settings.out, final, { dtype: run.store, metadata: kept });
  const heldOut = prepared.task === 'pairs' ? prepared.heldOut(run.model as EncoderDecoderModel) : prepared.heldOut(final as SequenceModel, intervals);
  reportRun(run, summary, heldOut);
  const resultsPath = args.flags.get('results');
  if (resultsPath !== undefined) {
    const figure = prepared.task === 'pairs' ? null : (prepared.validationFigure?.(final as SequenceModel) ?? null);
    writeFileAtomic(resultsPath, `${JSON.stringify(runResults(summary, heldOut, settings.out, figure))}\n`);
  }
  return { summary, out: settings.out, checkpoint: settings.checkpoint, curve: settings.curve, heldOut, prepared };
}

/** The options of preparing the data, from the flags (`seed`: the run's). */
function preparationOptions(args: ParsedArgs, seed: string) {
  return {
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
}

/** What the flags ask of one run, every flag checked before any training. */
interface TrainSettings {
  readonly dataPath: string;
  readonly text: string;
  readonly backend: ReturnType<typeof chooseBackend>;
  /** Where the weight file, the checkpoint and the loss curve go (absolute paths). */
  readonly out: string;
  readonly checkpoint: string;
  readonly curve: string;
  readonly task: Task | 'pairs';
  /** The plan of a cell of your own (--cell-module), or undefined. */
  readonly plans: CellPlans | undefined;
  readonly cell: string;
  readonly hidden: number;
  readonly layerCount: number;
  readonly dropout: number;
  readonly seed: string;
  readonly options: ReturnType<typeof preparationOptions>;
  readonly ensemble: number;
  readonly intervalLevel: number | null;
  readonly attention: (typeof ATTENTION_FORMS)[number] | 'none';
}

/** The run's settings from the flags; the files' folders checked writable and every flag checked, before any training. */
async function trainSettings(args: ParsedArgs): Promise<TrainSettings> {
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
  const hidden = numberFlag(args, 'hidden', 64, { whole: true, min: 1, max: MAX_HIDDEN });
  const layerCount = numberFlag(args, 'layers', 1, { whole: true, min: 1, max: 16 });
  const dropout = numberFlag(args, 'dropout', 0, { min: 0, max: 0.95 });
  const seed = args.flags.get('seed') ?? '1';
  const options = preparationOptions(args, seed);
  const ensemble = numberFlag(args, 'ensemble', 1, { whole: true, min: 1, max: 64 });
  // Checked with the other flags, before any training.
  const intervalLevel = args.flags.get('interval') === 'none' ? null : numberFlag(args, 'interval', 0.95, { min: 0.5, max: 0.999 });
  checkTaskFlags(args, task, options, plans, ensemble);
  const attention = choiceFlag(args, 'attention', [...ATTENTION_FORMS, 'none'] as const, 'general');
  return { dataPath, text, backend, out, checkpoint, curve, task, plans, cell, hidden, layerCount, dropout, seed, options, ensemble, intervalLevel, attention };
}

/** Refuses, in one line naming the flag, settings that do not go together or with the task. */
function checkTaskFlags(
  args: ParsedArgs,
  task: Task | 'pairs',
  options: ReturnType<typeof preparationOptions>,
  plans: CellPlans | undefined,
  ensemble: number,
): void {
  if (options.validationShare + options.testShare > 0.9)
    throw new CommandError(
      `--validation ${options.validationShare} and --test ${options.testShare} leave less than a tenth of the data to train on; lower one of them`,
      2,
    );
  if (plans !== undefined && ensemble > 1)
    throw new CommandError('--ensemble stacks models of the built-in cells; a cell of your own (--cell-module) trains one model', 2);
  if (plans !== undefined && args.flags.has('workers') && args.flags.get('workers') !== '1')
    throw new CommandError('--workers: training threads build the built-in cells; a cell of your own (--cell-module) trains on this thread (--workers 1)', 2);
  const forecastOnly = [
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
  ];
  for (const name of forecastOnly) {
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
}

/** The data prepared for the task: its parts, batches, metadata and held-out report. */
function prepareData(args: ParsedArgs, settings: TrainSettings): Prepared | PairsPrepared {
  const { task, text, dataPath, options } = settings;
  if (task === 'pairs') {
    return preparePairs(text, dataPath, {
      ...options,
      sourceColumn: args.flags.get('source-column') ?? 'source',
      targetColumn: args.flags.get('target-column') ?? 'target',
      maxTarget: numberFlag(args, 'max-target', 100, { whole: true, min: 1, max: 100000 }),
    });
  }
  if (task === 'forecast') return prepareForecast(text, dataPath, options);
  if (task === 'text') return prepareText(text, dataPath, options);
  return prepareClassification(text, dataPath, {
    ...options,
    labelColumn: args.flags.get('label-column') ?? 'label',
    sequenceColumn: args.flags.get('sequence-column') ?? 'sequence',
    idColumn: args.flags.get('id-column'),
    stepColumn: args.flags.get('step-column'),
  });
}

/** How the model is trained: its layers and the optimiser's settings (the data may have chosen some). */
interface Schedule {
  readonly hidden: number;
  readonly layers: LayerDescription[];
  readonly rate: number;
  readonly clip: number;
  readonly epochs: number;
  readonly patience: number;
}

function scheduleOf(args: ParsedArgs, settings: TrainSettings, chosen: Prepared['chosen']): Schedule {
  const hidden = chosen?.hidden ?? settings.hidden;
  const layers: LayerDescription[] = Array.from({ length: settings.layerCount }, () => ({
    cell: settings.cell,
    hidden,
    ...(args.switches.has('bidirectional') ? { bidirectional: true } : {}),
  }));
  return {
    hidden,
    layers,
    rate: numberFlag(args, 'rate', 0.005, { min: 1e-9, max: 10 }),
    clip: numberFlag(args, 'clip', 1, { min: 1e-9 }),
    epochs: chosen?.epochs ?? numberFlag(args, 'epochs', 20, { whole: true, min: 1, max: 100000 }),
    patience: chosen?.patience ?? numberFlag(args, 'patience', 3, { whole: true, min: 1 }),
  };
}

/**
 * --hybrid auto on sliding windows: train the plain model and the hybrid alike (same seed, same settings) and keep
 * the one better on the validation part; training is deterministic, so the run repeats the winner exactly. A resumed
 * run keeps the choice its checkpoint made.
 */
async function chooseHybrid(
  args: ParsedArgs,
  settings: TrainSettings,
  prepared: Prepared | PairsPrepared,
  schedule: Schedule,
  info: (line: string) => void,
): Promise<Prepared | PairsPrepared> {
  const { text, dataPath, options, dropout, seed, plans } = settings;
  const windowed = prepared.task === 'forecast' && (prepared.metadata.window !== undefined || prepared.metadata.panel !== undefined);
  if (!windowed || args.flags.has('hybrid')) return prepared;
  const resume = args.flags.get('resume');
  if (resume !== undefined) {
    const saved = await loadCheckpoint(resolve(resume), { plans });
    const savedWindow = (saved.file.metadata.window ?? (saved.file.metadata.panel as { series?: { window?: unknown }[] } | undefined)?.series?.[0]?.window) as
      | { hybrid?: unknown }
      | undefined;
    return savedWindow?.hybrid !== undefined ? prepareForecast(text, dataPath, { ...options, hybrid: true }) : prepared;
  }
  const hybrid = prepareForecast(text, dataPath, { ...options, hybrid: true });
  const figure = async (candidate: Prepared): Promise<number> => {
    const trial = buildModel({ input: candidate.input, layers: schedule.layers, dropout, readout: { width: candidate.outputWidth } }, { seed, plans });
    await new Trainer({
      model: trial,
      shardRows: SHARD_ROWS,
      data: candidate.train,
      validation: candidate.validation,
      optimizer: new AdamRule({ rate: schedule.rate }),
      epochs: schedule.epochs,
      gradientNormLimit: schedule.clip,
      patience: schedule.patience,
      seed,
    }).run();
    return candidate.validationFigure?.(trial) ?? Infinity;
  };
  const [plainFigure, hybridFigure] = [await figure(prepared), await figure(hybrid)];
  const metric = figureName(prepared);
  info(
    `tried both on the validation part: ${hybrid.chosen?.said.split(':')[0] ?? 'the hybrid'} ${metric} ${Number(hybridFigure.toPrecision(4))}, plain ${Number(plainFigure.toPrecision(4))}: training the ${hybridFigure < plainFigure ? 'hybrid' : 'plain model'} (--hybrid yes or no to choose)`,
  );
  return hybridFigure < plainFigure ? hybrid : prepared;
}

/** The model's description: the layers and readout of the data's inputs and outputs, or an encoder-decoder. */
function describeModel(args: ParsedArgs, settings: TrainSettings, prepared: Prepared | PairsPrepared, schedule: Schedule): AnyModelDescription {
  const { cell, layerCount, dropout, options, attention } = settings;
  if (prepared.task !== 'pairs')
    return { input: prepared.input, layers: schedule.layers, dropout, readout: { width: prepared.outputWidth } } satisfies ModelDescription;
  return pairsDescription({
    cell,
    hidden: schedule.hidden,
    layers: layerCount,
    bidirectional: args.switches.has('bidirectional'),
    dropout,
    embedding: options.embedding,
    attention: attention === 'none' ? null : attention,
    reverseSource: args.switches.has('reverse-source'),
    sourceVocabulary: prepared.sourceVocabulary.length,
    targetVocabulary: prepared.targetVocabulary.length,
  });
}

/**
 * A forecast of one column: its validation MAE shown in the data's units (the column's deviation undoes the scaling).
 * With differences, the error of the change is the error of the level, so its deviation serves; log returns have no
 * such factor and are shown normalised. Sliding windows scale the target's change by its own deviation.
 */
function maeScaleOf(task: Task | 'pairs', prepared: Prepared | PairsPrepared): number | null {
  const meta = prepared.metadata as {
    columns?: string[];
    targetColumns?: string[];
    normalisation?: { deviation: number[] };
    targetTransform?: { kind: string; deviation: number[] };
    window?: { targetDeviation: number[] };
  };
  if (task !== 'forecast' || meta.targetColumns?.length !== 1 || prepared.metadata.panel !== undefined) return null;
  if (prepared.task === 'forecast' && prepared.outputWidth !== 1) return null;
  if (meta.window !== undefined) return meta.window.targetDeviation[0];
  if (meta.targetTransform === undefined) return meta.normalisation?.deviation[meta.columns?.indexOf(meta.targetColumns[0]) ?? -1] ?? null;
  return meta.targetTransform.kind === 'differences' ? meta.targetTransform.deviation[0] : null;
}

/** One run's state, from the model made to the files written. */
interface Run {
  readonly args: ParsedArgs;
  readonly settings: TrainSettings;
  readonly prepared: Prepared | PairsPrepared;
  readonly schedule: Schedule;
  readonly description: AnyModelDescription;
  readonly model: TrainableModel;
  readonly history: { training: LossPoint[]; validation: LossPoint[] };
  readonly info: (line: string) => void;
  readonly log: (line: string) => void;
  readonly dataDigest: string;
  readonly store: 'f32' | 'f16' | 'i8';
  readonly every: number;
  readonly validateEvery: number | undefined;
  readonly workerCount: number;
  readonly view: ProgressView | null;
  readonly controller: AbortController;
  readonly started: number;
  /** Seconds of earlier runs of this training (from the checkpoint resumed), so the summary times the whole run. */
  earlierSeconds: number;
}

/** The model made and everything the run keeps beside it; an earlier run's checkpoint refused unless resumed or replaced. */
async function startRun(
  args: ParsedArgs,
  settings: TrainSettings,
  prepared: Prepared | PairsPrepared,
  schedule: Schedule,
  info: (line: string) => void,
  log: (line: string) => void,
): Promise<Run> {
  const { seed, plans, checkpoint, options } = settings;
  const description = describeModel(args, settings, prepared, schedule);
  const dataDigest = await sha256Hex(new TextEncoder().encode(settings.text));
  const store = choiceFlag(args, 'store', ['f32', 'f16', 'i8'] as const, 'f32');
  const every = numberFlag(args, 'checkpoint-every', 200, { whole: true, min: 1 });
  const model: TrainableModel = prepared.task === 'pairs' ? new EncoderDecoderModel(description, { seed, plans }) : buildModel(description, { seed, plans });
  const view = args.switches.has('quiet') ? null : new ProgressView(process.stderr, maeScaleOf(settings.task, prepared));
  const validateEvery = args.flags.has('validate-every') ? numberFlag(args, 'validate-every', 1, { whole: true, min: 1 }) : undefined;
  // Shards of 8 rows whatever the thread count, so --workers changes the speed and never the weights.
  // (A cell of your own trains on this thread: the threads build built-in cells only.)
  const shardCount = plans === undefined ? Math.ceil(options.batch / SHARD_ROWS) : 1;
  const workerCount = Math.min(
    shardCount,
    args.flags.has('workers') ? numberFlag(args, 'workers', 1, { whole: true, min: 1, max: 256 }) : availableParallelism(),
  );
  if (args.flags.get('resume') === undefined && existsSync(checkpoint) && !args.switches.has('start-over')) {
    throw new CommandError(
      `${checkpoint} holds the checkpoint of an earlier run: continue it with --resume ${checkpoint}, or pass --start-over to replace it`,
      2,
    );
  }
  const history = { training: [], validation: [] };
  const controller = new AbortController();
  return {
    args,
    settings,
    prepared,
    schedule,
    description,
    model,
    history,
    info,
    log,
    dataDigest,
    store,
    every,
    validateEvery,
    workerCount,
    view,
    controller,
    started: Date.now(),
    earlierSeconds: 0,
  };
}

/** The metadata the run's files carry: the data's, the training record and the loss history (thinned). */
function metadataFor(run: Run, trainer: Trainer) {
  const { settings, history } = run;
  return {
    ...run.prepared.metadata,
    training: {
      data: basename(settings.dataPath),
      dataDigest: run.dataDigest,
      steps: trainer.stepsTaken,
      seed: settings.seed,
      kernels: kernelRecord(settings.backend),
      store: run.store,
      seconds: Number((run.earlierSeconds + (Date.now() - run.started) / 1000).toFixed(3)),
    },
    history: { training: thin(history.training).map((p) => [p.step, p.loss]), validation: thin(history.validation).map((p) => [p.step, p.loss]) },
  };
}

/** What every trainer of the run shares: the data, the schedule, the shards and threads, and the run's abort signal. */
function trainerOptions(run: Run, model: TrainableModel, seed: string, threads: ThreadGroup | undefined): TrainerOptions {
  const { prepared, schedule } = run;
  return {
    model,
    shardRows: SHARD_ROWS,
    ...(threads === undefined ? {} : { workers: threads }),
    data: prepared.train,
    validation: prepared.validation,
    optimizer: new AdamRule({ rate: schedule.rate }),
    epochs: schedule.epochs,
    gradientNormLimit: schedule.clip,
    validateEvery: run.validateEvery,
    patience: schedule.patience,
    seed,
    signal: run.controller.signal,
  };
}

/** The trainer of the run's model, with progress and checkpoints, and an earlier run's state when resuming. */
async function makeTrainer(run: Run, threads: ThreadGroup | undefined): Promise<Trainer> {
  const { model, history, settings } = run;
  const trainer: Trainer = new Trainer({
    ...trainerOptions(run, model, settings.seed, threads),
    onProgress: (event: TrainingEvent) => {
      if (event.kind === 'step') history.training.push({ step: event.step, loss: event.loss });
      if (event.kind === 'validation') history.validation.push({ step: event.step, loss: event.validationLoss! });
      run.view?.show(event);
    },
    afterStep: async (t) => {
      if (t.stepsTaken % run.every === 0) await saveCheckpoint(settings.checkpoint, t, model, metadataFor(run, t));
    },
  });
  const resume = run.args.flags.get('resume');
  if (resume !== undefined) await resumeFrom(run, trainer, resume);
  return trainer;
}

/** Puts `trainer` at the checkpoint `resume`, refused when it holds another model or was trained on other data. */
async function resumeFrom(run: Run, trainer: Trainer, resume: string): Promise<void> {
  const saved = await loadCheckpoint(resolve(resume), { plans: run.settings.plans });
  const difference = firstDifference(saved.file.model, run.description);
  if (difference !== null) throw new CommandError(`${resume}: the checkpoint does not match the requested model: ${difference}`);
  const savedTraining = saved.file.metadata.training as Record<string, unknown> | undefined;
  if (savedTraining?.dataDigest !== undefined && savedTraining.dataDigest !== run.dataDigest) {
    throw new CommandError(
      `${resume}: the checkpoint was trained on other data (${String(savedTraining.data)}, SHA-256 ${String(savedTraining.dataDigest).slice(0, 12)}…), not ${run.settings.dataPath}`,
    );
  }
  trainer.restore(saved.snapshot);
  const kernels = kernelRecord(run.settings.backend);
  if (typeof savedTraining?.kernels === 'string' && savedTraining.kernels !== kernels) {
    run.info(
      `note: the checkpoint was trained on the ${savedTraining.kernels} kernels and continues on the ${kernels} kernels: the result will not be the same bits as a run on either alone (--kernels chooses)`,
    );
  }
  run.earlierSeconds =
    typeof savedTraining?.seconds === 'number' && Number.isFinite(savedTraining.seconds) && savedTraining.seconds >= 0 ? savedTraining.seconds : 0;
  const savedHistory = saved.file.metadata.history as { training?: number[][]; validation?: number[][] } | undefined;
  run.history.training.push(...(savedHistory?.training ?? []).map(([step, loss]) => ({ step, loss })));
  run.history.validation.push(...(savedHistory?.validation ?? []).map(([step, loss]) => ({ step, loss })));
  run.info(`resuming from ${resume} at step ${trainer.stepsTaken} of ${trainer.totalSteps}`);
}

/** Ctrl-C aborts the run once (a checkpoint is written); a second one exits at once. */
function interruptHandler(run: Run): () => void {
  let interrupts = 0;
  return () => {
    interrupts++;
    if (interrupts > 1) process.exit(130);
    run.controller.abort();
  };
}

/** Trains the run's model on the threads asked for; an interrupted run writes its checkpoint and says how to resume. */
async function trainModel(run: Run): Promise<{ summary: TrainingSummary; trainer: Trainer }> {
  const { settings, model } = run;
  const threads: ThreadGroup | undefined = run.workerCount > 1 ? await startTrainingThreads({ count: run.workerCount, model }) : undefined;
  // The trainer (and a resumed run's state) made with the threads running: any refusal here ends them first.
  let trainer: Trainer;
  try {
    trainer = await makeTrainer(run, threads);
  } catch (error) {
    await threads?.close();
    throw error;
  }
  const onInterrupt = interruptHandler(run);
  process.on('SIGINT', onInterrupt);
  const { cell, task, attention } = settings;
  const kind = task === 'pairs' ? `encoder-decoder (${attention === 'none' ? 'no' : attention} attention)` : `${task} model`;
  const named = cell === 'lstm' ? 'an LSTM' : cell === 'gru' ? 'a GRU' : cell === 'plain' ? 'a plain recurrent' : `a ${cell}`;
  const parameters = model.parameters().reduce((n, p) => n + p.tensor.size, 0);
  run.info(
    `training ${named} ${kind} (${settings.layerCount} × ${run.schedule.hidden} hidden, ${parameters} parameters) on ${settings.dataPath}: ${trainer.totalSteps} steps, ${settings.backend.name} backend${settings.backend.kernelSet === 'relaxed' ? ' (relaxed kernels)' : ''}, ${run.workerCount > 1 ? `${run.workerCount} threads` : 'this thread'}`,
  );
  let summary: TrainingSummary;
  try {
    summary = await trainer.run();
  } finally {
    process.off('SIGINT', onInterrupt);
    run.view?.finish();
    await threads?.close();
  }
  await saveCheckpoint(settings.checkpoint, trainer, model, metadataFor(run, trainer));
  writeFileAtomic(
    settings.curve,
    lossCurveSvg(run.history.training, run.history.validation, `weft train ${basename(settings.dataPath)}: ${cell} ${task}`, summary.keptStep),
  );
  if (summary.stoppedBy === 'signal') {
    run.log(`interrupted at step ${summary.steps}; checkpoint written to ${settings.checkpoint}`);
    run.log(`resume with: ${resumeCommand(run.args, settings.checkpoint)}`);
    throw new CommandError('', 130);
  }
  return { summary, trainer };
}

/**
 * --ensemble K: members 2…K trained alike from their own seeds (after the first, which the checkpoint holds, so a
 * resumed run repeats them exactly), then stacked into one model whose forecasts' median is the forecast.
 */
async function trainMembers(run: Run, trainer: Trainer): Promise<{ final: TrainableModel; metadata: ReturnType<typeof metadataFor> & { members?: number } }> {
  const { settings, prepared } = run;
  const { ensemble, seed } = settings;
  const metadata = metadataFor(run, trainer);
  if (ensemble <= 1 || prepared.task !== 'forecast') return { final: run.model, metadata };
  const members = [run.model as SequenceModel];
  // Ctrl-C while a member trains stops it as it stops the first: the checkpoint holds member 1, resuming repeats the rest.
  const onInterrupt = interruptHandler(run);
  process.on('SIGINT', onInterrupt);
  for (let k = 2; k <= ensemble; k++) {
    const memberSeed = `${seed}/${k}`;
    const member = buildModel(run.description, { seed: memberSeed, plans: settings.plans });
    const memberThreads = run.workerCount > 1 ? await startTrainingThreads({ count: run.workerCount, model: member }) : undefined;
    let memberSummary: TrainingSummary;
    try {
      memberSummary = await new Trainer(trainerOptions(run, member, memberSeed, memberThreads)).run();
    } finally {
      await memberThreads?.close();
    }
    if (memberSummary.stoppedBy === 'signal') {
      process.off('SIGINT', onInterrupt);
      run.log(`interrupted while training member ${k} of ${ensemble}; the checkpoint holds member 1: ${settings.checkpoint}`);
      run.log(`resume with: ${resumeCommand(run.args, settings.checkpoint)}`);
      throw new CommandError('', 130);
    }
    const figure = prepared.validationFigure?.(member);
    run.info(
      `member ${k} of ${ensemble} (seed ${memberSeed}): ${memberSummary.steps} steps, kept step ${memberSummary.keptStep}${figure === undefined ? '' : `, validation ${figureName(prepared)} ${Number(figure.toPrecision(4))}`}`,
    );
    members.push(member);
  }
  process.off('SIGINT', onInterrupt);
  const seconds = Number((run.earlierSeconds + (Date.now() - run.started) / 1000).toFixed(3));
  return { final: stackMembers(members), metadata: { ...metadata, members: ensemble, training: { ...metadata.training, seconds } } };
}

/** The result lines: the loss sparkline, the held-out report, how the run ended, and where its files went. */
function reportRun(run: Run, summary: TrainingSummary, heldOut: HeldOutReport): void {
  const { info, log, history, settings, prepared } = run;
  info(`loss ${sparkline(history.training.map((p) => p.loss))} ${history.training.at(-1)?.loss.toPrecision(4) ?? ''}`);
  for (const line of reportLines(heldOut)) log(line);
  const seconds = run.earlierSeconds + (Date.now() - run.started) / 1000;
  const ended = summary.stoppedBy === 'patience' ? `stopped early: ${run.schedule.patience} validations without improvement` : 'all epochs done';
  const kept =
    summary.bestValidation === null || summary.keptStep === summary.steps
      ? `the weights of step ${summary.keptStep}, the last`
      : `the weights of step ${summary.keptStep}, the best validation`;
  log(
    `finished ${summary.steps} steps in ${seconds < 10 ? `${seconds.toFixed(1)}s` : formatSeconds(seconds)}${run.earlierSeconds > 0 ? ' (resumed runs included)' : ''}; ${ended}; kept ${kept}`,
  );
  if (prepared.task === 'forecast') {
    const m = prepared.metadata as { columns?: string[]; targetColumns?: string[] };
    log(`columns read: ${(m.columns ?? []).join(', ')}; forecast: ${(m.targetColumns ?? []).join(', ')}`);
  }
  log(`weight file: ${settings.out}`);
  log(`checkpoint:  ${settings.checkpoint}`);
  log(`loss curve:  ${settings.curve}`);
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
