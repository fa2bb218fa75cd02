/**
 * `weft train --task pairs`, then `weft run` and `weft score` on the encoder-decoder it writes, through the built
 * binary: outputs for standard input and for a pairs CSV, beam search, the attention map, the held-out report
 * (the copy baseline's figures recomputed here from their definitions), and one-line errors (F of issue 16).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { commandFolder, expectOneLineError } from './command.js';

const { folder, weft } = commandFolder('weft-pairs-');
// Invented shelf codes: letters a–d with dashes, to be written upper case without the dashes.
const codes = Array.from({ length: 160 }, (_, i) => {
  const letters = Array.from({ length: 3 + (i % 4) }, (_, k) => 'abcd'[(i * 7 + k * 3 + Math.floor(i / 5)) % 4]);
  if (i % 3 !== 0) letters.splice(1 + (i % 2), 0, '-');
  return letters.join('');
});
writeFileSync(join(folder, 'codes.csv'), `${['source,target', ...codes.map((c) => `${c},${c.replace(/-/g, '').toUpperCase()}`)].join('\n')}\n`);

describe('weft on source/target pairs', () => {
  it('trains an encoder-decoder with attention from a pairs CSV (found by its columns) and reports it beside copying', () => {
    const trained = weft([
      'train',
      'codes.csv',
      '--hidden',
      '24',
      '--embedding',
      '8',
      '--epochs',
      '25',
      '--streams',
      '16',
      '--rate',
      '0.02',
      '--bidirectional',
      '--quiet',
    ]);
    expect(trained.err).toBe('');
    expect(trained.code).toBe(0);
    expect(trained.out).toMatch(/^test: 16 test pairs of codes\.csv, drawn at random \(seed 1\), used for neither training nor stopping$/m);
    expect(trained.out).toMatch(/^ {2}most frequent target +exact match [\d.]+%/m);
    expect(trained.out).toMatch(/^ {2}model +exact match [\d.]+% {2}token accuracy [\d.]+% {2}BLEU [\d.]+ {2}\(greedy decoding\)$/m);
    expect(trained.out).toMatch(/^ {2}copy +exact match 0\.0% {2}token accuracy [\d.]+% {2}BLEU [\d.]+ {2}\(the source itself as the output\)$/m);
    const file = JSON.parse(readFileSync(join(folder, 'codes.weft.json'), 'utf8')) as {
      model: { attention: string; encoder: { layers: { bidirectional: boolean }[] } };
      metadata: { task: string };
    };
    expect([file.model.attention, file.model.encoder.layers[0].bidirectional, file.metadata.task]).toEqual(['general', true, 'transduction']);
  });

  it('runs sources from standard input and from a pairs CSV, greedily and by beam search, and draws the attention map', () => {
    const run = weft(['run', 'codes.weft.json', '-', '--format', 'json'], 'ab-cd\nd-dab\n');
    expect(run.code).toBe(0);
    const rows = JSON.parse(run.out) as { source: string; output: string }[];
    expect(rows.map((r) => r.source)).toEqual(['ab-cd', 'd-dab']);
    for (const row of rows) expect(row.output).toMatch(/^[ABCD]*$/);
    const beam = weft(['run', 'codes.weft.json', 'codes.csv', '--beam', '3', '--attention-map', 'map.svg']);
    expect(beam.code).toBe(0);
    expect(beam.out.split('\n')[0]).toBe('source,output');
    expect(beam.out.trim().split('\n')).toHaveLength(161);
    const svg = readFileSync(join(folder, 'map.svg'), 'utf8');
    // The first source's characters label the columns.
    expect(svg).toMatch(/^<svg /);
    for (const c of codes[0]) expect(svg).toContain(`>${c}</text>`);
  });

  it('says in one line that an encoder-decoder does not convert to ONNX, naming the file', () => {
    const converted = weft(['convert', 'codes.weft.json']);
    expect(converted.code).toBe(1);
    expect(converted.err.trim()).toBe(
      'weft: codes.weft.json: an encoder-decoder; weft converts sequence models (one chain of layers) to ONNX, not encoder-decoders',
    );
  });

  it("scores the test part of the file trained on: the copy baseline's figures are those of its definitions", () => {
    const scored = weft(['score', 'codes.weft.json', 'codes.csv', '--format', 'json']);
    expect(scored.code).toBe(0);
    const report = JSON.parse(scored.out) as {
      metric: string;
      what: string;
      model: { transduction: { exactMatch: number } };
      baselines: { name: string; transduction: { exactMatch: number; tokenAccuracy: number } }[];
    };
    expect(report.metric).toBe('exact match');
    // The file trained on: only its test part is scored, the pairs training never saw.
    expect(report.what).toBe("16 pairs of codes.csv, the training run's test part");
    expect(report.baselines.map((b) => b.name)).toEqual(['copy', 'most frequent target']);
    expect(report.model.transduction.exactMatch).toBeGreaterThan(report.baselines[0].transduction.exactMatch);
    // Copying: every source letter is lower case and every target letter upper case, so no position matches.
    expect(report.baselines[0].transduction).toMatchObject({ exactMatch: 0, tokenAccuracy: 0 });
  });

  it('refuses an empty side, a target over the decoder limit and an unknown attention form in one line', () => {
    writeFileSync(join(folder, 'empty.csv'), 'source,target\nab,AB\ncd,\n');
    expectOneLineError(
      weft(['train', 'empty.csv']),
      1,
      /^weft: Bad data at empty\.csv:3:4: expected a target of at least one character, received an empty field$/,
    );
    expectOneLineError(
      weft(['train', 'codes.csv', '--max-target', '3', '--start-over']),
      1,
      /^weft: Bad data at codes\.csv:\d+:\d+: expected a target of at most 3 characters \(the decoder's limit, --max-target\), received \d+$/,
    );
    expectOneLineError(
      weft(['train', 'codes.csv', '--attention', 'cosine']),
      2,
      /^weft: --attention must be one of dot, general, additive, none, got "cosine"$/,
    );
    expectOneLineError(weft(['train', 'codes.csv', '--task', 'classify', '--reverse-source']), 2, /^weft: --reverse-source applies to --task pairs/);
    writeFileSync(join(folder, 'sources.csv'), 'source,note\nab-cd,first\n,second\n');
    expectOneLineError(
      weft(['run', 'codes.weft.json', 'sources.csv']),
      1,
      /^weft: Bad data at sources\.csv:3:1: expected a source of at least one token, received an empty field$/,
    );
  });

  it('refuses a source past 10,000 tokens at its line on either backend, and escapes control characters in CSV output', () => {
    const long = `ab\n${'a'.repeat(10_001)}\n`;
    for (const backend of ['javascript', 'webassembly']) {
      expectOneLineError(
        weft(['run', 'codes.weft.json', '-', '--backend', backend], long),
        1,
        /^weft: Bad data at <stdin>:2:1: expected a source of at most 10,000 characters \(weft's limit for an encoder-decoder's source\), received 10,001 characters$/,
      );
    }
    writeFileSync(join(folder, 'long.csv'), `source,target\nab,AB\n${'c'.repeat(10_001)},C\n`);
    expectOneLineError(weft(['score', 'codes.weft.json', 'long.csv']), 1, /^weft: Bad data at long\.csv:3:1: expected a source of at most 10,000 characters/);
    // A source holding ESC, BEL and NUL: the CSV shows them escaped (the terminal never receives them raw).
    const run = weft(['run', 'codes.weft.json', '-'], 'a\u001b[2Jb\u0007\u0000c\n');
    expect(run.code).toBe(0);
    expect(run.out.split('\n')[1]).toMatch(/^a\\u\{1b\}\[2Jb\\u\{7\}\\u\{0\}c,/);
    expect(run.out).not.toMatch(/[\u0000-\u0008\u001b]/);
  });
});
