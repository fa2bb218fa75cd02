/**
 * Delimited text tables: CSV as RFC 4180 describes it (fields separated by a delimiter, optional double quotes
 * around a field, "" for a quote inside quotes, CRLF or LF line ends, a header row), with the delimiter given or
 * detected (a `.tsv` name means tabs; otherwise the header line's count of tabs, semicolons and commas outside
 * quotes decides), and a UTF-8 byte-order mark ignored. Every problem is a WeftError (`bad_data`) whose path is
 * `file:line:column`, the column counted in characters from 1, so an editor can jump to it.
 */
import { WeftError } from '@weft/core';

/** The field separators a table may use: comma, tab or semicolon. */
export type Delimiter = ',' | '\t' | ';';

/** One record of a table, with where each field was found. */
export interface TableRow {
  /** The fields as written (quotes removed). */
  readonly fields: readonly string[];
  /** The line the row starts on (1-based). */
  readonly line: number;
  /** The character column (1-based) where each field starts on its line. */
  readonly starts: readonly number[];
  /** The line each field starts on, where it differs from `line` (records spread over lines: JSON). */
  readonly lines?: readonly number[];
}

/** A delimited text table: its header and its records, with positions for errors. */
export interface Table {
  /** The name errors use for the text (a path, `<stdin>`, …). */
  readonly file: string;
  /** The separator used (given, or detected from the header line). */
  readonly delimiter: Delimiter;
  /** Column names, trimmed. */
  readonly header: readonly string[];
  /** The records after the header (blank lines skipped). */
  readonly rows: readonly TableRow[];
}

/** How `parseTable` reads a text. */
export interface TableOptions {
  /** The name errors use (default `<text>`); a name ending in `.tsv` means tab-separated unless `delimiter` says. */
  readonly file?: string;
  /** The delimiter, or `detect` (default). */
  readonly delimiter?: Delimiter | 'detect';
  /**
   * The header, when the text holds rows only (a chunk of a longer input whose header came earlier): every record
   * of the text is then a row.
   */
  readonly header?: readonly string[];
  /** The line number of the text's first line (default 1), for chunks of a longer input. */
  readonly firstLine?: number;
}

const NAMES: Record<Delimiter, string> = { ',': 'comma', '\t': 'tab', ';': 'semicolon' };

function problem(path: string, expected: string, received: string, detail?: string): WeftError {
  return new WeftError({ code: 'bad_data', path, expected, received, ...(detail === undefined ? {} : { detail }) });
}

/** The delimiter a table's text uses: tabs for a `.tsv` name, else the most frequent of tab, semicolon, comma in its header line. */
export function detectDelimiter(text: string, file = ''): Delimiter {
  if (/\.tsv$/i.test(file)) return '\t';
  const counts: Record<Delimiter, number> = { ',': 0, '\t': 0, ';': 0 };
  let quoted = false;
  for (let i = text.charCodeAt(0) === 0xfeff ? 1 : 0; i < text.length; i++) {
    const c = text[i];
    if (c === '"') quoted = !quoted;
    else if (!quoted && (c === '\n' || c === '\r')) break;
    else if (!quoted && (c === ',' || c === '\t' || c === ';')) counts[c]++;
  }
  if (counts['\t'] > 0 && counts['\t'] >= counts[','] && counts['\t'] >= counts[';']) return '\t';
  if (counts[';'] > counts[',']) return ';';
  return ',';
}

/** Parses a delimited table with a header row; every row must have the header's number of fields. */
export function parseTable(text: string, options: TableOptions = {}): Table {
  const file = options.file ?? '<text>';
  const delimiter = options.delimiter === undefined || options.delimiter === 'detect' ? detectDelimiter(text, file) : options.delimiter;
  const records = splitRecords(text, file, delimiter, options.firstLine ?? 1);
  if (records.length === 0 && options.header === undefined) throw problem(`${file}:1:1`, 'a header row', 'an empty text');
  const head = options.header === undefined ? records[0] : { fields: [...options.header], line: 0, starts: options.header.map((_, c) => c + 1), end: 0 };
  const rest = options.header === undefined ? records.slice(1) : records;
  const header = checkHeader(head, file);
  for (const row of rest) {
    if (row.fields.length !== header.length) {
      const where = row.fields.length > header.length ? row.starts[header.length] : row.end;
      throw problem(`${file}:${row.line}:${where}`, `${header.length} ${NAMES[delimiter]}-separated fields, as the header has`, `${row.fields.length}`);
    }
  }
  return { file, delimiter, header, rows: rest.map(({ fields: f, line: l, starts: s }) => ({ fields: f, line: l, starts: s })) };
}

/** One record as split: its fields, its line, each field's column and the column where the record ends. */
interface SplitRecord {
  fields: string[];
  line: number;
  starts: number[];
  end: number;
}

/** The header's names, trimmed: every one present and different from the others. */
function checkHeader(head: SplitRecord, file: string): string[] {
  const header = head.fields.map((h) => h.trim());
  const seen = new Map<string, number>();
  header.forEach((name, c) => {
    if (name === '') throw problem(`${file}:${head.line}:${head.starts[c]}`, 'a name for every column in the header', 'an empty name');
    const earlier = seen.get(name);
    if (earlier !== undefined)
      throw problem(`${file}:${head.line}:${head.starts[c]}`, 'column names that differ', `${JSON.stringify(name)} again (column ${earlier + 1} has it)`);
    seen.set(name, c);
  });
  return header;
}

