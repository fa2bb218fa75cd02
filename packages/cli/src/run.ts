/**
 * `weft run`: a weight file applied to new data, through the inference runtime. What it reads and writes follows
 * the model's task (from the file's metadata):
 * - forecast: a CSV with the model's columns → for each row, the forecast of the target columns `horizon` rows on;
 * - next-token: text → for each position, the most likely next token and the probability it had;
 * - classification: a CSV with the sequence column → for each row, the predicted class and each class's probability.
 */
import { existsSync, readFileSync } from 'node:fs';
import { loadWeightFile, writeFileAtomic } from '@weft/io/node';
import { createRuntime } from '@weft/io/runtime';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag } from './args.js';
import { numberAt, parseCsv } from './csv.js';
import { UNKNOWN, tokenize } from './datasets.js';
import { backendFlag, chooseBackend } from './backend.js';
import { CommandError } from './errors.js';

export const runFlags: FlagSpec[] = [
  { name: 'format', value: 'csv|json', description: 'output format', fallback: 'csv' },
  { name: 'out', value: 'FILE', description: 'write here instead of standard output' },
  backendFlag,
  { name: 'debug', switch: true, description: 'show stack traces' },
];

function softmax(row: ArrayLike<number>): number[] {
  const max = Math.max(...Array.from(row));
  const e = Array.from(row, (z) => Math.exp(z - max));
  const total = e.reduce((s, v) => s + v, 0);
  return e.map((v) => v / total);
}

function readInput(path: string | undefined): { text: string; name: string } {
  if (path === undefined || path === '-') return { text: readFileSync(0, 'utf8'), name: '<stdin>' };
  if (!existsSync(path)) throw new CommandError(`${path}: no such file`);
  return { text: readFileSync(path, 'utf8'), name: path };
}

export async function runModel(args: ParsedArgs): Promise<string | null> {
  const [modelPath, dataPath] = args.positional;
  if (modelPath === undefined) throw new CommandError('weft run needs a weight file and data (see weft run --help)', 2);
  const format = choiceFlag(args, 'format', ['csv', 'json'] as const, 'csv');
  const file = await loadWeightFile(modelPath);
  const runtime = await createRuntime(file, { backend: chooseBackend(args).name });
  const meta = file.metadata as Record<string, unknown>;
  const { text, name } = readInput(dataPath);
  let records: Record<string, string | number>[];
  if (meta.task === 'forecast') {
    const table = parseCsv(text, name);
    const columns = meta.columns as string[];
    const targets = meta.targetColumns as string[];
    const { mean, deviation } = meta.normalisation as { mean: number[]; deviation: number[] };
    const at = columns.map((c) => {
      const i = table.header.indexOf(c);
      if (i < 0) throw new CommandError(`${name}: no column ${JSON.stringify(c)}, which the model reads (it needs ${columns.join(', ')})`);
      return i;
    });
    const streams = runtime.streams(1);
    const input = new Float32Array(columns.length);
    const targetIndexes = targets.map((t) => columns.indexOf(t));
    records = table.rows.map((_, r) => {
      at.forEach((c, j) => (input[j] = (numberAt(table, r, c, name) - mean[j]) / deviation[j]));
      const out = streams.step(input);
      const record: Record<string, string | number> = { row: r + 1 };
      targetIndexes.forEach((j, k) => (record[`${targets[k]} in ${String(meta.horizon)}`] = Number((out[k] * deviation[j] + mean[j]).toPrecision(6))));
      return record;
    });
  } else if (meta.task === 'next-token') {
    const vocabulary = meta.vocabulary as string[];
    const index = new Map(vocabulary.map((v, i) => [v, i]));
    const pieces = tokenize(text, meta.tokens === 'words' ? 'words' : 'characters');
    const streams = runtime.streams(1);
    const token = new Int32Array(1);
    records = pieces.map((piece, p) => {
      token[0] = index.get(piece) ?? index.get(UNKNOWN) ?? 0;
      const probabilities = softmax(streams.step(token));
      const best = probabilities.indexOf(Math.max(...probabilities));
      const actual = p + 1 < pieces.length ? (index.get(pieces[p + 1]) ?? 0) : -1;
      return { position: p + 1, token: piece, 'most likely next': vocabulary[best], probability: Number(probabilities[best].toPrecision(4)), 'probability of actual next': actual < 0 ? '' : Number(probabilities[actual].toPrecision(4)) };
    });
  } else if (meta.task === 'classification') {
    const table = parseCsv(text, name);
    const column = table.header.indexOf(String(meta.sequenceColumn ?? 'sequence'));
    if (column < 0) throw new CommandError(`${name}: no column ${JSON.stringify(meta.sequenceColumn ?? 'sequence')} with the sequences`);
    const classes = meta.classes as string[];
    const vocabulary = meta.vocabulary as string[] | undefined;
    const index = new Map((vocabulary ?? []).map((v, i) => [v, i]));
    const norm = meta.normalisation as { mean: number[]; deviation: number[] } | undefined;
    records = table.rows.map((row, r) => {
      const items = row.fields[column].trim().split(/\s+/).filter((s) => s !== '');
      if (items.length === 0) throw new CommandError(`${name}:${row.line}:${column + 1}: an empty sequence`);
      const values = vocabulary !== undefined && vocabulary.length > 0
        ? Int32Array.from(items, (s) => index.get(s) ?? 0)
        : Float32Array.from(items, (s, k) => {
            const v = Number(s);
            if (!Number.isFinite(v)) throw new CommandError(`${name}:${row.line}:${column + 1}: item ${k + 1} ${JSON.stringify(s)} is not a number`);
            return (v - (norm?.mean[0] ?? 0)) / (norm?.deviation[0] ?? 1);
          });
      const out = runtime.run(values, items.length, 1);
      const probabilities = softmax(out.subarray((items.length - 1) * classes.length, items.length * classes.length));
      const best = probabilities.indexOf(Math.max(...probabilities));
      const record: Record<string, string | number> = { row: r + 1, predicted: classes[best] };
      classes.forEach((c, k) => (record[`p(${c})`] = Number(probabilities[k].toPrecision(4))));
      return record;
    });
  } else {
    throw new CommandError(`${modelPath}: its metadata names no task weft run knows (${JSON.stringify(meta.task)}); expected forecast, next-token or classification`);
  }
  const output = format === 'json' ? JSON.stringify(records, null, 2) + '\n' : toCsv(records);
  const outPath = args.flags.get('out');
  if (outPath === undefined) return output;
  writeFileAtomic(outPath, output);
  return null;
}

function toCsv(records: Record<string, string | number>[]): string {
  if (records.length === 0) return '';
  const header = Object.keys(records[0]);
  const cell = (v: string | number) => (typeof v === 'string' && /[",\n\r]/.test(v) ? `"${v.replace(/"/g, '""')}"` : String(v));
  return [header.map(cell).join(','), ...records.map((r) => header.map((h) => cell(r[h])).join(','))].join('\n') + '\n';
}
