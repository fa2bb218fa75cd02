/**
 * `weft run`: a weight file applied to new data, through the inference runtime and the metadata's translator
 * (`@weft/io` createTranslator: the normalisation and vocabulary training recorded). What it reads and writes
 * follows the model's task:
 * - forecast: a CSV/TSV with the model's columns → for each row, the forecast of the target columns `horizon`
 *   rows on, in real units, with any `--keep` columns (a date, an id) carried through;
 * - next-token: text → for each position, the most likely next token and the probability it had;
 * - classification: a CSV with the sequence column → for each row, the predicted class and each class's probability;
 * - an encoder-decoder (pairs): one source per line → its output (transduce.ts).
 * A table read from standard input (`-`) is read line by line and each output row is written as soon as its input
 * row has arrived, so `tail -f readings.csv | weft run MODEL -` forecasts as readings come in.
 */
import { fail, indexOfLargest } from '@weft/core';
import { isEncoderDecoder } from '@weft/cells';
import { createReadStream, existsSync, readFileSync } from 'node:fs';
import { createTranslator, isJsonRecords, parseTable, readTable } from '@weft/io';
import { fieldPath } from '@weft/io/internal';
import type { Table } from '@weft/io';
import { loadWeightFile, writeFileAtomic } from '@weft/io/node';
import { createRuntime } from '@weft/io/runtime';
import type { Runtime } from '@weft/io/runtime';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag, numberFlag } from './args.js';
import { backendFlag, chooseBackend } from './backend.js';
import { CommandError } from './errors.js';
import { cellModuleFlags, cellPlansFrom } from './cell-module.js';
import { classifyStepTable } from './score.js';
import { columnsAt, rowForecasts, seriesForecasts } from './run-forecasts.js';
import { boundedLines, tableRecords } from './stream-table.js';
import type { EachRow, OutputRecord } from './run-forecasts.js';
import { runTransduction } from './transduce.js';
import { forecastSvg } from './forecast-plot.js';
import { basename } from 'node:path';
import { utf8Text } from './text-bytes.js';
import { csvCell } from './terminal.js';

export const runFlags: FlagSpec[] = [
  ...cellModuleFlags,
  { name: 'format', value: 'csv|json', description: 'output format', fallback: 'csv' },
  { name: 'keep', value: 'A,B', description: 'input columns to carry through to each output row (forecast, classify), such as a date' },
  {
    name: 'ahead',
    value: 'ROWS',
    description:
      'after the last row, forecast this many rows more: from the last row by a model forecasting every row up to its horizon at once (weft train --horizon on sliding windows), else each from the forecast before it (a model forecasting every column 1 row ahead)',
  },
  { name: 'beam', value: 'WIDTH', description: 'beam search of this width instead of greedy decoding (pairs)', fallback: '1' },
  { name: 'attention-map', value: 'FILE.svg', description: 'draw the attention weights of the first output (pairs, with attention)' },
  {
    name: 'plot',
    value: 'FILE.svg',
    description: "draw each series' values, the forecasts made for them and the band of the prediction intervals (forecast; the last 240 rows of each series)",
  },
  { name: 'out', value: 'FILE', description: 'write here instead of standard output' },
  backendFlag,
  { name: 'debug', switch: true, description: 'show stack traces' },
];

function softmax(row: ArrayLike<number>): number[] {
  let max = -Infinity;
  for (let i = 0; i < row.length; i++) max = Math.max(max, row[i]);
  const e = Array.from(row, (z) => Math.exp(z - max));
  const total = e.reduce((s, v) => s + v, 0);
  return e.map((v) => v / total);
}

/** Where output rows go: written as they come (CSV to a stream), or gathered (JSON, or a file written at the end). */
class Output {
  private header: string[] | null = null;
  private readonly gathered: OutputRecord[] = [];
  private readonly chunks: string[] = [];

  constructor(
    private readonly format: 'csv' | 'json',
    private readonly write: ((text: string) => void) | null,
  ) {}

  add(record: OutputRecord): void {
    if (this.format === 'json') {
      this.gathered.push(record);
      return;
    }
    let text = '';
    if (this.header === null) {
      this.header = Object.keys(record);
      text += `${this.header.map(csvCell).join(',')}\n`;
    }
    text += `${this.header.map((h) => csvCell(record[h] ?? '')).join(',')}\n`;
    if (this.write !== null) this.write(text);
    else this.chunks.push(text);
  }

  /** What remains to be written (JSON, or everything when writing to a file). */
  finish(): string {
    if (this.format === 'json') return `${JSON.stringify(this.gathered, null, 2)}\n`;
    return this.chunks.join('');
  }
}

