/**
 * Numeric series from a table, and vocabularies from text: the preparation `weft train` records in a weight
 * file, as library calls (so a program or a page prepares data the same way).
 *
 * readSeries: the columns chosen by name, or every column of numbers; a column with no number at all (dates,
 * names) is left out and listed with the reason; a column of numbers with a cell that is not one is an error at
 * that cell (`file:line:column`), never dropped quietly. Targets must be among the columns read.
 */
import { fail } from '@weft/core';
import { columnNamed, decimal, fieldPath, numberAt } from './table.js';
import type { Table } from './table.js';
import { UNKNOWN_TOKEN } from '../translate.js';

/** Which columns of a table `readSeries` reads and forecasts. */
export interface SeriesOptions {
  /** The columns to read, by name (default: every column of numbers). */
  readonly columns?: readonly string[];
  /** The columns to forecast, by name, among those read (default: all of them). */
  readonly targets?: readonly string[];
  /** Columns never read as numbers (a time column of plain years, say). */
  readonly leaveOut?: readonly string[];
  /** How errors name the two choices (default "a column to read", "a column to forecast"; a command names its flags). */
  readonly choices?: {
    /** How an error names a column to read. */
    readonly columns: string;
    /** How an error names a column to forecast. */
    readonly targets: string;
  };
}

/** A table's numeric columns as a series, one row per time step. */
export interface Series {
  /** The columns read, in table order. */
  readonly columns: readonly string[];
  /** The columns to forecast, among those read. */
  readonly targets: readonly string[];
  /** One row per table row, one number per column read. */
  readonly values: readonly (readonly number[])[];
  /** Columns left out because they hold no numbers, each with where that was seen. */
  readonly leftOut: readonly string[];
}

/** Reads numeric columns of a table as a series, with `file:line:column` errors for any field that is not a number. */
export function readSeries(table: Table, options: SeriesOptions = {}): Series {
  const numeric: number[] = [];
  const leftOut: string[] = [];
  table.header.forEach((name, c) => {
    if (options.leaveOut?.includes(name)) return;
    let numbers = 0;
    let firstBad = -1;
    table.rows.forEach((row, r) => {
      if (!Number.isNaN(decimal(row.fields[c]))) numbers++;
      else if (firstBad < 0) firstBad = r;
    });
    if (firstBad < 0) numeric.push(c);
    else if (numbers === 0) leftOut.push(`${name} (no numbers: ${JSON.stringify(table.rows[firstBad].fields[c].trim().slice(0, 40))} at line ${table.rows[firstBad].line})`);
    else if (options.columns === undefined) {
      fail(
        'bad_data',
        fieldPath(table, firstBad, c),
        `a decimal number in column ${JSON.stringify(name)}`,
        JSON.stringify(table.rows[firstBad].fields[c].trim().slice(0, 80)),
        `${numbers} of ${table.rows.length} cells there are; fix the cell, or choose the columns${options.choices === undefined ? '' : ` ${options.choices.columns}`}`,
      );
    }
  });
  const columns = options.columns === undefined ? numeric : options.columns.map((name) => columnNamed(table, name, options.choices?.columns ?? 'a column to read'));
  if (columns.length === 0) fail('bad_data', `${table.file}:1:1`, 'at least one column of numbers', `the columns ${table.header.join(', ')}`);
  const targets = options.targets === undefined ? columns : options.targets.map((name) => columnNamed(table, name, options.choices?.targets ?? 'a column to forecast'));
  for (const t of targets) {
    if (!columns.includes(t)) {
      fail('bad_data', `${table.file}:1:1`, `a target among the columns read (${columns.map((c) => table.header[c]).join(', ')})`, JSON.stringify(table.header[t]));
    }
  }
  return {
    columns: columns.map((c) => table.header[c]),
    targets: targets.map((c) => table.header[c]),
    values: table.rows.map((_, r) => columns.map((c) => numberAt(table, r, c))),
    leftOut: options.columns === undefined ? leftOut : [],
  };
}

/**
 * A vocabulary from the pieces of a training text: the unknown token first (id 0, for pieces never seen), then
 * every distinct piece in code-unit order, so the same text always gives the same ids.
 */
export function buildVocabulary(pieces: Iterable<string>): string[] {
  return [UNKNOWN_TOKEN, ...[...new Set(pieces)].filter((p) => p !== UNKNOWN_TOKEN).sort()];
}
