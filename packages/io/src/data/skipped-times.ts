/**
 * Skipped times: a series with a time column whose rows lie on a regular grid (every gap a whole number of the usual
 * step: a fixed span such as an hour or a day, or whole months, quarters or years) but with some times absent has
 * the absent rows put back, every reading of theirs missing, so that seasons, windows and baselines stay aligned with
 * the calendar. A spacing that changes part way (rows a day apart, then a week apart) would make most of the series
 * missing: it is an error at the line where it changes. Gaps off the grid are left as they are, with a note.
 */
import { fail } from '@weft/core';
import type { Table, TableRow } from './table.js';
import { fieldPath } from './table.js';
import type { TimeColumn } from './time-column.js';
import { timeSpacing } from './time-column.js';

const DAY = 86_400_000;

/** The table with its skipped times put back, and what was done. */
export interface FilledTimes {
  /** The table, with a row of missing cells at each skipped time (its line: the line of the row after it). */
  readonly table: Table;
  /** The time column of that table. */
  readonly time: TimeColumn;
  /** Rows put back (indexes into the new table). */
  readonly inserted: readonly number[];
  /** What was done, for the user; null when nothing was. */
  readonly note: string | null;
}

/** Month count of a time (years × 12 + month), in UTC. */
function monthIndex(t: number): number {
  const d = new Date(t);
  return d.getUTCFullYear() * 12 + d.getUTCMonth();
}

/** The time `months` months after t, on the same day of the month (the month's last day where it has fewer). */
function addMonths(t: number, months: number): number {
  const d = new Date(t);
  const year = d.getUTCFullYear();
  const month = d.getUTCMonth() + months;
  const last = new Date(Date.UTC(year, month + 1, 0)).getUTCDate();
  return Date.UTC(year, month, Math.min(d.getUTCDate(), last), d.getUTCHours(), d.getUTCMinutes(), d.getUTCSeconds(), d.getUTCMilliseconds());
}

/** A time as ISO 8601 text: the date alone at midnight UTC, else date and time. */
function timeText(t: number): string {
  const iso = new Date(t).toISOString();
  return t % DAY === 0 ? iso.slice(0, 10) : `${iso.slice(0, 19)}Z`;
}

/** How the grid steps: a fixed span in milliseconds, or whole months. */
type Step = { readonly kind: 'span'; readonly span: number } | { readonly kind: 'months'; readonly months: number };

/** Steps of the grid in a gap from a to b (a whole number ≥ 1), or NaN when the gap is off the grid. */
function stepsBetween(step: Step, a: number, b: number): number {
  if (step.kind === 'span') {
    const ratio = Math.round((b - a) / step.span);
    return ratio >= 1 && Math.abs(b - a - ratio * step.span) <= 0.001 * step.span ? ratio : NaN;
  }
  const months = monthIndex(b) - monthIndex(a);
  return months >= step.months && months % step.months === 0 ? months / step.months : NaN;
}

/** The grid's step as the unit rows are apart: "days", "hours", "2 hours", "months", "quarters", "90 seconds". */
function stepWords(step: Step): string {
  if (step.kind === 'months') return step.months === 1 ? 'months' : step.months === 3 ? 'quarters' : 'years';
  const units: [number, string][] = [
    [7 * DAY, 'weeks'],
    [DAY, 'days'],
    [3_600_000, 'hours'],
    [60_000, 'minutes'],
    [1000, 'seconds'],
  ];
  for (const [size, name] of units) {
    if (step.span % size === 0) return step.span === size ? name : `${step.span / size} ${name}`;
  }
  return `${step.span} milliseconds`;
}

/** `count` steps in words: "3 days", "2 months", "1 step of 15 minutes". */
function spanWords(step: Step, count: number, unit: string): string {
  if (step.kind === 'months') return `${count * step.months} month${count * step.months === 1 ? '' : 's'}`;
  if (/^\d/.test(unit)) return `${count} step${count === 1 ? '' : 's'} of ${unit}`;
  return `${count} ${count === 1 ? unit.replace(/s$/, '') : unit}`;
}