/** Runs the model on the input; returns what is left to print (null when written to --out or already written). */
export async function runModel(args: ParsedArgs, write: (text: string) => void = (text) => void process.stdout.write(text)): Promise<string | null> {
  const [modelPath, dataPath] = args.positional;
  if (modelPath === undefined) throw new CommandError('weft run needs a weight file and data (see weft run --help)', 2);
  if (args.positional.length > 2) throw new CommandError(`weft run takes a weight file and one data file, got ${args.positional.length} arguments`, 2);
  const format = choiceFlag(args, 'format', ['csv', 'json'] as const, 'csv');
  const plans = await cellPlansFrom(args);
  const file = await loadWeightFile(modelPath, { plans });
  const fromStdin = dataPath === undefined || dataPath === '-';
  const name = fromStdin ? '<stdin>' : dataPath;
  if (!fromStdin && !existsSync(dataPath)) throw new CommandError(`${dataPath}: no such file`);
  const outPath = args.flags.get('out');
  if (isEncoderDecoder(file.model)) {
    const text = await runTransduction(file, args, modelPath, utf8Text(fromStdin ? readFileSync(0) : readFileSync(dataPath), name), name, format);
    if (outPath === undefined) return text;
    writeFileAtomic(outPath, text);
    return null;
  }
  for (const flag of ['beam', 'attention-map'])
    if (args.flags.has(flag)) throw new CommandError(`--${flag} applies to encoder-decoders (weft train --task pairs); ${modelPath} is a sequence model`, 2);
  const runtime = await createRuntime(file, { backend: chooseBackend(args).name, plans });
  const meta = file.metadata as Record<string, unknown>;
  const output = new Output(format, outPath === undefined ? write : null);
  const keep =
    args.flags
      .get('keep')
      ?.split(',')
      .map((s) => s.trim())
      .filter((s) => s !== '') ?? [];
  if (keep.length > 0 && meta.task === 'next-token') throw new CommandError('--keep carries columns of a table; a next-token model reads text', 2);

  const input: RunInput = { name, dataPath, fromStdin, modelPath, keep, output };
  if (meta.task === 'classification' && typeof meta.idColumn === 'string') classifyLongTable(runtime, meta, input);
  else if (meta.task === 'forecast' || meta.task === 'classification') await runRows(runtime, meta, input, args);
  else if (meta.task === 'next-token') nextTokens(runtime, meta, input);
  else {
    throw new CommandError(
      `${modelPath}: its metadata names no task weft run knows (${JSON.stringify(meta.task)}); expected forecast, next-token or classification`,
    );
  }
  const rest = output.finish();
  if (outPath !== undefined) {
    writeFileAtomic(outPath, rest);
    return null;
  }
  return rest === '' ? null : rest;
}

/** Where weft run reads and writes: the data's name and path (or stdin), the model's path, the --keep columns and the output. */
interface RunInput {
  readonly name: string;
  readonly dataPath: string;
  readonly fromStdin: boolean;
  readonly modelPath: string;
  readonly keep: readonly string[];
  readonly output: Output;
}

/** The whole input as text (strict UTF-8). */
function readInput({ fromStdin, dataPath, name }: RunInput): string {
  return utf8Text(fromStdin ? readFileSync(0) : readFileSync(dataPath), name);
}

/** A long table of labelled steps: a sequence is complete only when the whole input has been read (its rows need not be adjacent). */
function classifyLongTable(runtime: Runtime, meta: Record<string, unknown>, input: RunInput): void {
  const { name, keep, output } = input;
  const table = parseTable(readInput(input), { file: name });
  const classes = createTranslator(meta).outputNames;
  const kept = keep.map((c) => {
    const i = table.header.indexOf(c);
    if (i < 0) throw new CommandError(`${name}: no column ${JSON.stringify(c)} (for --keep); the input has ${table.header.join(', ')}`);
    return i;
  });
  // Each sequence's first row, by line, for the --keep columns (one lookup table, not a search per sequence).
  const rowAtLine = new Map(table.rows.map((r) => [r.line, r]));
  for (const result of classifyStepTable(runtime, meta, table)) {
    const first = rowAtLine.get(result.line);
    const record: OutputRecord = { [String(meta.idColumn)]: result.id };
    kept.forEach((c) => (record[table.header[c]] = first?.fields[c] ?? ''));
    record.predicted = classes[indexOfLargest(result.probabilities)];
    classes.forEach((c, k) => (record[`p(${c})`] = Number(result.probabilities[k].toPrecision(4))));
    output.add(record);
  }
}

