/**
 * Source/target pairs for encoder-decoders (`weft train --task pairs`, and `weft run`/`weft score` of the model it
 * writes): a CSV with a source column and a target column, read as characters or as words. Ids: the source
 * vocabulary starts with `<unknown>` (tokens first seen at run time), the target vocabulary with `<start>` (the
 * decoder's first input) and `<end>` (written after the target); both are built from every row of the file, in
 * sorted order. Held-out figures: token accuracy, exact-match rate and corpus BLEU (Papineni et al. 2002; no
 * smoothing; over the chosen tokens, so character BLEU for `--tokens characters`) of greedy decoding, beside the
 * baseline that copies the source.
 */
import { Random, fail } from '@weft/core';
import type { AttentionForm, EncoderDecoderDescription, EncoderDecoderModel, LayerDescription } from '@weft/cells';
import { pairBatches } from '@weft/optim';
import type { DataSource, TokenPair } from '@weft/optim';
import { UNKNOWN_TOKEN, corpusBleu, exactMatchRate, fieldPath, modelTensors, parseTable, tokenAccuracy } from '@weft/io';
import type { WeightFile, WeightMetadata } from '@weft/io';
import { EncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';
import type { Contender, HeldOutReport } from './datasets.js';
import { CommandError } from './errors.js';

export const START_TOKEN = '<start>';
export const END_TOKEN = '<end>';
const START = 0;
const END = 1;

/** How a pairs file is read. */
export interface PairsReadOptions {
  readonly sourceColumn: string;
  readonly targetColumn: string;
  readonly tokens: 'characters' | 'words';
  /** Longest target, in tokens (the decoder writes at most this many, then the end token). */
  readonly maxTarget: number;
}

/** The pairs of a file, as token texts, with the line each came from. */
export interface TextPairs {
  readonly sources: string[][];
  readonly targets: string[][];
  readonly lines: number[];
}

/** Text as tokens: its characters (code points), or its words (split on white space). */
export function tokensOf(text: string, tokens: 'characters' | 'words'): string[] {
  return tokens === 'characters' ? Array.from(text) : text.split(/\s+/).filter((w) => w !== '');
}

/** Tokens as text again: characters joined as they are, words with one space. */
export function textOf(pieces: readonly string[], tokens: 'characters' | 'words'): string {
  return pieces.join(tokens === 'characters' ? '' : ' ');
}

/** Reads a pairs CSV/TSV; an empty side or a target over the limit is an error at its file:line:column. */
/**
 * The longest source an encoder-decoder reads from a file, in tokens: its encoder's outputs and the attention over
 * them grow with the source, so a longer one is refused in one line before any is made (on either backend).
 */
export const MAX_SOURCE_TOKENS = 10_000;

/** The one-line refusal of a source past MAX_SOURCE_TOKENS at `where` (file:line:column). */
export function checkSourceLength(length: number, where: string, tokens: 'characters' | 'words'): void {
  if (length > MAX_SOURCE_TOKENS) fail('bad_data', where, `a source of at most ${MAX_SOURCE_TOKENS.toLocaleString('en')} ${tokens} (weft's limit for an encoder-decoder's source)`, `${length.toLocaleString('en')} ${tokens}`);
}

export function readPairs(text: string, file: string, options: PairsReadOptions): TextPairs {
  const table = parseTable(text, { file });
  const at = (name: string, flag: string): number => {
    const i = table.header.indexOf(name);
    if (i < 0) throw new CommandError(`${file}: needs a ${JSON.stringify(name)} column (${flag}); found ${table.header.join(', ')}`, 2);
    return i;
  };
  const sourceAt = at(options.sourceColumn, '--source-column');
  const targetAt = at(options.targetColumn, '--target-column');
  if (table.rows.length === 0) fail('bad_data', `${file}:2:1`, 'at least one pair', 'no rows');
  const sources: string[][] = [];
  const targets: string[][] = [];
  table.rows.forEach((row, r) => {
    const source = tokensOf(row.fields[sourceAt].trim(), options.tokens);
    const target = tokensOf(row.fields[targetAt].trim(), options.tokens);
    if (source.length === 0) fail('bad_data', fieldPath(table, r, sourceAt), `a source of at least one ${options.tokens === 'characters' ? 'character' : 'word'}`, 'an empty field');
    if (target.length === 0) fail('bad_data', fieldPath(table, r, targetAt), `a target of at least one ${options.tokens === 'characters' ? 'character' : 'word'}`, 'an empty field');
    checkSourceLength(source.length, fieldPath(table, r, sourceAt), options.tokens);
    if (target.length > options.maxTarget) fail('bad_data', fieldPath(table, r, targetAt), `a target of at most ${options.maxTarget} ${options.tokens} (the decoder's limit, --max-target)`, `${target.length}`);
    sources.push(source);
    targets.push(target);
  });
  return { sources, targets, lines: table.rows.map((r) => r.line) };
}

/** What `weft train --task pairs` trains on. */
export interface PairsPrepared {
  readonly task: 'pairs';
  readonly train: DataSource;
  readonly validation: DataSource;
  readonly metadata: WeightMetadata;
  readonly notes: readonly string[];
  readonly sourceVocabulary: readonly string[];
  readonly targetVocabulary: readonly string[];
  /** Which pairs are held out: their indices among the file's rows (0 = the first row after the header). */
  readonly heldOutRows: readonly number[];
  /** The model (greedy decoding) and the copy baseline on the held-out pairs. */
  readonly heldOut: (model: EncoderDecoderModel) => HeldOutReport;
}

/** How pairs are prepared for training. */
export interface PairsPrepareOptions extends PairsReadOptions {
  readonly validationShare: number;
  readonly testShare: number;
  readonly batch: number;
  readonly seed: string;
}

/** Reads, splits (a seeded shuffle: test, validation, then training) and batches a pairs file. */
export function preparePairs(text: string, file: string, options: PairsPrepareOptions): PairsPrepared {
  const pairs = readPairs(text, file, options);
  const count = pairs.sources.length;
  const testCount = Math.max(1, Math.round(count * options.testShare));
  const validationCount = Math.max(1, Math.round(count * options.validationShare));
  if (count - testCount - validationCount < 1) fail('bad_data', file, `at least ${testCount + validationCount + 1} pairs (one to train on, ${validationCount} for validation and ${testCount} for the test)`, `${count}`);
  const sourceVocabulary = [UNKNOWN_TOKEN, ...[...new Set(pairs.sources.flat())].sort()];
  const targetVocabulary = [START_TOKEN, END_TOKEN, ...[...new Set(pairs.targets.flat())].sort()];
  const sourceIds = new Map(sourceVocabulary.map((t, i) => [t, i]));
  const targetIds = new Map(targetVocabulary.map((t, i) => [t, i]));
  const order = seededOrder(count, options.seed);
  const toPair = (k: number): TokenPair => ({ source: pairs.sources[k].map((t) => sourceIds.get(t) as number), target: pairs.targets[k].map((t) => targetIds.get(t) as number) });
  const testRows = order.slice(0, testCount);
  const validationRows = order.slice(testCount, testCount + validationCount);
  const trainRows = order.slice(testCount + validationCount);
  const batchOptions = { batchSize: options.batch, startToken: START, endToken: END, seed: options.seed };
  // The most frequent target of the training pairs (the first in file order on ties): a baseline that ignores the source.
  const frequency = new Map<string, number>();
  for (const k of trainRows) {
    const joined = textOf(pairs.targets[k], options.tokens);
    frequency.set(joined, (frequency.get(joined) ?? 0) + 1);
  }
  let mostFrequent = pairs.targets[trainRows[0]];
  let most = 0;
  for (const k of [...trainRows].sort((a, b) => a - b)) {
    const n = frequency.get(textOf(pairs.targets[k], options.tokens)) ?? 0;
    if (n > most) [mostFrequent, most] = [pairs.targets[k], n];
  }
  const metadata: WeightMetadata = {
    task: 'transduction',
    tokens: options.tokens,
    sourceVocabulary,
    targetVocabulary,
    sourceColumn: options.sourceColumn,
    targetColumn: options.targetColumn,
    maxTarget: options.maxTarget,
    mostFrequentTarget: mostFrequent,
    split: { kind: 'pairs', seed: options.seed, pairs: count, trainingPairs: trainRows.length, validationPairs: validationRows.length, testPairs: testRows.length },
  };
  let longest = 0;
  for (const s of pairs.sources) longest = Math.max(longest, s.length);
  const partsLine = `parts of ${file}, a seeded shuffle (seed ${options.seed}): training ${trainRows.length} pairs; validation, for stopping and keeping weights, ${validationRows.length}; test, scored once at the end, ${testRows.length}`;
  return {
    task: 'pairs',
    train: pairBatches(trainRows.map(toPair), batchOptions),
    validation: pairBatches(validationRows.map(toPair), { ...batchOptions, batchSize: Math.max(options.batch, 32) }),
    metadata,
    notes: [`${count} pairs; ${sourceVocabulary.length - 1} source and ${targetVocabulary.length - 2} target ${options.tokens}; longest source ${longest}`],
    sourceVocabulary,
    targetVocabulary,
    heldOutRows: testRows,
    heldOut: (model) => {
      const runtime = runtimeOf(model, metadata);
      const sources = testRows.map((k) => pairs.sources[k]);
      const references = testRows.map((k) => pairs.targets[k]);
      const report = transductionReport(runtime, { sourceVocabulary, targetVocabulary, maxTarget: options.maxTarget }, sources, references, `${testRows.length} test pairs of ${file}, drawn at random (seed ${options.seed}), used for neither training nor stopping`, 1, mostFrequent);
      return { ...report, context: [partsLine] };
    },
  };
}

/** The index order of a shuffle seeded by `seed` (core's generator, as every weft choice). */
function seededOrder(count: number, seed: string): number[] {
  const order = Array.from({ length: count }, (_, i) => i);
  new Random(`pairs:${seed}`).shuffle(order);
  return order;
}

/** A runtime for a model in memory (its tensors as they are, no file written). */
export function runtimeOf(model: EncoderDecoderModel, metadata: WeightMetadata): EncoderDecoderRuntime {
  const file: WeightFile = { version: 2, model: model.description, metadata, tensors: modelTensors(model), storedAs: {}, digest: '', digestVerified: false, digestChecked: false };
  return new EncoderDecoderRuntime(file);
}

/** What a transduction model's metadata says, checked enough to use. */
export interface TransductionMeta {
  readonly tokens: 'characters' | 'words';
  readonly sourceVocabulary: readonly string[];
  readonly targetVocabulary: readonly string[];
  readonly maxTarget: number;
  readonly sourceColumn: string;
  readonly targetColumn: string;
}

/** The metadata of a `weft train --task pairs` weight file, or an error naming the file and the field. */
export function transductionMeta(metadata: Readonly<Record<string, unknown>>, runtime: EncoderDecoderRuntime, file: string): TransductionMeta {
  const strings = (v: unknown): v is string[] => Array.isArray(v) && v.every((s) => typeof s === 'string');
  const m = metadata;
  const problem = (field: string, expected: string): never => {
    throw new CommandError(`${file}: metadata.${field} should be ${expected} (the file was not written by weft train --task pairs, or was edited)`);
  };
  if (m.tokens !== 'characters' && m.tokens !== 'words') problem('tokens', '"characters" or "words"');
  if (!strings(m.sourceVocabulary) || m.sourceVocabulary.length !== runtime.encoder.vocabularySize) problem('sourceVocabulary', `${runtime.encoder.vocabularySize} strings`);
  if (!strings(m.targetVocabulary) || m.targetVocabulary.length !== runtime.outputWidth) problem('targetVocabulary', `${runtime.outputWidth} strings`);
  if (typeof m.maxTarget !== 'number' || !Number.isInteger(m.maxTarget) || m.maxTarget < 1) problem('maxTarget', 'a whole number ≥ 1');
  return {
    tokens: m.tokens as 'characters' | 'words',
    sourceVocabulary: m.sourceVocabulary as string[],
    targetVocabulary: m.targetVocabulary as string[],
    maxTarget: m.maxTarget as number,
    sourceColumn: typeof m.sourceColumn === 'string' ? m.sourceColumn : 'source',
    targetColumn: typeof m.targetColumn === 'string' ? m.targetColumn : 'target',
  };
}

/** Source tokens as ids (`<unknown>` for a token the model never saw). */
export function sourceIds(source: readonly string[], vocabulary: readonly string[]): { ids: number[]; unknown: number } {
  const index = new Map(vocabulary.map((t, i) => [t, i]));
  let unknown = 0;
  const ids = source.map((t) => {
    const id = index.get(t);
    if (id === undefined) unknown++;
    return id ?? 0;
  });
  return { ids, unknown };
}

/** One source decoded, greedily (beam 1) or by beam search, as target tokens without the end token. */
export function decodeText(runtime: EncoderDecoderRuntime, meta: Pick<TransductionMeta, 'sourceVocabulary' | 'targetVocabulary' | 'maxTarget'>, source: readonly string[], beam: number): { output: string[]; attention: Float32Array[] } {
  const { ids } = sourceIds(source, meta.sourceVocabulary);
  const options = { startToken: START, endToken: END, maxLength: meta.maxTarget + 1 };
  const decoded = beam > 1 ? { tokens: runtime.beamSearch(ids, { ...options, width: beam })[0].tokens, attention: [] } : runtime.decode(ids, options);
  const tokens = decoded.tokens[decoded.tokens.length - 1] === END ? decoded.tokens.slice(0, -1) : decoded.tokens;
  return { output: tokens.map((t) => meta.targetVocabulary[t]), attention: decoded.attention };
}

/** Token accuracy, exact-match rate and corpus BLEU of outputs against references. */
function scores(outputs: readonly (readonly string[])[], references: readonly (readonly string[])[], name: string, description: string): Contender {
  const bleu = corpusBleu(outputs, references.map((r) => [r])).bleu;
  const exact = exactMatchRate(outputs, references);
  return { name, description, value: exact, transduction: { exactMatch: exact, tokenAccuracy: tokenAccuracy(outputs, references), bleu } };
}

/** The model's decoding, the copy baseline and (when known) the most frequent training target on the same pairs. */
export function transductionReport(runtime: EncoderDecoderRuntime, meta: Pick<TransductionMeta, 'sourceVocabulary' | 'targetVocabulary' | 'maxTarget'>, sources: readonly string[][], references: readonly string[][], what: string, beam: number, mostFrequent: readonly string[] | null = null): HeldOutReport {
  const outputs = sources.map((source) => decodeText(runtime, meta, source, beam).output);
  return {
    metric: 'exact match',
    lowerIsBetter: false,
    what,
    model: scores(outputs, references, 'model', beam > 1 ? `beam search, width ${beam}` : 'greedy decoding'),
    baselines: [
      scores(sources, references, 'copy', 'the source itself as the output'),
      ...(mostFrequent === null ? [] : [scores(sources.map(() => mostFrequent), references, 'most frequent target', 'the most frequent target of the training pairs, whatever the source')]),
    ],
    names: [],
  };
}

/** The description `weft train --task pairs` builds from its flags. */
export function pairsDescription(options: { cell: string; hidden: number; layers: number; bidirectional: boolean; dropout: number; embedding: number; attention: AttentionForm | null; reverseSource: boolean; sourceVocabulary: number; targetVocabulary: number }): EncoderDecoderDescription {
  const layers = (bidirectional: boolean): LayerDescription[] => Array.from({ length: options.layers }, () => ({ cell: options.cell, hidden: options.hidden, ...(bidirectional ? { bidirectional: true } : {}) }));
  return {
    kind: 'encoder-decoder',
    ...(options.attention === null ? {} : { attention: options.attention }),
    ...(options.reverseSource ? { reverseSource: true } : {}),
    encoder: { input: { kind: 'embedding', vocabulary: options.sourceVocabulary, width: options.embedding }, layers: layers(options.bidirectional), dropout: options.dropout },
    decoder: { input: { kind: 'embedding', vocabulary: options.targetVocabulary, width: options.embedding }, layers: layers(false), dropout: options.dropout, readout: { width: options.targetVocabulary } },
  };
}

