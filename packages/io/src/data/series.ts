/**
 * Numeric series from a table, and vocabularies from text: the preparation `weft train` records in a weight
 * file, as library calls (so a program or a page prepares data the same way).
 *
 * readSeries: the columns chosen by name, or every column of numbers; a column with no number at all (dates,
 * names, or every cell missing) is left out and listed with the reason; a missing cell (missing.ts) is NaN; a column
 * of numbers with a cell that is neither a number nor missing is an error at that cell (`file:line:column`), never
 * dropped quietly. Targets must be among the columns read.
 */
import { fail } from '@weft/core';
import { missingTest } from './missing.js';
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
  /** Markers of missing cells besides the standard ones (missing.ts). */
  readonly markers?: readonly string[];
  /** True to refuse any missing cell in the columns read (an error at its file:line:column). */
  readonly refuseMissing?: boolean;
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
  /** One row per table row, one number per column read (NaN where the cell is missing). */
  readonly values: readonly (readonly number[])[];
  /** Per column read, how many of its cells are missing. */
  readonly missing: readonly number[];
  /** Notes for the user (a marker that is also a number, and where it was read as missing). */
  readonly notes: readonly string[];
  /** Columns left out because they hold no numbers, each with where that was seen. */
  readonly leftOut: readonly string[];
}

/** Reads numeric columns of a table as a series, with `file:line:column` errors for any field that is not a number. */
export function readSeries(table: Table, options: SeriesOptions = {}): Series {
  const isMissing = missingTest(options.markers);
  const { numeric, leftOut } = numericColumns(table, options, isMissing);
  const columns =
    options.columns === undefined ? numeric : options.columns.map((name) => columnNamed(table, name, options.choices?.columns ?? 'a column to read'));
  if (columns.length === 0) fail('bad_data', `${table.file}:1:1`, 'at least one column of numbers', `the columns ${table.header.join(', ')}`);
  const targets =
    options.targets === undefined ? columns : options.targets.map((name) => columnNamed(table, name, options.choices?.targets ?? 'a column to forecast'));
  checkTargets(table, options, columns, targets, leftOut);
  const { values, missing } = readValues(table, options, columns, isMissing);
  return {
    columns: columns.map((c) => table.header[c]),
    targets: targets.map((c) => table.header[c]),
    values,
    missing,
    notes: markerNotes(table, options.markers ?? [], columns),
    leftOut: options.columns === undefined ? leftOut : [],
  };
}

/**
 * The columns whose every present cell is a number, and those left out (every cell missing, or no numbers at all);
 * a column of numbers with a stray word is an error naming the cell, unless the columns are chosen.
 */
function numericColumns(table: Table, options: SeriesOptions, isMissing: (text: string) => boolean): { numeric: number[]; leftOut: string[] } {
  const numeric: number[] = [];
  const leftOut: string[] = [];
  table.header.forEach((name, c) => {
    if (options.leaveOut?.includes(name)) return;
    let numbers = 0;
    let firstBad = -1;
    table.rows.forEach((row, r) => {
      if (isMissing(row.fields[c])) return;
      if (!Number.isNaN(decimal(row.fields[c]))) numbers++;
      else if (firstBad < 0) firstBad = r;
    });
    if (firstBad < 0 && numbers > 0) numeric.push(c);
    else if (firstBad < 0) leftOut.push(`${name} (every cell missing)`);
    else if (numbers === 0)
      leftOut.push(`${name} (no numbers: ${JSON.stringify(table.rows[firstBad].fields[c].trim().slice(0, 40))} at line ${table.rows[firstBad].line})`);
    else if (options.columns === undefined) {
      fail(
        'bad_data',
        fieldPath(table, firstBad, c),
        `a decimal number in column ${JSON.stringify(name)}`,
        JSON.stringify(table.rows[firstBad].fields[c].trim().slice(0, 80)),
        `${numbers} of ${table.rows.length} cells there are; fix the cell, mark missing readings with --missing-marker, or choose the columns${options.choices === undefined ? '' : ` ${options.choices.columns}`}`,
      );
    }
  });
  return { numeric, leftOut };
}

/** Every target is a column read that has a reading. */
function checkTargets(table: Table, options: SeriesOptions, columns: readonly number[], targets: readonly number[], leftOut: readonly string[]): void {
  for (const t of targets) {
    if (!columns.includes(t) && leftOut.includes(`${table.header[t]} (every cell missing)`)) {
      fail(
        'bad_data',
        fieldPath(table, 0, t),
        `a column with at least one reading (${JSON.stringify(table.header[t])} was chosen ${options.choices?.targets ?? 'as a column to forecast'})`,
        `every one of its ${table.rows.length} cells missing`,
      );
    }
    if (!columns.includes(t)) {
      fail(
        'bad_data',
        `${table.file}:1:1`,
        `a target among the columns read (${columns.map((c) => table.header[c]).join(', ')})`,
        JSON.stringify(table.header[t]),
      );
    }
  }
}

/** The columns' numbers, NaN where a cell is missing (refused with `refuseMissing`), and each column's missing count. */
function readValues(
  table: Table,
  options: SeriesOptions,
  columns: readonly number[],
  isMissing: (text: string) => boolean,
): { values: number[][]; missing: number[] } {
  const missing = columns.map(() => 0);
  const values = table.rows.map((row, r) =>
    columns.map((c, j) => {
      if (!isMissing(row.fields[c])) return numberAt(table, r, c);
      if (options.refuseMissing === true)
        fail(
          'bad_data',
          fieldPath(table, r, c),
          `a reading in column ${JSON.stringify(table.header[c])} (missing cells are refused here)`,
          JSON.stringify(row.fields[c].trim().slice(0, 80)),
        );
      missing[j]++;
      return NaN;
    }),
  );
  columns.forEach((c, j) => {
    if (missing[j] === table.rows.length && table.rows.length > 0)
      fail(
        'bad_data',
        fieldPath(table, 0, c),
        `a column with at least one reading (${JSON.stringify(table.header[c])} was chosen)`,
        `every one of its ${table.rows.length} cells missing`,
      );
  });
  return { values, missing };
}

/** A marker that is also a number changes what the file says: said, with the first cell it took. */
function markerNotes(table: Table, markers: readonly string[], columns: readonly number[]): string[] {
  const notes: string[] = [];
  for (const marker of markers) {
    if (Number.isNaN(decimal(marker))) continue;
    let count = 0;
    let first = '';
    columns.forEach((c) =>
      table.rows.forEach((row, r) => {
        if (row.fields[c].trim() !== marker.trim()) return;
        if (count++ === 0) first = fieldPath(table, r, c);
      }),
    );
    notes.push(
      `note: the missing marker ${JSON.stringify(marker)} is also a number; ${count === 0 ? 'no cell holds it' : `${count} cell${count === 1 ? '' : 's'} holding it ${count === 1 ? 'was' : 'were'} read as missing, the first at ${first}`}`,
    );
  }
  return notes;
}

/**
 * A vocabulary from the pieces of a training text: the unknown token first (id 0, for pieces never seen), then
 * every distinct piece in code-unit order, so the same text always gives the same ids.
 */
export function buildVocabulary(pieces: Iterable<string>): string[] {
  return [UNKNOWN_TOKEN, ...[...new Set(pieces)].filter((p) => p !== UNKNOWN_TOKEN).sort()];
}
