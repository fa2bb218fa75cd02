/**
 * Delimited tables (data/table.ts) against RFC 4180 (quoted fields, doubled quotes, CRLF line ends, a header
 * row), the UTF-8 byte-order mark (Unicode, U+FEFF), and tab-separated files; every error a WeftError whose path
 * is file:line:column. Also read: vega-datasets' `unemployment.tsv` and `seattle-weather.csv` (open data).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { columnNamed, columnStatistics, decimal, numberAt, parseTable } from '@weft/io';
import { detectDelimiter } from '@weft/io/internal';

// vega-datasets (npm, development dependency) exports no subpaths, so its files are read from node_modules.
const vega = (name: string): string => readFileSync(fileURLToPath(new URL(`../../../../node_modules/vega-datasets/data/${name}`, import.meta.url)), 'utf8');

function thrown(f: () => unknown): WeftError {
  try {
    f();
  } catch (error) {
    expect(error).toBeInstanceOf(WeftError);
    return error as WeftError;
  }
  throw new Error('expected an error');
}

describe('parseTable', () => {
  it('reads quoted fields, doubled quotes, line ends inside quotes, CRLF and a byte-order mark (RFC 4180)', () => {
    const table = parseTable('\ufeffname,note\r\n"a, b","say ""hi"""\r\nc,"two\nlines"\r\n', { file: 'notes.csv' });
    expect(table.header).toEqual(['name', 'note']);
    expect(table.rows.map((r) => r.fields)).toEqual([
      ['a, b', 'say "hi"'],
      ['c', 'two\nlines'],
    ]);
    expect(table.rows.map((r) => r.line)).toEqual([2, 3]);
    expect(table.delimiter).toBe(',');
  });

  it('detects tabs and semicolons, and takes a .tsv name as tab-separated', () => {
    expect(detectDelimiter('a\tb\n1\t2\n')).toBe('\t');
    expect(detectDelimiter('a;b;c\n1,5;2;3\n')).toBe(';');
    expect(detectDelimiter('a,b\n')).toBe(',');
    expect(detectDelimiter('a,b\n', 'x.tsv')).toBe('\t');
    expect(parseTable('a;b\n1;2\n').rows[0].fields).toEqual(['1', '2']);
  });

  it('reads the open tab-separated unemployment table and the comma-separated Seattle weather', () => {
    const tsv = parseTable(vega('unemployment.tsv'), { file: 'unemployment.tsv' });
    expect(tsv.header).toEqual(['id', 'rate']);
    expect(tsv.rows.length).toBeGreaterThan(3000);
    expect(numberAt(tsv, 0, 1)).toBeGreaterThan(0);
    const weather = parseTable(vega('seattle-weather.csv'), { file: 'seattle-weather.csv' });
    expect(weather.header).toEqual(['date', 'precipitation', 'temp_max', 'temp_min', 'wind', 'weather']);
    expect(weather.rows.length).toBe(1461);
  });

  it('names file, line and character column for a ragged row, a stray quote, an unclosed quote and text after a quote', () => {
    expect(thrown(() => parseTable('a\tb\n1\t2\n3\t4\t5\n', { file: 'ragged.tsv' })).message).toBe(
      'Bad data at ragged.tsv:3:5: expected 2 tab-separated fields, as the header has, received 3',
    );
    expect(thrown(() => parseTable('a,b\n1\n', { file: 'short.csv' })).path).toBe('short.csv:2:2');
    expect(thrown(() => parseTable('a,b\n1,x"y\n', { file: 'q.csv' })).path).toBe('q.csv:2:4');
    expect(thrown(() => parseTable('a,b\n1,"open\n', { file: 'q.csv' })).path).toBe('q.csv:3:1');
    expect(thrown(() => parseTable('a,b\n"1"x,2\n', { file: 'q.csv' })).path).toBe('q.csv:2:4');
    expect(thrown(() => parseTable('', { file: 'empty.csv' })).path).toBe('empty.csv:1:1');
    expect(thrown(() => parseTable('a,,c\n1,2,3\n', { file: 'h.csv' })).path).toBe('h.csv:1:3');
    expect(thrown(() => parseTable('a,b,a\n1,2,3\n', { file: 'h.csv' })).message).toContain('"a" again (column 1 has it)');
  });

  it('reads decimal numbers only, and points at a bad one by line and column', () => {
    expect([decimal(' 2.5 '), decimal('-1e3'), decimal('.5')]).toEqual([2.5, -1000, 0.5]);
    for (const bad of ['0x10', 'Infinity', 'NaN', 'n/a', '', '1e999']) expect(decimal(bad)).toBeNaN();
    const table = parseTable('day,level\n1,3\n2,n/a\n', { file: 'levels.csv' });
    expect(thrown(() => numberAt(table, 1, 1)).message).toBe('Bad data at levels.csv:3:3: expected a decimal number in column "level", received "n/a"');
    expect(thrown(() => columnNamed(table, 'flow', 'for --target')).message).toBe(
      'Bad data at levels.csv:1:1: expected a column named "flow" (for --target), received the columns day, level',
    );
  });
});

describe('columnStatistics', () => {
  it('gives the population mean and deviation, and 1 for a constant column, without overflow at 1e300', () => {
    const { mean, deviation } = columnStatistics(
      [
        [1, 5, 1e300],
        [3, 5, 3e300],
      ],
      3,
    );
    expect(mean[0]).toBe(2);
    expect(deviation[0]).toBe(1);
    expect(deviation[1]).toBe(1);
    expect(mean[2]).toBeCloseTo(2e300, -290);
    expect(Number.isFinite(deviation[2])).toBe(true);
  });
});
