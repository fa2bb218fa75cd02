/**
 * Times in a table's column: ISO 8601 dates and date-times (`2024-03-01`, `2024-03-01T13:00`, `2024-03-01 13:00:00`,
 * with `Z` or an offset), year-months (`2024-03`), year-quarters (`2024-Q1`, `2024Q1`) and plain years (`1990`),
 * read as UTC milliseconds; and how rows are spaced (the median gap between rows, named in calendar units), which
 * gives the seasons a forecaster tries first (seasonality.ts).
 */
import { fail } from '@weft/core';
import type { Spacing } from './seasonality.js';
import { columnNamed, decimal, fieldPath } from './table.js';
import type { Table } from './table.js';

const DATE_TIME = /^(\d{4})-(\d{2})-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?(Z|[+-]\d{2}:?\d{2})?)?$/;
const YEAR_MONTH = /^(\d{4})-(\d{2})$/;
const YEAR_QUARTER = /^(\d{4})-?Q([1-4])$/i;
const YEAR = /^(\d{4})$/;

/** A time as UTC milliseconds, or NaN when the text is none of the forms above (or names no real day). */
export function parseTime(text: string): number {
  const s = text.trim();
  let m = DATE_TIME.exec(s);
  if (m !== null) {
    const [, y, mo, d, h = '0', mi = '0', se = '0', zone] = m;
    const ms = Date.UTC(Number(y), Number(mo) - 1, Number(d), Number(h), Number(mi), Number(se));
    const check = new Date(ms);
    if (check.getUTCMonth() !== Number(mo) - 1 || check.getUTCDate() !== Number(d) || Number(h) > 23 || Number(mi) > 59 || Number(se) > 59) return NaN;
    if (zone === undefined || zone === 'Z') return ms;
    const sign = zone[0] === '-' ? -1 : 1;
    const digits = zone.slice(1).replace(':', '');
    return ms - sign * (Number(digits.slice(0, 2)) * 60 + Number(digits.slice(2))) * 60000;
  }
  m = YEAR_MONTH.exec(s);
  if (m !== null) return Number(m[2]) >= 1 && Number(m[2]) <= 12 ? Date.UTC(Number(m[1]), Number(m[2]) - 1, 1) : NaN;
  m = YEAR_QUARTER.exec(s);
  if (m !== null) return Date.UTC(Number(m[1]), (Number(m[2]) - 1) * 3, 1);
  m = YEAR.exec(s);
  if (m !== null) return Date.UTC(Number(m[1]), 0, 1);
  return NaN;
}

const MINUTE = 60_000;
const HOUR = 60 * MINUTE;
const DAY = 24 * HOUR;

/**
 * How rows are spaced: the median gap between consecutive times in calendar units, or null when irregular (fewer
 * than nine gaps in ten of that unit).
 */
export function timeSpacing(times: ArrayLike<number>): Spacing | null {
  const gaps: number[] = [];
  for (let i = 1; i < times.length; i++) gaps.push(times[i] - times[i - 1]);
  if (gaps.length === 0) return null;
  gaps.sort((a, b) => a - b);
  const median = gaps[Math.floor(gaps.length / 2)];
  // Regular when nine gaps in ten are the median's calendar unit (a month is 28 to 31 days, and so on).
  const regular = (low: number, high: number) => gaps.filter((g) => g >= low && g <= high).length >= 0.9 * gaps.length;
  const near = (unit: number, low: number, high: number) => median >= unit * low && median <= unit * high && regular(unit * low, unit * high);
  if (median > 0 && median < DAY && DAY % median === 0 && regular(median, median)) {
    const perDay = DAY / median;
    const unit =
      median % HOUR === 0
        ? median === HOUR
          ? 'hours'
          : `${median / HOUR} hours`
        : median % MINUTE === 0
          ? median === MINUTE
            ? 'minutes'
            : `${median / MINUTE} minutes`
          : `${median / 1000} seconds`;
    return { unit, seasons: perDay * 7 <= 100_000 ? [perDay, perDay * 7] : [perDay] };
  }
  if (median === DAY && regular(DAY, DAY)) return { unit: 'days', seasons: [7, 365] };
  if (median === 7 * DAY && regular(7 * DAY, 7 * DAY)) return { unit: 'weeks', seasons: [52] };
  if (near(DAY, 28, 31)) return { unit: 'months', seasons: [12] };
  if (near(DAY, 89, 92)) return { unit: 'quarters', seasons: [4] };
  if (near(DAY, 365, 366)) return { unit: 'years', seasons: [] };
  return null;
}

