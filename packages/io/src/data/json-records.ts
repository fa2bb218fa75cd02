/**
 * JSON records read as a table: a JSON text (RFC 8259) that is an array of objects whose values are strings,
 * numbers, booleans or null, one row per object. The header is every key in order of first appearance; a key an
 * object lacks, or a null, is an empty (missing) cell; a number keeps the text it was written with. Each row and
 * field keeps the line and column where it stands in the file, so errors downstream name `file:line:column` as
 * they do for CSV. Anything else (not an array, a nested value, a syntax error) is a one-line error at its place.
 */
import { WeftError } from '@weft/core';
import type { Table, TableRow } from './table.js';
import { parseTable } from './table.js';

/** True when a text is to be read as JSON records: a name ending in `.json`, or a text whose first character (after spaces) is `[`. */
export function isJsonRecords(text: string, file: string): boolean {
  return /\.json$/i.test(file) || /^\uFEFF?\s*\[/.test(text);
}

/** A table from CSV/TSV text, or from JSON records (see isJsonRecords). */
export function readTable(text: string, file: string): Table {
  return isJsonRecords(text, file) ? parseJsonRecords(text, file) : parseTable(text, { file });
}

/** Parses a JSON array of flat objects as a table (see the file's comment). */
export function parseJsonRecords(text: string, file = '<text>'): Table {
  const reader = new RecordReader(text, file);
  const records = reader.array();
  const header = reader.header;
  if (records.length === 0 || header.length === 0) throw reader.problem(0, 'at least one record with at least one value', 'an empty array or empty records');
  // A key a record lacks is an empty cell placed at the record's start.
  const rows: TableRow[] = records.map((r) => ({
    line: r.line,
    fields: header.map((_, c) => r.cells.get(c)?.[0] ?? ''),
    starts: header.map((_, c) => r.cells.get(c)?.[1] ?? r.column),
    lines: header.map((_, c) => r.cells.get(c)?.[2] ?? r.line),
  }));
  return { file, delimiter: ',', header, rows };
}

/** One record as read: each column's cell text, column and line, and where the record starts. */
interface RecordRead {
  readonly cells: Map<number, [string, number, number]>;
  readonly line: number;
  readonly column: number;
}

/** A reader of the JSON text, keeping the line and column of every place it stands. */
class RecordReader {
  /** Every key, in order of first appearance. */
  readonly header: string[] = [];
  private readonly columnOf = new Map<string, number>();
  private i: number;
  private line = 1;
  private lineStart: number;

  constructor(
    private readonly text: string,
    private readonly file: string,
  ) {
    this.i = text.charCodeAt(0) === 0xfeff ? 1 : 0;
    this.lineStart = this.i;
  }

  /** An error at offset `at`, named `file:line:column`. */
  problem(at: number, expected: string, received: string): WeftError {
    return new WeftError({ code: 'bad_data', path: `${this.file}:${this.line}:${at - this.lineStart + 1}`, expected, received });
  }

  /** The whole text: an array of records and nothing after it. */
  array(): RecordRead[] {
    const records: RecordRead[] = [];
    this.expect('[', 'a JSON array of records ([{"name": value, …}, …])');
    this.space();
    if (this.text[this.i] === ']') this.i++;
    else {
      for (;;) {
        records.push(this.record(records.length + 1));
        if (!this.more(']', 'a comma or the end of the array (])')) break;
      }
    }
    this.space();
    if (this.i < this.text.length) throw this.problem(this.i, 'nothing after the array', this.shown(this.i));
    return records;
  }

  /** Record number `item`: an object of flat values, each key once. */
  private record(item: number): RecordRead {
    this.space();
    if (this.text[this.i] !== '{') throw this.problem(this.i, `a record (an object) as item ${item} of the array`, this.shown(this.i));
    const record: RecordRead = { cells: new Map(), line: this.line, column: this.i - this.lineStart + 1 };
    this.i++;
    this.space();
    if (this.text[this.i] === '}') {
      this.i++;
      return record;
    }
    for (;;) {
      this.space();
      if (this.text[this.i] !== '"') throw this.problem(this.i, 'a key in quotes', this.shown(this.i));
      const keyAt = this.i;
      const key = this.string();
      this.expect(':', `a colon after the key ${JSON.stringify(key)}`);
      this.space();
      const column = this.i - this.lineStart + 1;
      const valueLine = this.line;
      const cell = this.value(key);
      const c = this.columnFor(key);
      if (record.cells.has(c)) throw this.problem(keyAt, 'each key once in a record', `${JSON.stringify(key)} again`);
      record.cells.set(c, [cell, column, valueLine]);
      if (!this.more('}', 'a comma or the end of the record (})')) return record;
    }
  }

  /** After an item: true past a comma (another follows), false past `close`. */
  private more(close: string, what: string): boolean {
    this.space();
    if (this.text[this.i] === ',') {
      this.i++;
      return true;
    }
    this.expect(close, what);
    return false;
  }

  /** The column of `key`, a new one at its first appearance. */
  private columnFor(key: string): number {
    let c = this.columnOf.get(key);
    if (c === undefined) {
      c = this.header.length;
      this.columnOf.set(key, c);
      this.header.push(key);
    }
    return c;
  }

  private shown(at: number): string {
    return at >= this.text.length ? 'the end of the text' : JSON.stringify(this.text.slice(at, at + 20));
  }

  private space(): void {
    const text = this.text;
    for (; this.i < text.length; this.i++) {
      const c = text.charCodeAt(this.i);
      if (c === 10) {
        this.line++;
        this.lineStart = this.i + 1;
      } else if (c !== 32 && c !== 9 && c !== 13) return;
    }
  }

  private expect(char: string, what: string): void {
    this.space();
    if (this.text[this.i] !== char) throw this.problem(this.i, what, this.shown(this.i));
    this.i++;
  }

  private string(): string {
    const text = this.text;
    const start = this.i;
    this.i++;
    for (; this.i < text.length; this.i++) {
      const c = text[this.i];
      if (c === '\\') this.i++;
      else if (c === '"') break;
      else if (c === '\n' || text.charCodeAt(this.i) < 0x20)
        throw this.problem(this.i, 'a closing quote before the end of the line (a control character in a string is written escaped)', this.shown(start));
    }
    if (this.i >= text.length) throw this.problem(start, 'a string closed by a quote', 'the end of the text');
    this.i++;
    try {
      return JSON.parse(text.slice(start, this.i)) as string;
    } catch {
      throw this.problem(start, 'a string with valid escapes (\\" \\\\ \\/ \\b \\f \\n \\r \\t \\uXXXX)', this.shown(start));
    }
  }

  /** A value: its text as a cell ('' for null), or an error for an object or array inside a record. */
  private value(key: string): string {
    this.space();
    const c = this.text[this.i];
    if (c === '"') return this.string();
    if (c === '{' || c === '[')
      throw this.problem(
        this.i,
        `a string, number, true, false or null for ${JSON.stringify(key)} (a record's values are flat)`,
        c === '{' ? 'an object' : 'an array',
      );
    const m = /^(?:-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?|true|false|null)/.exec(this.text.slice(this.i, this.i + 400));
    if (m === null) throw this.problem(this.i, `a JSON value for ${JSON.stringify(key)}`, this.shown(this.i));
    this.i += m[0].length;
    return m[0] === 'null' ? '' : m[0];
  }
}
