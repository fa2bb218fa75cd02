/**
 * What a series table must be before it is forecast, and how it is cut: three parts in time order; times that go
 * forward one row at a time (a repeated or backward time, or a gap longer than a season, is an error at its
 * file:line:column); and notes on columns that look like an index or like names of several series, so nothing is
 * pooled without a word.
 */
import { fail } from '@weft/core';
import type { Table } from './table.js';
import { decimal, fieldPath } from './table.js';
import type { TimeColumn } from './time-column.js';

/** The three parts of a series, by target row: training [0, trainEnd), validation [trainEnd, testStart), test [testStart, rows). */
export interface SeriesParts {
  /** Rows in the series. */
  readonly rows: number;
  /** The first validation row. */
  readonly trainEnd: number;
  /** The first test row. */
  readonly testStart: number;
}

/**
 * Cuts `rows` rows into training, validation and test parts, in time order, by the shares asked; every part gets at
 * least one row, the test part at least the horizon (else a one-line error naming --test).
 */
export function seriesParts(rows: number, options: { readonly validationShare: number; readonly testShare: number; readonly horizon: number }): SeriesParts {
  const test = Math.max(1, Math.round(rows * options.testShare));
  const validation = Math.max(1, Math.round(rows * options.validationShare));
  if (test < options.horizon) {
    fail(
      'invalid_option',
      '--test',
      `a share leaving at least ${options.horizon} test rows (the horizon) of the ${rows}: ${Math.ceil((100 * options.horizon) / rows) / 100} or more`,
      `${options.testShare} (${test} row${test === 1 ? '' : 's'})`,
    );
  }
  return { rows, trainEnd: rows - test - validation, testStart: rows - test };
}

/** Lines a to b of a table, as "lines 2–145 (144 rows)". */
export function linesOf(table: Table, from: number, to: number): string {
  return `lines ${table.rows[from].line}–${table.rows[to - 1].line} (${to - from} row${to - from === 1 ? '' : 's'})`;
}

/**
 * A series' times must increase down the file: a repeated time (several series side by side?) or one that goes
 * back is an error at its file:line:column, never a silently pooled or shuffled series.
 */
export function checkTimes(table: Table, time: TimeColumn): void {
  const at = (r: number) => fieldPath(table, r, time.index);
  const shown = (r: number) => JSON.stringify(table.rows[r].fields[time.index].trim().slice(0, 40));
  if (time.repeated >= 0 && (time.backwards < 0 || time.repeated < time.backwards)) {
    const r = time.repeated;
    const first = time.times.indexOf(time.times[r]);
    fail(
      'bad_data',
      at(r),
      `a time after line ${table.rows[r - 1].line}'s in column ${JSON.stringify(time.name)}, as a series has one row per time (several series in one table? name the column that tells them apart with --id-column NAME to forecast them all with one model)`,
      `${shown(r)} again (as on line ${table.rows[first].line})`,
    );
  }
  if (time.backwards >= 0) {
    const r = time.backwards;
    fail(
      'bad_data',
      at(r),
      `a time after line ${table.rows[r - 1].line}'s ${shown(r - 1)} in column ${JSON.stringify(time.name)} (sort the file by time)`,
      shown(r),
    );
  }
}

/**
 * A gap in a regular series longer than a season (rows missing) is an error at the row after it: the seasonal
 * baselines and the windows would silently misalign.
 */
export function checkGaps(table: Table, time: TimeColumn, season: number | null): void {
  if (time.spacing === null || season === null) return;
  const gaps: number[] = [];
  for (let r = 1; r < time.times.length; r++) gaps.push(time.times[r] - time.times[r - 1]);
  const sorted = [...gaps].sort((a, b) => a - b);
  const median = sorted[Math.floor(sorted.length / 2)];
  const r = gaps.findIndex((g) => g > season * median * 1.05) + 1;
  if (r > 0) {
    fail(
      'bad_data',
      fieldPath(table, r, time.index),
      `a time at most a season (${season} rows, ${time.spacing.unit} apart) after line ${table.rows[r - 1].line}'s in column ${JSON.stringify(time.name)}; fill the missing rows, or forecast the parts apart`,
      `${JSON.stringify(table.rows[r].fields[time.index].trim().slice(0, 40))}, ${Math.round(gaps[r - 1] / median)} rows' time later`,
    );
  }
}

/** Notes on a table that may hold several series or counters (its times checked first), so nothing is pooled without a word. */
export function tableNotes(table: Table, time: TimeColumn | null, numeric: readonly string[]): string[] {
  const notes: string[] = [];
  if (time !== null) checkTimes(table, time);
  for (const name of numeric) {
    const c = table.header.indexOf(name);
    const first = decimal(table.rows[0]?.fields[c] ?? '');
    if (table.rows.length > 2 && table.rows.every((row, r) => decimal(row.fields[c]) === first + r)) {
      notes.push(
        `note: column ${JSON.stringify(name)} counts the rows (${first}, ${first + 1}, ${first + 2}, …): it is probably an index, not a reading; leave it out with --columns`,
      );
    }
  }
  // A text column that names series: its values stand in blocks (series one after another) or take turns
  // (series interleaved row by row); a label that merely repeats (the day's weather) does neither.
  table.header.forEach((name, c) => {
    if (c === time?.index || numeric.includes(name) || table.rows.length < 4) return;
    const cells = table.rows.map((row) => row.fields[c].trim());
    const distinct = new Set(cells).size;
    let runs = 1;
    for (let r = 1; r < cells.length; r++) if (cells[r] !== cells[r - 1]) runs++;
    const inTurns = cells.every((v, r) => r < distinct || v === cells[r - distinct]);
    if (distinct > 1 && distinct <= table.rows.length / 3 && (runs === distinct || inTurns)) {
      notes.push(
        `note: column ${JSON.stringify(name)} names ${distinct} repeating values: if each names a series, the table holds several series and weft would pool them into one; forecast each with one model with --id-column ${name}, or pick one series's rows`,
      );
    }
  });
  return notes;
}
