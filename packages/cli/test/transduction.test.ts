import { describe, expect, it } from 'vitest';
import { EncoderDecoderModel } from '@weft/cells';
import { pairsDescription, runtimeOf } from '../src/pairs.js';
import { END, START, decodeText, sourceIds, transductionMeta, transductionReport } from '../src/transduction.js';

const sourceVocabulary = ['<unknown>', 'a', 'b'];
const targetVocabulary = ['<start>', '<end>', 'A', 'B'];
const model = new EncoderDecoderModel(
  pairsDescription({
    cell: 'gru',
    hidden: 4,
    layers: 1,
    bidirectional: false,
    dropout: 0,
    embedding: 3,
    attention: null,
    reverseSource: false,
    sourceVocabulary: 3,
    targetVocabulary: 4,
  }),
  { seed: 2 },
);
const metadata = { tokens: 'characters', sourceVocabulary, targetVocabulary, maxTarget: 3 };
const runtime = runtimeOf(model, metadata);

describe('what running and scoring a pairs model share', () => {
  it('gives each source token its id, counting the tokens the model never saw (id 0, <unknown>)', () => {
    expect(sourceIds(['a', 'x', 'b', 'a', 'y'], sourceVocabulary)).toEqual({ ids: [1, 0, 2, 1, 0], unknown: 2 });
    expect([START, END]).toEqual([0, 1]);
  });

  it('reads the metadata a pairs weight file carries, and names the file and the field of a wrong one', () => {
    expect(transductionMeta(metadata, runtime, 'm.json')).toMatchObject({ tokens: 'characters', maxTarget: 3, sourceColumn: 'source', targetColumn: 'target' });
    expect(() => transductionMeta({ ...metadata, targetVocabulary: ['<start>'] }, runtime, 'm.json')).toThrowError(
      'm.json: metadata.targetVocabulary should be 4 strings (the file was not written by weft train --task pairs, or was edited)',
    );
    expect(() => transductionMeta({ ...metadata, tokens: 'bytes' }, runtime, 'm.json')).toThrowError(
      /m\.json: metadata\.tokens should be "characters" or "words"/,
    );
  });

  it('decodes at most maxTarget + 1 steps and keeps at most maxTarget tokens, leaving out the end token, and scores the copy baseline by its definition', () => {
    const meta = { sourceVocabulary, targetVocabulary, maxTarget: 3 };
    const decoded = decodeText(runtime, meta, ['a', 'b'], 1).output;
    expect(decoded.length).toBeLessThanOrEqual(3);
    expect(decoded.every((t) => t !== '<end>')).toBe(true);
    // A decoding that ran out of room (maxTarget + 1 tokens, none the end token) keeps the first maxTarget; one that
    // ended keeps what came before its end token.
    const asked: number[] = [];
    const decodes = (tokens: number[]) =>
      ({
        decode: (_source: unknown, options: { maxLength: number }) => {
          asked.push(options.maxLength);
          return { tokens, attention: [] };
        },
      }) as unknown as typeof runtime;
    expect(decodeText(decodes([2, 3, 2, 3]), meta, ['a'], 1).output).toEqual(['A', 'B', 'A']);
    expect(decodeText(decodes([3, 2, 3, END]), meta, ['a'], 1).output).toEqual(['B', 'A', 'B']);
    expect(asked).toEqual([4, 4]);
    // Copy: the source itself; exact where source and reference are equal (here one pair of two).
    const report = transductionReport(runtime, meta, [['A'], ['a']], [['A'], ['B']], 'two pairs', 1);
    expect(report.baselines[0]).toMatchObject({ name: 'copy', transduction: { exactMatch: 0.5, tokenAccuracy: 0.5 } });
    expect(report.model.description).toBe('greedy decoding');
  });
});
