/**
 * Reading and preparing pairs for `weft train --task pairs`: tokens, vocabularies, the split, one-line errors at
 * file:line:column, and the held-out report whose figures are recomputed here from the decoded outputs with the
 * definitions of exact match, token accuracy and BLEU (Papineni et al. 2002, via @weft/io's corpusBleu, itself checked
 * against the paper's worked examples).
 */
import { describe, expect, it } from 'vitest';
import { EncoderDecoderModel } from '@weft/cells';
import { AdamRule, Trainer } from '@weft/optim';
import { corpusBleu } from '@weft/io';
import { pairsDescription, preparePairs, readPairs, runtimeOf, textOf, tokensOf } from '../src/pairs.js';
import { decodeText } from '../src/transduction.js';

// Invented shelf codes: letters a–c with dashes, to be written upper case without the dashes.
const codes = Array.from({ length: 80 }, (_, i) =>
  ['a', 'b', 'c', 'b', 'a']
    .slice(i % 3, 2 + (i % 4))
    .map((c, k) => (k === (i % 2) + 1 ? `-${c}` : c))
    .join(''),
);
const csv = ['source,target', ...codes.map((c, i) => `${c}${'abc'[i % 3]},${(c + 'abc'[i % 3]).replace(/-/g, '').toUpperCase()}`)].join('\n');

describe('pairs of sources and targets', () => {
  it('read characters or words, and write them back the same way', () => {
    expect(tokensOf('ab c', 'characters')).toEqual(['a', 'b', ' ', 'c']);
    expect(tokensOf(' to  the quay ', 'words')).toEqual(['to', 'the', 'quay']);
    expect(textOf(['to', 'the'], 'words')).toBe('to the');
    expect(
      readPairs('source,target\nab-c,ABC\n', 'codes.csv', { sourceColumn: 'source', targetColumn: 'target', tokens: 'characters', maxTarget: 10 }).targets[0],
    ).toEqual(['A', 'B', 'C']);
  });

  it('refuse an empty side and a target over the decoder limit at file:line:column, and a missing column by name', () => {
    const options = { sourceColumn: 'source', targetColumn: 'target', tokens: 'characters' as const, maxTarget: 3 };
    expect(() => readPairs('source,target\nab,AB\n,CD\n', 'codes.csv', options)).toThrowError(
      'Bad data at codes.csv:3:1: expected a source of at least one character, received an empty field',
    );
    expect(() => readPairs('source,target\nab,AB\ncd,\n', 'codes.csv', options)).toThrowError(
      'Bad data at codes.csv:3:4: expected a target of at least one character, received an empty field',
    );
    expect(() => readPairs('source,target\nab,ABCD\n', 'codes.csv', options)).toThrowError(
      "Bad data at codes.csv:2:4: expected a target of at most 3 characters (the decoder's limit, --max-target), received 4",
    );
    expect(() => readPairs('from,to\nab,AB\n', 'codes.csv', options)).toThrowError('codes.csv: needs a "source" column (--source-column); found from, to');
  });

  it('keep a seeded test share apart from validation, build vocabularies with <unknown>, <start> and <end>, and report figures that match their definitions', async () => {
    const prepared = preparePairs(csv, 'codes.csv', {
      sourceColumn: 'source',
      targetColumn: 'target',
      tokens: 'characters',
      maxTarget: 10,
      validationShare: 0.15,
      testShare: 0.1,
      batch: 8,
      seed: '1',
    });
    expect(prepared.sourceVocabulary).toEqual(['<unknown>', '-', 'a', 'b', 'c']);
    expect(prepared.targetVocabulary).toEqual(['<start>', '<end>', 'A', 'B', 'C']);
    expect(prepared.notes[0]).toBe('80 pairs; 4 source and 3 target characters; longest source 7');
    expect(prepared.metadata.split).toEqual({ kind: 'pairs', seed: '1', pairs: 80, trainingPairs: 60, validationPairs: 12, testPairs: 8 });
    const model = new EncoderDecoderModel(
      pairsDescription({
        cell: 'gru',
        hidden: 16,
        layers: 1,
        bidirectional: true,
        dropout: 0,
        embedding: 8,
        attention: 'general',
        reverseSource: false,
        sourceVocabulary: 5,
        targetVocabulary: 5,
      }),
      { seed: 1 },
    );
    await new Trainer({ model, data: prepared.train, optimizer: new AdamRule({ rate: 0.02 }), epochs: 30, seed: 1 }).run();
    const report = prepared.heldOut(model);
    // The same figures from their definitions, on the outputs the runtime decodes for the held-out rows.
    const pairs = readPairs(csv, 'codes.csv', { sourceColumn: 'source', targetColumn: 'target', tokens: 'characters', maxTarget: 10 });
    const runtime = runtimeOf(model, prepared.metadata);
    const meta = { sourceVocabulary: prepared.sourceVocabulary, targetVocabulary: prepared.targetVocabulary, maxTarget: 10 };
    expect(prepared.heldOutRows).toHaveLength(8);
    const outputs = prepared.heldOutRows.map((k) => decodeText(runtime, meta, pairs.sources[k], 1).output);
    const references = prepared.heldOutRows.map((k) => pairs.targets[k]);
    const exact = outputs.filter((o, k) => o.join('|') === references[k].join('|')).length / 8;
    const right = references.reduce((n, r, k) => n + r.filter((token, i) => outputs[k][i] === token).length, 0);
    const total = references.reduce((n, r) => n + r.length, 0);
    expect(report.model.transduction).toEqual({
      exactMatch: exact,
      tokenAccuracy: right / total,
      bleu: corpusBleu(
        outputs,
        references.map((r) => [r]),
      ).bleu,
    });
    console.log(`held-out pairs: ${outputs.map((o, k) => `${pairs.sources[prepared.heldOutRows[k]].join('')} → ${o.join('')}`).join(', ')}`);
    expect(report.model.transduction!.tokenAccuracy).toBeGreaterThan(0.5);
    // Every target is upper case and every source lower case: copying never matches a whole target.
    expect(report.baselines[0]).toMatchObject({ name: 'copy', transduction: { exactMatch: 0 } });
    // The most frequent training target, whatever the source: exact only where a test target is that one.
    const frequent = prepared.metadata.mostFrequentTarget as string[];
    expect(report.baselines[1]).toMatchObject({
      name: 'most frequent target',
      transduction: { exactMatch: references.filter((r) => r.join('') === frequent.join('')).length / 8 },
    });
  });
});
