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
  let i = text.charCodeAt(0) === 0xfeff ? 1 : 0;
  let line = 1;
  let lineStart = i;
  const where = (at: number) => `${file}:${line}:${at - lineStart + 1}`;
  const problem = (at: number, expected: string, received: string) => new WeftError({ code: 'bad_data', path: where(at), expected, received });
  const shown = (at: number) => (at >= text.length ? 'the end of the text' : JSON.stringify(text.slice(at, at + 20)));
  const space = () => {
    for (; i < text.length; i++) {
      const c = text.charCodeAt(i);
      if (c === 10) {
        line++;
        lineStart = i + 1;
      } else if (c !== 32 && c !== 9 && c !== 13) return;
    }
  };
  const expect = (char: string, what: string) => {
    space();
    if (text[i] !== char) throw problem(i, what, shown(i));
    i++;
  };
  const string = (): string => {
    const start = i;
    i++;
    for (; i < text.length; i++) {
      const c = text[i];
      if (c === '\\') i++;
      else if (c === '"') break;
      else if (c === '\n' || text.charCodeAt(i) < 0x20)
        throw problem(i, 'a closing quote before the end of the line (a control character in a string is written escaped)', shown(start));
    }
    if (i >= text.length) throw problem(start, 'a string closed by a quote', 'the end of the text');
    i++;
    try {
      return JSON.parse(text.slice(start, i)) as string;
    } catch {
      throw problem(start, 'a string with valid escapes (\\" \\\\ \\/ \\b \\f \\n \\r \\t \\uXXXX)', shown(start));
    }
  };
  // A value: its text as a cell ('' for null), or an error for an object or array inside a record.
  const value = (key: string): string => {
    space();
    const c = text[i];
    if (c === '"') return string();
    if (c === '{' || c === '[')
      throw problem(i, `a string, number, true, false or null for ${JSON.stringify(key)} (a record's values are flat)`, c === '{' ? 'an object' : 'an array');
    const m = /^(?:-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?|true|false|null)/.exec(text.slice(i, i + 400));
    if (m === null) throw problem(i, `a JSON value for ${JSON.stringify(key)}`, shown(i));
    i += m[0].length;
    return m[0] === 'null' ? '' : m[0];
  };
  const header: string[] = [];
  const columnOf = new Map<string, number>();
  const records: { cells: Map<number, [string, number, number]>; line: number; column: number }[] = [];
  expect('[', 'a JSON array of records ([{"name": value, …}, …])');
  space();
  if (text[i] === ']') i++;
  else {
    for (;;) {
      space();
      if (text[i] !== '{') throw problem(i, `a record (an object) as item ${records.length + 1} of the array`, shown(i));
      const record = { cells: new Map<number, [string, number, number]>(), line, column: i - lineStart + 1 };
      i++;
      space();
      if (text[i] === '}') i++;
      else {
        for (;;) {
          space();
          if (text[i] !== '"') throw problem(i, 'a key in quotes', shown(i));
          const keyAt = i;
          const key = string();
          expect(':', `a colon after the key ${JSON.stringify(key)}`);
          space();
          const column = i - lineStart + 1;
          const valueLine = line;
          const cell = value(key);
          let c = columnOf.get(key);
          if (c === undefined) {
            c = header.length;
            columnOf.set(key, c);
            header.push(key);
          }
          if (record.cells.has(c)) throw problem(keyAt, `each key once in a record`, `${JSON.stringify(key)} again`);
          record.cells.set(c, [cell, column, valueLine]);
          space();
          if (text[i] === ',') {
            i++;
            continue;
          }
          expect('}', 'a comma or the end of the record (})');
          break;
        }
      }
      records.push(record);
      space();
      if (text[i] === ',') {
        i++;
        continue;
      }
      expect(']', 'a comma or the end of the array (])');
      break;
    }
  }
  space();
  if (i < text.length) throw problem(i, 'nothing after the array', shown(i));
  if (records.length === 0 || header.length === 0) throw problem(0, 'at least one record with at least one value', 'an empty array or empty records');
  // A key a record lacks is an empty cell placed at the record's start.
  const rows: TableRow[] = records.map((r) => ({
    line: r.line,
    fields: header.map((_, c) => r.cells.get(c)?.[0] ?? ''),
    starts: header.map((_, c) => r.cells.get(c)?.[1] ?? r.column),
    lines: header.map((_, c) => r.cells.get(c)?.[2] ?? r.line),
  }));
  return { file, delimiter: ',', header, rows };
}