/** Forecasts (one per row, then --ahead past the end) or classes of sequences, row by row as the input streams in. */
async function runRows(runtime: Runtime, meta: Record<string, unknown>, input: RunInput, args: ParsedArgs): Promise<void> {
  const { name, dataPath, fromStdin, modelPath, keep, output } = input;
  const ahead = args.flags.has('ahead') ? numberFlag(args, 'ahead', 1, { whole: true, min: 1, max: 100000 }) : 0;
  if (ahead > 0 && meta.task !== 'forecast') throw new CommandError('--ahead needs a forecast model', 2);
  const plot = args.flags.get('plot');
  if (plot !== undefined && meta.task !== 'forecast') throw new CommandError('--plot draws forecasts: it needs a forecast model', 2);
  const forecast =
    meta.task !== 'forecast'
      ? null
      : meta.panel !== undefined
        ? seriesForecasts(runtime, meta, name, keep, ahead > 0, plot !== undefined)
        : rowForecasts(runtime, meta, name, keep, ahead > 0, plot === undefined ? null : '');
  if (forecast !== null && ahead > 0) forecast.checkAhead(ahead);
  const each = forecast?.each ?? classifier(runtime, meta, name, keep);
  let row = 0;
  // JSON records are read whole (a record may span lines), then given row by row as a table is.
  const records =
    fromStdin || !isJsonRecords('', dataPath)
      ? tableRecords(boundedLines(fromStdin ? process.stdin : createReadStream(dataPath), name), name)
      : jsonRows(readTable(utf8Text(readFileSync(dataPath), name), name));
  for await (const table of records) each(table, ++row, (record) => output.add(record));
  if (forecast !== null && ahead > 0) {
    if (row === 0) throw new CommandError(`${name}: no rows to forecast ahead from`);
    forecast.ahead(row, ahead, (record) => output.add(record));
  }
  if (forecast !== null && plot !== undefined)
    writeFileAtomic(plot, forecastSvg(forecast.traces(), `weft run ${basename(modelPath)} on ${basename(name)}`, forecast.level));
}

/** The next-token model's most likely next token and the actual one's probability, at every position of the text. */
function nextTokens(runtime: Runtime, meta: Record<string, unknown>, input: RunInput): void {
  const { name, output } = input;
  const text = readInput(input);
  const translator = createTranslator(meta);
  const { ids, pieces, unknown } = translator.tokenIds(text);
  if (unknown > 0)
    process.stderr.write(
      `weft: ${unknown} of ${pieces.length} ${meta.tokens === 'words' ? 'words' : 'characters'} of ${name} are not in the model's vocabulary; they are read as ${translator.tokenText(0)}\n`,
    );
  const streams = runtime.streams(1);
  const token = new Int32Array(1);
  pieces.forEach((piece, p) => {
    token[0] = ids[p];
    const probabilities = softmax(streams.step(token));
    const best = indexOfLargest(probabilities);
    const actual = p + 1 < pieces.length ? ids[p + 1] : -1;
    output.add({
      position: p + 1,
      token: piece,
      'most likely next': translator.tokenText(best),
      probability: Number(probabilities[best].toPrecision(4)),
      'probability of actual next': actual < 0 ? '' : Number(probabilities[actual].toPrecision(4)),
    });
  });
}

/** A table's rows one at a time, each as a table of that row alone (how tableRecords gives them). */
function* jsonRows(table: Table): Generator<Table> {
  for (const row of table.rows) yield { ...table, rows: [row] };
}

function classifier(runtime: Runtime, meta: Record<string, unknown>, name: string, keep: readonly string[]): EachRow {
  const translator = createTranslator(meta);
  const classes = translator.outputNames;
  const sequenceColumn = String(meta.sequenceColumn ?? 'sequence');
  const tokens = Array.isArray(meta.vocabulary) && meta.vocabulary.length > 0;
  const norm = meta.normalisation as { mean: number[]; deviation: number[] } | undefined;
  let column = -1;
  let kept: number[] = [];
  return (table, row, emit) => {
    if (row === 1) {
      [column] = columnsAt(table, [sequenceColumn], name, 'the sequences');
      kept = columnsAt(table, keep, name, 'for --keep');
    }
    const r = table.rows[0];
    const items = r.fields[column]
      .trim()
      .split(/\s+/)
      .filter((s) => s !== '');
    if (items.length === 0) fail('bad_data', fieldPath(table, 0, column), 'a sequence of at least one item', 'an empty field');
    const values = tokens
      ? translator.tokenIds(items.join(' ')).ids
      : Float32Array.from(items, (s, k) => {
          const v = Number(s);
          if (!Number.isFinite(v)) throw new CommandError(`${fieldPath(table, 0, column)}: item ${k + 1} ${JSON.stringify(s.slice(0, 80))} is not a number`);
          return (v - (norm?.mean[0] ?? 0)) / (norm?.deviation[0] ?? 1);
        });
    const out = runtime.run(values, items.length, 1);
    const probabilities = softmax(out.subarray((items.length - 1) * classes.length, items.length * classes.length));
    const best = indexOfLargest(probabilities);
    const record: OutputRecord = { row };
    kept.forEach((c) => (record[table.header[c]] = r.fields[c]));
    record.predicted = classes[best];
    classes.forEach((c, k) => (record[`p(${c})`] = Number(probabilities[k].toPrecision(4))));
    emit(record);
  };
}
