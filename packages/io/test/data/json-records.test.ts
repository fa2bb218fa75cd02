/**
 * JSON records read as a table. The syntax is RFC 8259's (JSON): every text the reader takes is also taken by the
 * platform's JSON.parse (ECMA-404), whose values the cells must equal; positions are counted as the table reader
 * counts them (lines and character columns from 1). The open file is vega-datasets 3.2.1's
 * data/unemployment-across-industries.json (npm, development dependency).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { isJsonRecords, parseJsonRecords, readTable } from '@weft/io';
import { fieldPath } from '@weft/io/internal';

const unemployment = fileURLToPath(new URL('../../../../node_modules/vega-datasets/data/unemployment-across-industries.json', import.meta.url));

describe('JSON records read as a table', () => {
  it('reads every record of an open JSON file, the cells equal to what JSON.parse gives', () => {
    const path = unemployment;
    const text = readFileSync(path, 'utf8');
    const table = readTable(text, path);
    const parsed = JSON.parse(text) as Record<string, string | number>[];
    expect(table.header).toEqual(Object.keys(parsed[0]));
    expect(table.rows.length).toBe(parsed.length);
    parsed.forEach((record, r) =>
      table.header.forEach((key, c) => {
        const cell = table.rows[r].fields[c];
        expect(typeof record[key] === 'number' ? Number(cell) : cell).toBe(record[key]);
      }),
    );
  });

  it('keeps where each value stands, line and column, over records spread across lines', () => {
    const text = '[\n  {"site": "north",\n   "level": 1.5},\n  {"level": 2, "site": "south"}\n]\n';
    const table = parseJsonRecords(text, 'sites.json');
    expect(table.header).toEqual(['site', 'level']);
    expect(table.rows.map((r) => r.fields)).toEqual([
      ['north', '1.5'],
      ['south', '2'],
    ]);
    expect(fieldPath(table, 0, 1)).toBe('sites.json:3:13');
    expect(fieldPath(table, 1, 0)).toBe('sites.json:4:24');
  });

  it('reads null and a key a record lacks as an empty (missing) cell, and keeps a number as written', () => {
    const table = parseJsonRecords('[{"a": 1e3, "b": null}, {"a": -0.10}]', 'x.json');
    expect(table.rows.map((r) => r.fields)).toEqual([
      ['1e3', ''],
      ['-0.10', ''],
    ]);
  });

  it('refuses what is not an array of flat records, each at its line and column', () => {
    expect(() => parseJsonRecords('{"a": 1}', 'x.json')).toThrowError(
      'Bad data at x.json:1:1: expected a JSON array of records ([{"name": value, …}, …]), received "{\\"a\\": 1}"',
    );
    expect(() => parseJsonRecords('[{"a": 1},\n {"a": {"b": 2}}]', 'x.json')).toThrowError(
      'Bad data at x.json:2:8: expected a string, number, true, false or null for "a" (a record\'s values are flat), received an object',
    );
    expect(() => parseJsonRecords('[{"a": 1} {"a": 2}]', 'x.json')).toThrowError(
      'Bad data at x.json:1:11: expected a comma or the end of the array (]), received "{\\"a\\": 2}]"',
    );
    expect(() => parseJsonRecords('[{"a": 1, "a": 2}]', 'x.json')).toThrowError(
      'Bad data at x.json:1:11: expected each key once in a record, received "a" again',
    );
    expect(() => parseJsonRecords('[{"a": tru}]', 'x.json')).toThrowError('Bad data at x.json:1:8: expected a JSON value for "a", received "tru}]"');
    expect(() => parseJsonRecords('[{"a": "x\\q"}]', 'x.json')).toThrowError(/^Bad data at x\.json:1:8: expected a string with valid escapes/);
    expect(() => parseJsonRecords('[]', 'x.json')).toThrowError(
      'Bad data at x.json:1:1: expected at least one record with at least one value, received an empty array or empty records',
    );
    expect(() => parseJsonRecords('[{"a": 1}] 7', 'x.json')).toThrowError('Bad data at x.json:1:12: expected nothing after the array, received "7"');
  });

  it('tells JSON records from CSV by the name or the first character', () => {
    expect(isJsonRecords('a,b\n1,2\n', 'data.json')).toBe(true);
    expect(isJsonRecords('\uFEFF  [{"a": 1}]', 'data.txt')).toBe(true);
    expect(isJsonRecords('a,b\n1,2\n', 'data.csv')).toBe(false);
    expect(readTable('a,b\n1,2\n', 'data.csv').rows[0].fields).toEqual(['1', '2']);
  });

  it('gives the cells JSON.parse gives for any array of flat records (fast-check)', () => {
    const value = fc.oneof(fc.string(), fc.double({ noNaN: true, noDefaultInfinity: true }), fc.boolean(), fc.constant(null));
    fc.assert(
      fc.property(
        fc.array(fc.dictionary(fc.string({ minLength: 1, maxLength: 5 }), value, { minKeys: 1, maxKeys: 4 }), { minLength: 1, maxLength: 5 }),
        fc.boolean(),
        (records, pretty) => {
          const text = JSON.stringify(records, null, pretty ? 2 : undefined);
          const table = parseJsonRecords(text, 'f.json');
          records.forEach((record, r) =>
            table.header.forEach((key, c) => {
              const cell = table.rows[r].fields[c];
              const expected = Object.hasOwn(record, key) ? record[key] : null;
              if (expected === null) expect(cell).toBe('');
              else if (typeof expected === 'number') expect(Number(cell)).toBe(Object.is(expected, -0) ? 0 : expected);
              else expect(cell).toBe(String(expected));
            }),
          );
        },
      ),
      { numRuns: 200 },
    );
  });
});
