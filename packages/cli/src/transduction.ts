import { corpusBleu, exactMatchRate, tokenAccuracy } from '@weft/io';
import type { EncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';
import type { Contender, HeldOutReport } from './datasets.js';
import { CommandError } from './errors.js';
import type { TransductionMeta } from './pairs-types.js';

/** The id of the start token in both vocabularies. */
export const START = 0;
/** The id of the end token in both vocabularies. */
export const END = 1;

/** The metadata of a `weft train --task pairs` weight file, or an error naming the file and the field. */
export function transductionMeta(metadata: Readonly<Record<string, unknown>>, runtime: EncoderDecoderRuntime, file: string): TransductionMeta {
  const strings = (v: unknown): v is string[] => Array.isArray(v) && v.every((s) => typeof s === 'string');
  const m = metadata;
  const problem = (field: string, expected: string): never => {
    throw new CommandError(`${file}: metadata.${field} should be ${expected} (the file was not written by weft train --task pairs, or was edited)`);
  };
  if (m.tokens !== 'characters' && m.tokens !== 'words') problem('tokens', '"characters" or "words"');
  if (!strings(m.sourceVocabulary) || m.sourceVocabulary.length !== runtime.encoder.vocabularySize)
    problem('sourceVocabulary', `${runtime.encoder.vocabularySize} strings`);
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

/** One source decoded, greedily (beam 1) or by beam search, as target tokens without the end token (at most maxTarget). */
export function decodeText(
  runtime: EncoderDecoderRuntime,
  meta: Pick<TransductionMeta, 'sourceVocabulary' | 'targetVocabulary' | 'maxTarget'>,
  source: readonly string[],
  beam: number,
): { output: string[]; attention: Float32Array[] } {
  const { ids } = sourceIds(source, meta.sourceVocabulary);
  const options = { startToken: START, endToken: END, maxLength: meta.maxTarget + 1 };
  const decoded = beam > 1 ? { tokens: runtime.beamSearch(ids, { ...options, width: beam })[0].tokens, attention: [] } : runtime.decode(ids, options);
  // Without an end token within maxTarget + 1 steps the decoding ran out of room: it keeps at most maxTarget tokens,
  // the longest target the model was trained on (the last step is room for the end token only).
  const ended = decoded.tokens[decoded.tokens.length - 1] === END;
  const tokens = ended ? decoded.tokens.slice(0, -1) : decoded.tokens.slice(0, meta.maxTarget);
  return { output: tokens.map((t) => meta.targetVocabulary[t]), attention: decoded.attention };
}

/** Token accuracy, exact-match rate and corpus BLEU of outputs against references. */
function scores(outputs: readonly (readonly string[])[], references: readonly (readonly string[])[], name: string, description: string): Contender {
  const bleu = corpusBleu(
    outputs,
    references.map((r) => [r]),
  ).bleu;
  const exact = exactMatchRate(outputs, references);
  return { name, description, value: exact, transduction: { exactMatch: exact, tokenAccuracy: tokenAccuracy(outputs, references), bleu } };
}

/** The model's decoding, the copy baseline and (when known) the most frequent training target on the same pairs. */
export function transductionReport(
  runtime: EncoderDecoderRuntime,
  meta: Pick<TransductionMeta, 'sourceVocabulary' | 'targetVocabulary' | 'maxTarget'>,
  sources: readonly string[][],
  references: readonly string[][],
  what: string,
  beam: number,
  mostFrequent: readonly string[] | null = null,
): HeldOutReport {
  const outputs = sources.map((source) => decodeText(runtime, meta, source, beam).output);
  return {
    metric: 'exact match',
    lowerIsBetter: false,
    what,
    model: scores(outputs, references, 'model', beam > 1 ? `beam search, width ${beam}` : 'greedy decoding'),
    baselines: [
      scores(sources, references, 'copy', 'the source itself as the output'),
      ...(mostFrequent === null
        ? []
        : [
            scores(
              sources.map(() => mostFrequent),
              references,
              'most frequent target',
              'the most frequent target of the training pairs, whatever the source',
            ),
          ]),
    ],
    names: [],
  };
}
