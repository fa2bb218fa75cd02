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
import type { TokenPair } from '@weft/optim';
import { UNKNOWN_TOKEN, modelTensors, parseTable } from '@weft/io';
import { fieldPath } from '@weft/io/internal';
import type { WeightFile, WeightMetadata } from '@weft/io';
import { EncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';
import { CommandError } from './errors.js';
import { END, START, transductionReport } from './transduction.js';
import type { PairsPrepareOptions, PairsPrepared, PairsReadOptions, TextPairs } from './pairs-types.js';

export type { PairsPrepareOptions, PairsPrepared, PairsReadOptions, TextPairs, TransductionMeta } from './pairs-types.js';

export const START_TOKEN = '<start>';
export const END_TOKEN = '<end>';

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
  if (length > MAX_SOURCE_TOKENS)
    fail(
      'bad_data',
      where,
      `a source of at most ${MAX_SOURCE_TOKENS.toLocaleString('en')} ${tokens} (weft's limit for an encoder-decoder's source)`,
      `${length.toLocaleString('en')} ${tokens}`,
    );
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
    if (source.length === 0)
      fail('bad_data', fieldPath(table, r, sourceAt), `a source of at least one ${options.tokens === 'characters' ? 'character' : 'word'}`, 'an empty field');
    if (target.length === 0)
      fail('bad_data', fieldPath(table, r, targetAt), `a target of at least one ${options.tokens === 'characters' ? 'character' : 'word'}`, 'an empty field');
    checkSourceLength(source.length, fieldPath(table, r, sourceAt), options.tokens);
    if (target.length > options.maxTarget)
      fail(
        'bad_data',
        fieldPath(table, r, targetAt),
        `a target of at most ${options.maxTarget} ${options.tokens} (the decoder's limit, --max-target)`,
        `${target.length}`,
      );
    sources.push(source);
    targets.push(target);
  });
  return { sources, targets, lines: table.rows.map((r) => r.line) };
}

/** Reads, splits (a seeded shuffle: test, validation, then training) and batches a pairs file. */
export function preparePairs(text: string, file: string, options: PairsPrepareOptions): PairsPrepared {
  const pairs = readPairs(text, file, options);
  const count = pairs.sources.length;
  const testCount = Math.max(1, Math.round(count * options.testShare));
  const validationCount = Math.max(1, Math.round(count * options.validationShare));
  if (count - testCount - validationCount < 1)
    fail(
      'bad_data',
      file,
      `at least ${testCount + validationCount + 1} pairs (one to train on, ${validationCount} for validation and ${testCount} for the test)`,
      `${count}`,
    );
  const sourceVocabulary = [UNKNOWN_TOKEN, ...[...new Set(pairs.sources.flat())].sort()];
  const targetVocabulary = [START_TOKEN, END_TOKEN, ...[...new Set(pairs.targets.flat())].sort()];
  const sourceIds = new Map(sourceVocabulary.map((t, i) => [t, i]));
  const targetIds = new Map(targetVocabulary.map((t, i) => [t, i]));
  const order = seededOrder(count, options.seed);
  const toPair = (k: number): TokenPair => ({
    source: pairs.sources[k].map((t) => sourceIds.get(t) as number),
    target: pairs.targets[k].map((t) => targetIds.get(t) as number),
  });
  const testRows = order.slice(0, testCount);
  const validationRows = order.slice(testCount, testCount + validationCount);
  const trainRows = order.slice(testCount + validationCount);
  const batchOptions = { batchSize: options.batch, startToken: START, endToken: END, seed: options.seed };
  const mostFrequent = mostFrequentTarget(pairs.targets, trainRows, options.tokens);
  const metadata: WeightMetadata = {
    task: 'transduction',
    tokens: options.tokens,
    sourceVocabulary,
    targetVocabulary,
    sourceColumn: options.sourceColumn,
    targetColumn: options.targetColumn,
    maxTarget: options.maxTarget,
    mostFrequentTarget: mostFrequent,
    split: {
      kind: 'pairs',
      seed: options.seed,
      pairs: count,
      trainingPairs: trainRows.length,
      validationPairs: validationRows.length,
      testPairs: testRows.length,
    },
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
      const report = transductionReport(
        runtime,
        { sourceVocabulary, targetVocabulary, maxTarget: options.maxTarget },
        sources,
        references,
        `${testRows.length} test pairs of ${file}, drawn at random (seed ${options.seed}), used for neither training nor stopping`,
        1,
        mostFrequent,
      );
      return { ...report, context: [partsLine] };
    },
  };
}

/** The most frequent target of the training pairs (the first in file order on ties): a baseline that ignores the source. */
function mostFrequentTarget(targets: readonly string[][], trainRows: readonly number[], tokens: PairsPrepareOptions['tokens']): string[] {
  const frequency = new Map<string, number>();
  for (const k of trainRows) {
    const joined = textOf(targets[k], tokens);
    frequency.set(joined, (frequency.get(joined) ?? 0) + 1);
  }
  let mostFrequent = targets[trainRows[0]];
  let most = 0;
  for (const k of [...trainRows].sort((a, b) => a - b)) {
    const n = frequency.get(textOf(targets[k], tokens)) ?? 0;
    if (n > most) [mostFrequent, most] = [targets[k], n];
  }
  return mostFrequent;
}

/** The index order of a shuffle seeded by `seed` (core's generator, as every weft choice). */
function seededOrder(count: number, seed: string): number[] {
  const order = Array.from({ length: count }, (_, i) => i);
  new Random(`pairs:${seed}`).shuffle(order);
  return order;
}

/** A runtime for a model in memory (its tensors as they are, no file written). */
export function runtimeOf(model: EncoderDecoderModel, metadata: WeightMetadata): EncoderDecoderRuntime {
  const file: WeightFile = {
    version: 2,
    model: model.description,
    metadata,
    tensors: modelTensors(model),
    storedAs: {},
    digest: '',
    digestVerified: false,
    digestChecked: false,
  };
  return new EncoderDecoderRuntime(file);
}

/** The description `weft train --task pairs` builds from its flags. */
export function pairsDescription(options: {
  cell: string;
  hidden: number;
  layers: number;
  bidirectional: boolean;
  dropout: number;
  embedding: number;
  attention: AttentionForm | null;
  reverseSource: boolean;
  sourceVocabulary: number;
  targetVocabulary: number;
}): EncoderDecoderDescription {
  const layers = (bidirectional: boolean): LayerDescription[] =>
    Array.from({ length: options.layers }, () => ({ cell: options.cell, hidden: options.hidden, ...(bidirectional ? { bidirectional: true } : {}) }));
  return {
    kind: 'encoder-decoder',
    ...(options.attention === null ? {} : { attention: options.attention }),
    ...(options.reverseSource ? { reverseSource: true } : {}),
    encoder: {
      input: { kind: 'embedding', vocabulary: options.sourceVocabulary, width: options.embedding },
      layers: layers(options.bidirectional),
      dropout: options.dropout,
    },
    decoder: {
      input: { kind: 'embedding', vocabulary: options.targetVocabulary, width: options.embedding },
      layers: layers(false),
      dropout: options.dropout,
      readout: { width: options.targetVocabulary },
    },
  };
}
