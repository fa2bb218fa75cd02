/**
 * `weft run` and `weft score` for an encoder-decoder written by `weft train --task pairs`: sources in, outputs out
 * (greedy, or beam search with `--beam`), and held-out figures on a pairs file beside the copy baseline. `run` reads
 * one source per line, or a pairs CSV (a first line naming the model's source column); `--attention-map FILE.svg`
 * draws what attention looked at while writing the first output.
 */
import { readFileSync } from 'node:fs';
import { Random, fail } from '@weft/core';
import { parseTable } from '@weft/io';
import { fieldPath } from '@weft/io/internal';
import type { WeightFile } from '@weft/io';
import { writeFileAtomic } from '@weft/io/node';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';
import type { EncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';
import type { ParsedArgs } from './args.js';
import { numberFlag } from './args.js';
import { attentionMapSvg } from './attention-map.js';
import { chooseBackend } from './backend.js';
import { CommandError } from './errors.js';
import { cellPlansFrom } from './cell-module.js';
import { checkSourceLength, readPairs, textOf, tokensOf } from './pairs.js';
import { decodeText, sourceIds, transductionMeta, transductionReport } from './transduction.js';
import { csvCell } from './terminal.js';
import type { TransductionMeta } from './pairs.js';
import type { HeldOutReport } from './datasets.js';
import { scoredItems } from './scored-part.js';
import type { ScoredPart } from './scored-part.js';

async function open(file: WeightFile, args: ParsedArgs, path: string): Promise<{ runtime: EncoderDecoderRuntime; meta: TransductionMeta; beam: number }> {
  const runtime = await createEncoderDecoderRuntime(file, { backend: chooseBackend(args).name, plans: await cellPlansFrom(args) });
  const meta = transductionMeta(file.metadata, runtime, path);
  return { runtime, meta, beam: numberFlag(args, 'beam', 1, { whole: true, min: 1, max: 64 }) };
}

/** The sources of `text`: the source column of a pairs CSV whose header names it, else every non-empty line. */
function sourcesOf(text: string, name: string, meta: TransductionMeta): { sources: string[][]; lines: string[] } {
  const first = text.split(/\r?\n/, 1)[0].trim();
  if (
    first === meta.sourceColumn ||
    first
      .split(/[,\t;]/)
      .map((h) => h.trim())
      .includes(meta.sourceColumn)
  ) {
    const table = parseTable(text, { file: name });
    const at = table.header.indexOf(meta.sourceColumn);
    const lines = table.rows.map((r) => r.fields[at].trim());
    lines.forEach((line, r) => {
      if (line === '') fail('bad_data', fieldPath(table, r, at), 'a source of at least one token', 'an empty field');
    });
    const sources = lines.map((l) => tokensOf(l, meta.tokens));
    sources.forEach((source, r) => checkSourceLength(source.length, fieldPath(table, r, at), meta.tokens));
    return { sources, lines };
  }
  const numbered = text
    .split(/\r?\n/)
    .map((l, i) => ({ line: l.trim(), at: i + 1 }))
    .filter((l) => l.line !== '');
  const sources = numbered.map((l) => {
    const source = tokensOf(l.line, meta.tokens);
    checkSourceLength(source.length, `${name}:${l.at}:1`, meta.tokens);
    return source;
  });
  return { sources, lines: numbered.map((l) => l.line) };
}

/** `weft run` on a transduction model: each source's output, as CSV (source,output) or JSON. */
export async function runTransduction(
  file: WeightFile,
  args: ParsedArgs,
  modelPath: string,
  text: string,
  name: string,
  format: 'csv' | 'json',
): Promise<string> {
  const { runtime, meta, beam } = await open(file, args, modelPath);
  const { sources, lines } = sourcesOf(text, name, meta);
  if (sources.length === 0) throw new CommandError(`${name}: no sources to run (one per line, or a CSV with a ${JSON.stringify(meta.sourceColumn)} column)`);
  const unknown = sources.reduce((n, s) => n + sourceIds(s, meta.sourceVocabulary).unknown, 0);
  if (unknown > 0) process.stderr.write(`weft: ${unknown} ${meta.tokens} of ${name} are not in the model's source vocabulary; they are read as <unknown>\n`);
  const mapPath = args.flags.get('attention-map');
  if (mapPath !== undefined && runtime.attention === null) throw new CommandError(`--attention-map needs a model with attention; ${modelPath} has none`, 2);
  const records = sources.map((source, k) => {
    const decoded = decodeText(runtime, meta, source, k === 0 && mapPath !== undefined ? 1 : beam);
    if (k === 0 && mapPath !== undefined) {
      const weights = new Float32Array(decoded.attention.length * source.length);
      decoded.attention.forEach((row, t) => weights.set(row, t * source.length));
      // The last row is the end token's, when the output finished.
      const output = [...decoded.output, ...(decoded.attention.length > decoded.output.length ? ['<end>'] : [])];
      writeFileAtomic(mapPath, attentionMapSvg(source, output, weights, `attention while writing ${JSON.stringify(textOf(decoded.output, meta.tokens))}`));
    }
    return { source: lines[k], output: textOf(decoded.output, meta.tokens) };
  });
  if (format === 'json') return `${JSON.stringify(records, null, 2)}\n`;
  return `source,output\n${records.map((r) => `${csvCell(r.source)},${csvCell(r.output)}`).join('\n')}\n`;
}

/** `weft score` on a transduction model: exact match, token accuracy and BLEU on a pairs file, beside copying and the most frequent training target (recorded in the weight file). */
export async function scoreTransduction(file: WeightFile, args: ParsedArgs, modelPath: string, dataPath: string, part: ScoredPart): Promise<HeldOutReport> {
  const { runtime, meta, beam } = await open(file, args, modelPath);
  const pairs = readPairs(readFileSync(dataPath, 'utf8'), dataPath, {
    sourceColumn: meta.sourceColumn,
    targetColumn: meta.targetColumn,
    tokens: meta.tokens,
    maxTarget: Number.MAX_SAFE_INTEGER,
  });
  const recorded = file.metadata.mostFrequentTarget;
  const mostFrequent = Array.isArray(recorded) && recorded.every((t) => typeof t === 'string') ? (recorded as string[]) : null;
  // Every pair is scored, unless this is the file trained on: then the training run's own test part (or --test).
  const count = pairs.sources.length;
  const chosen =
    part.trainedOn || part.share !== undefined
      ? scoredItems(
          count,
          part,
          'pairs',
          { all: 'pairs', test: 'testPairs', fitted: ['trainingPairs', 'validationPairs'] },
          (seed) => new Random(`pairs:${seed}`),
        )
      : null;
  const keep = (_: unknown, i: number) => chosen === null || chosen.scored.has(i);
  const report = transductionReport(
    runtime,
    meta,
    pairs.sources.filter(keep),
    pairs.targets.filter(keep),
    `${chosen === null ? count : chosen.scored.size} pairs of ${dataPath}${chosen?.same ? ", the training run's test part" : ''}`,
    beam,
    mostFrequent,
  );
  return chosen?.warning ? { ...report, context: [chosen.warning] } : report;
}
