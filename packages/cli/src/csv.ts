/**
 * CSV as RFC 4180 describes it: comma-separated fields, optional double quotes around a field, "" for a quote
 * inside quotes, CRLF or LF line ends, a header row. Every problem names the file, line and column.
 */
import { CommandError } from './errors.js';

export interface Table {
  readonly header: string[];
  /** Rows of fields, each with the line it started on. */
  readonly rows: { readonly fields: string[]; readonly line: number }[];
}

export function parseCsv(text: string, file: string): Table {
  const records: { fields: string[]; line: number }[] = [];
  let fields: string[] = [];
  let field = '';
  let quoted = false;
  let line = 1;
  let recordLine = 1;
  let column = 1;
  let fieldStartedQuoted = false;
  for (let i = 0; i < text.length; i++) {
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
      if (field !== '' || fieldStartedQuoted) throw new CommandError(`${file}:${line}:${column}: a quote inside an unquoted field`);
      quoted = true;
      fieldStartedQuoted = true;
    } else if (c === ',') {
      fields.push(field);
      field = '';
      fieldStartedQuoted = false;
    } else if (c === '\n' || c === '\r') {
      if (c === '\r' && text[i + 1] === '\n') i++;
      fields.push(field);
      if (!(fields.length === 1 && fields[0] === '' && !fieldStartedQuoted)) records.push({ fields, line: recordLine });
      fields = [];
      field = '';
      fieldStartedQuoted = false;
      line++;
      recordLine = line;
      column = 0;
    } else {
      if (fieldStartedQuoted) throw new CommandError(`${file}:${line}:${column}: text after a closing quote`);
      field += c;
    }
    column++;
  }
  if (quoted) throw new CommandError(`${file}:${line}:${column}: a quoted field is not closed`);
  if (field !== '' || fields.length > 0 || fieldStartedQuoted) {
    fields.push(field);
    records.push({ fields, line: recordLine });
  }
  if (records.length === 0) throw new CommandError(`${file}: no header row (the file is empty)`);
  const [head, ...rows] = records;
  const header = head.fields.map((h) => h.trim());
  for (const row of rows) {
    if (row.fields.length !== header.length) {
      throw new CommandError(`${file}:${row.line}: ${row.fields.length} fields where the header has ${header.length}`);
    }
  }
  return { header, rows };
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

/** The field as a finite decimal number, or an error naming file, line and column (1-based field number). */
export function numberAt(table: Table, row: number, column: number, file: string): number {
  const text = table.rows[row].fields[column].trim();
  const value = decimal(text);
  if (Number.isNaN(value)) {
    throw new CommandError(`${file}:${table.rows[row].line}:${column + 1}: ${JSON.stringify(text.slice(0, 80))} in column "${table.header[column]}" is not a decimal number`);
  }
  return value;
}

/**
 * Mean and standard deviation of each column of `values` (rows × columns, finite), computed on values scaled by
 * the column's largest magnitude so that neither the sums nor the squares overflow, whatever the data's size.
 */
export function columnStatistics(values: readonly (readonly number[])[], columns: number): { mean: number[]; deviation: number[] } {
  const mean: number[] = [];
  const deviation: number[] = [];
  for (let j = 0; j < columns; j++) {
    let scale = 0;
    for (const row of values) scale = Math.max(scale, Math.abs(row[j]));
    if (scale === 0) {
      mean.push(0);
      deviation.push(1);
      continue;
    }
    let m = 0;
    for (const row of values) m += row[j] / scale;
    m /= values.length;
    let squares = 0;
    for (const row of values) squares += (row[j] / scale - m) ** 2;
    const d = Math.sqrt(squares / values.length) * scale;
    mean.push(m * scale);
    deviation.push(d > 0 && Number.isFinite(d) ? d : 1);
  }
  return { mean, deviation };
}
