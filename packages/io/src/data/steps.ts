/**
 * Sequences written one step per row (a long table): an id column says which sequence a row belongs to, an
 * optional step column orders the rows of a sequence (else file order), an optional label column gives the
 * sequence's class (the same on every row of it), and the numeric columns are the step's values. Rows of one
 * sequence need not be adjacent. Every problem is a `bad_data` WeftError at its `file:line:column`.
 *
 *     id,step,label,speed,vibration,temperature
 *     m1,1,worn,0.50,0.12,41.0
 *     m1,2,worn,0.52,0.31,41.4
 *     m2,1,sound,0.49,0.10,39.8
 */
import { WeftError } from '@weft/core';
import { columnNamed, decimal, fieldPath, numberAt } from './table.js';
import type { Table } from './table.js';

/** How `readStepTable` reads a long table (one row per step of a sequence). */
export interface StepTableOptions {
  /** The column naming each row's sequence. */
  readonly idColumn: string;
  /** A column of numbers ordering the steps of a sequence (strictly increasing within it); default file order. */
  readonly stepColumn?: string;
  /** The column with each sequence's class, when the table is labelled. */
  readonly labelColumn?: string;
  /** The value columns, in order; default every column of numbers other than the id, step and label columns. */
  readonly columns?: readonly string[];
}

/** One sequence of a long table. */
export interface StepSequence {
  /** Its id, as written in the id column. */
  readonly id: string;
  /** The line of the sequence's first row. */
  readonly line: number;
  /** The label as written, or null for an unlabelled table. */
  readonly label: string | null;
  /** The steps' values, one row per step, one number per value column. */
  readonly steps: readonly (readonly number[])[];
}

/** The sequences of a long table, in the order their first rows appear. */
export interface StepTable {
  /** The sequences. */
  readonly sequences: readonly StepSequence[];
  /** The value columns read. */
  readonly columns: readonly string[];
  /** Columns left out because they hold text (each with the reason), when the columns were not given. */
  readonly leftOut: readonly string[];
}

function bad(path: string, expected: string, received: string): WeftError {
  return new WeftError({ code: 'bad_data', path, expected, received });
}

/** Groups a long table into sequences (in the order their ids first appear). */
export function readStepTable(table: Table, options: StepTableOptions): StepTable {
  const idAt = columnNamed(table, options.idColumn, 'the sequence ids');
  const stepAt = options.stepColumn === undefined ? -1 : columnNamed(table, options.stepColumn, 'the step order');
  const labelAt = options.labelColumn === undefined ? -1 : columnNamed(table, options.labelColumn, 'the labels');
  const reserved = new Set([idAt, stepAt, labelAt]);
  const leftOut: string[] = [];
  let valueColumns: number[];
  if (options.columns !== undefined) {
    valueColumns = options.columns.map((name) => columnNamed(table, name, 'a value column'));
  } else {
    valueColumns = [];
    table.header.forEach((name, c) => {
      if (reserved.has(c)) return;
      const first = table.rows.findIndex((r) => Number.isNaN(decimal(r.fields[c])));
      if (first < 0) valueColumns.push(c);
      else if (table.rows.every((r) => Number.isNaN(decimal(r.fields[c]))))
        leftOut.push(`${name} (no numbers: ${JSON.stringify(table.rows[first].fields[c].trim().slice(0, 40))} at line ${table.rows[first].line})`);
      else numberAt(table, first, c);
    });
  }
  if (valueColumns.length === 0)
    throw bad(`${table.file}:1:1`, 'at least one column of numbers besides the id, step and label columns', `the columns ${table.header.join(', ')}`);
  const groups = new Map<string, { line: number; label: string | null; labelRow: number; steps: number[][]; lastStep: number; lastRow: number }>();
  table.rows.forEach((row, r) => {
    const id = row.fields[idAt].trim();
    if (id === '') throw bad(fieldPath(table, r, idAt), `an id in column ${JSON.stringify(table.header[idAt])}`, 'an empty field');
    const label = labelAt < 0 ? null : row.fields[labelAt].trim();
    if (label === '') throw bad(fieldPath(table, r, labelAt), `a label in column ${JSON.stringify(table.header[labelAt])}`, 'an empty field');
    let group = groups.get(id);
    if (group === undefined) {
      group = { line: row.line, label, labelRow: r, steps: [], lastStep: -Infinity, lastRow: -1 };
      groups.set(id, group);
    } else if (label !== group.label) {
      throw bad(
        fieldPath(table, r, labelAt),
        `the label ${JSON.stringify(group.label)} that id ${JSON.stringify(id)} has on line ${table.rows[group.labelRow].line} (one label per sequence)`,
        JSON.stringify(label),
      );
    }
    if (stepAt >= 0) {
      const step = numberAt(table, r, stepAt);
      if (!(step > group.lastStep)) {
        throw bad(
          fieldPath(table, r, stepAt),
          `a step after ${group.lastStep} (the step of id ${JSON.stringify(id)} on line ${table.rows[group.lastRow].line}); steps of a sequence must increase down the file`,
          String(step),
        );
      }
      group.lastStep = step;
      group.lastRow = r;
    }
    group.steps.push(valueColumns.map((c) => numberAt(table, r, c)));
  });
  return {
    sequences: [...groups].map(([id, g]) => ({ id, line: g.line, label: g.label, steps: g.steps })),
    columns: valueColumns.map((c) => table.header[c]),
    leftOut,
  };
}