/**
 * The text split into records of fields (RFC 4180 quoting: a field in quotes may hold delimiters, line ends and
 * doubled quotes), each with the line and columns where it stands; blank lines are skipped.
 */
function splitRecords(text: string, file: string, delimiter: Delimiter, firstLine: number): SplitRecord[] {
  const records: SplitRecord[] = [];
  let fields: string[] = [];
  let starts: number[] = [];
  let field = '';
  let quoted = false;
  let line = firstLine;
  let recordLine = line;
  let column = 1;
  let fieldStart = 1;
  let fieldStartedQuoted = false;
  let i = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  for (; i < text.length; i++) {
    const c = text[i];
    if (quoted) {
      if (c === '"') {
        if (text[i + 1] === '"') {
          field += '"';
          i++;
          column++;
        } else {
          quoted = false;
        }
      } else {
        if (c === '\n') {
          line++;
          column = 0;
        }
        field += c;
      }
    } else if (c === '"') {
      if (field !== '' || fieldStartedQuoted)
        throw problem(`${file}:${line}:${column}`, 'a quote only at the start of a field (or doubled inside quotes)', 'a quote inside an unquoted field');
      quoted = true;
      fieldStartedQuoted = true;
    } else if (c === delimiter) {
      fields.push(field);
      starts.push(fieldStart);
      field = '';
      fieldStartedQuoted = false;
      fieldStart = column + 1;
    } else if (c === '\n' || c === '\r') {
      if (c === '\r' && text[i + 1] === '\n') i++;
      fields.push(field);
      starts.push(fieldStart);
      if (!(fields.length === 1 && fields[0] === '' && !fieldStartedQuoted)) records.push({ fields, line: recordLine, starts, end: column });
      fields = [];
      starts = [];
      field = '';
      fieldStartedQuoted = false;
      line++;
      recordLine = line;
      column = 0;
      fieldStart = 1;
    } else {
      if (fieldStartedQuoted) throw problem(`${file}:${line}:${column}`, `a ${NAMES[delimiter]} or a line end after a closing quote`, JSON.stringify(c));
      field += c;
    }
    column++;
  }
  if (quoted) throw problem(`${file}:${line}:${column}`, 'a closing quote', 'the end of the text inside a quoted field');
  if (field !== '' || fields.length > 0 || fieldStartedQuoted) {
    fields.push(field);
    starts.push(fieldStart);
    records.push({ fields, line: recordLine, starts, end: column });
  }
  return records;
}

/** A decimal number as written in data files: digits, an optional point and exponent (no hex, no words). */
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** The text as a finite decimal number, or NaN (`0x10`, `Infinity`, `NaN`, `n/a`, `1e999` and '' are not). */
export function decimal(text: string): number {
  const trimmed = text.trim();
  if (!DECIMAL.test(trimmed)) return NaN;
  const value = Number(trimmed);
  return Number.isFinite(value) ? value : NaN;
}

/** Where a field is: `file:line:column`. */
export function fieldPath(table: Table, row: number, column: number): string {
  const r = table.rows[row];
  return `${table.file}:${r.lines?.[column] ?? r.line}:${r.starts[column]}`;
}

/** The field as a finite decimal number, or a `bad_data` error at its `file:line:column`. */
export function numberAt(table: Table, row: number, column: number): number {
  const text = table.rows[row].fields[column].trim();
  const value = decimal(text);
  if (Number.isNaN(value)) {
    throw problem(fieldPath(table, row, column), `a decimal number in column ${JSON.stringify(table.header[column])}`, JSON.stringify(text.slice(0, 80)));
  }
  return value;
}

/** The index of the column named `name`, or an error naming the file, the purpose and the columns there are. */
export function columnNamed(table: Table, name: string, purpose: string): number {
  const at = table.header.indexOf(name);
  if (at < 0) {
    const head = table.header.join(', ');
    throw problem(
      `${table.file}:1:1`,
      `a column named ${JSON.stringify(name)} (${purpose})`,
      `the columns ${head.length > 300 ? `${head.slice(0, 300)}…` : head}`,
    );
  }
  return at;
}

/**
 * Mean and standard deviation of each column of `values` (rows × columns; NaN, a missing value, is left out),
 * computed on values scaled by the column's largest magnitude so that neither the sums nor the squares overflow,
 * whatever the data's size. A constant column gets deviation 1 (so normalising it gives zeros, not NaN), and so does
 * a column with no value (mean 0).
 */
export function columnStatistics(
  values: readonly (readonly number[])[],
  columns: number,
): {
  /** Each column's mean. */
  mean: number[];
  /** Each column's standard deviation. */
  deviation: number[];
} {
  const mean: number[] = [];
  const deviation: number[] = [];
  for (let j = 0; j < columns; j++) {
    let scale = 0;
    let n = 0;
    for (const row of values) {
      if (Number.isNaN(row[j])) continue;
      scale = Math.max(scale, Math.abs(row[j]));
      n++;
    }
    if (scale === 0) {
      mean.push(0);
      deviation.push(1);
      continue;
    }
    let m = 0;
    for (const row of values) if (!Number.isNaN(row[j])) m += row[j] / scale;
    m /= n;
    let squares = 0;
    for (const row of values) if (!Number.isNaN(row[j])) squares += (row[j] / scale - m) ** 2;
    const d = Math.sqrt(squares / n) * scale;
    mean.push(m * scale);
    deviation.push(d > 0 && Number.isFinite(d) ? d : 1);
  }
  return { mean, deviation };
}