/**
 * Puts back skipped times (see the file's comment). `refuse` makes a skipped time an error at the row after it
 * (`--missing refuse`). The table's times must already go forward (checkTimes).
 */
export function insertSkippedTimes(table: Table, time: TimeColumn, refuse = false): FilledTimes {
  const same: FilledTimes = { table, time, inserted: [], note: null };
  const n = time.times.length;
  if (n < 3 || time.repeated >= 0 || time.backwards >= 0) return same;
  const gaps: number[] = [];
  for (let r = 1; r < n; r++) gaps.push(time.times[r] - time.times[r - 1]);
  const median = [...gaps].sort((a, b) => a - b)[Math.floor(gaps.length / 2)];
  const step: Step =
    median >= 28 * DAY && median <= 31 * DAY
      ? { kind: 'months', months: 1 }
      : median >= 89 * DAY && median <= 92 * DAY
        ? { kind: 'months', months: 3 }
        : median >= 365 * DAY && median <= 366 * DAY
          ? { kind: 'months', months: 12 }
          : { kind: 'span', span: median };
  const unit = stepWords(step);
  const steps = gaps.map((_g, i) => stepsBetween(step, time.times[i], time.times[i + 1]));
  const off = steps.findIndex((s) => Number.isNaN(s));
  if (off >= 0) {
    return {
      ...same,
      note: `note: time column ${JSON.stringify(time.name)}: ${fieldPath(table, off + 1, time.index)} is off the grid of rows ${unit} apart (${Math.round((gaps[off] / (step.kind === 'span' ? step.span : 30.44 * DAY * step.months)) * 100) / 100} steps after the row above): no rows put back for skipped times`,
    };
  }
  const missingRows = steps.reduce((s, k) => s + k - 1, 0);
  if (missingRows === 0) return same;
  const longest = steps.indexOf(Math.max(...steps));
  if (refuse) {
    fail(
      'bad_data',
      fieldPath(table, longest + 1, time.index),
      `a row at every time ${unit} apart in column ${JSON.stringify(time.name)} (missing rows are refused here)`,
      `${spanWords(step, steps[longest], unit)} after line ${table.rows[longest].line}`,
    );
  }
  if (missingRows > n) {
    // Most of the series would be put back: the spacing changes. Where: the first of ten wide gaps in a row.
    const run = Math.min(10, gaps.length);
    let at = steps.findIndex((_, i) => i + run <= steps.length && steps.slice(i, i + run).every((k) => k > 1));
    if (at < 0) at = longest;
    fail(
      'bad_data',
      fieldPath(table, at + 1, time.index),
      `one spacing in column ${JSON.stringify(time.name)}: rows ${unit} apart up to line ${table.rows[at].line}, as most rows are`,
      `rows ${spanWords(step, steps[at], unit)} apart from here (${missingRows} rows would be put back for ${n} given); forecast the parts apart`,
    );
  }
  const rows: TableRow[] = [];
  const times: number[] = [];
  const inserted: number[] = [];
  table.rows.forEach((row, r) => {
    if (r > 0) {
      for (let k = 1; k < steps[r - 1]; k++) {
        const t = step.kind === 'span' ? time.times[r - 1] + k * step.span : addMonths(time.times[r - 1], k * step.months);
        inserted.push(rows.length);
        rows.push({ fields: row.fields.map((_, c) => (c === time.index ? timeText(t) : '')), line: row.line, starts: row.starts });
        times.push(t);
      }
    }
    rows.push(row);
    times.push(time.times[r]);
  });
  const filled = Float64Array.from(times);
  const gapsPut = steps.filter((k) => k > 1).length;
  return {
    table: { ...table, rows },
    time: { ...time, times: filled, spacing: timeSpacing(filled) },
    inserted,
    note: `inserted ${missingRows} row${missingRows === 1 ? '' : 's'} of missing readings at ${gapsPut} skipped time${gapsPut === 1 ? '' : 's'} in column ${JSON.stringify(time.name)}, the longest ${spanWords(step, steps[longest] - 1, unit)} before line ${table.rows[longest + 1].line}`,
  };
}