/** A table's time column, read. */
export interface TimeColumn {
  /** The column's name. */
  readonly name: string;
  /** Its index in the table's header. */
  readonly index: number;
  /** Each row's time, UTC milliseconds. */
  readonly times: Float64Array;
  /** How rows are spaced, or null when the times repeat, go back, or are irregular. */
  readonly spacing: Spacing | null;
  /** The first row (0-based) whose time repeats an earlier row's, or −1. */
  readonly repeated: number;
  /** The first row (0-based) whose time is before the row above it, or −1. */
  readonly backwards: number;
}

/** Header names that say a column holds times (common practice in exported tables). */
const TIME_NAMES = /^(date|time|datetime|timestamp|day|week|month|quarter|year|period)$/i;

/**
 * The table's time column: the one named, or else the first column named like a time (date, time, month, …) or
 * whose first value is a time and not a number. Every value of it must parse (parseTime): the first that does not is
 * an error at its file:line:column. Null when no column looks like times.
 */
export function readTimeColumn(table: Table, name?: string, choice = 'a time column'): TimeColumn | null {
  let index = -1;
  if (name !== undefined) index = columnNamed(table, name, choice);
  else if (table.rows.length > 0) {
    // Of several such columns (a year column beside a date), the one with the most distinct times; the first on a tie.
    const candidates = table.header.flatMap((h, c) => {
      const first = table.rows[0].fields[c] ?? '';
      const isTime = !Number.isNaN(parseTime(first));
      return (TIME_NAMES.test(h.trim()) && isTime) || (isTime && Number.isNaN(decimal(first))) ? [c] : [];
    });
    const distinct = (c: number) => new Set(table.rows.map((row) => row.fields[c]?.trim())).size;
    index = candidates.length <= 1 ? (candidates[0] ?? -1) : candidates.reduce((best, c) => (distinct(c) > distinct(best) ? c : best));
  }
  if (index < 0) return null;
  const times = new Float64Array(table.rows.length);
  let repeated = -1;
  let backwards = -1;
  const seen = new Set<number>();
  table.rows.forEach((row, r) => {
    const t = parseTime(row.fields[index] ?? '');
    if (Number.isNaN(t)) {
      fail(
        'bad_data',
        fieldPath(table, r, index),
        `a time in column ${JSON.stringify(table.header[index])} (2024-03-01, 2024-03-01T13:00, 2024-03, 2024-Q1 or 2024)`,
        JSON.stringify((row.fields[index] ?? '').trim().slice(0, 80)),
      );
    }
    times[r] = t;
    if (repeated < 0 && seen.has(t)) repeated = r;
    seen.add(t);
    if (backwards < 0 && r > 0 && t < times[r - 1]) backwards = r;
  });
  return { name: table.header[index], index, times, spacing: repeated < 0 && backwards < 0 ? timeSpacing(times) : null, repeated, backwards };
}

/**
 * Columns of numbers that repeat the time column's calendar in every row (the UTC year, month number 1–12, day of
 * the month or hour of each row's time): a year or month column beside a date is not a reading to forecast.
 */
export function calendarCopies(table: Table, time: TimeColumn): string[] {
  if (table.rows.length < 3) return [];
  const parts = [(d: Date) => d.getUTCFullYear(), (d: Date) => d.getUTCMonth() + 1, (d: Date) => d.getUTCDate(), (d: Date) => d.getUTCHours()];
  const dates = Array.from(time.times, (t) => new Date(t));
  return table.header.filter(
    (_, c) =>
      c !== time.index &&
      parts.some((part) => {
        // A part that never changes (every row's hour 0) names nothing.
        if (dates.every((d) => part(d) === part(dates[0]))) return false;
        return table.rows.every((row, r) => decimal(row.fields[c]) === part(dates[r]));
      }),
  );
}
