/**
 * Times in a table's column: ISO 8601 dates and date-times (`2024-03-01`, `2024-03-01T13:00`, `2024-03-01 13:00:00`,
 * with `Z` or an offset), year-months (`2024-03`), year-quarters (`2024-Q1`, `2024Q1`) and plain years (`1990`),
 * read as UTC milliseconds; and how rows are spaced (the median gap between rows, named in calendar units), which
 * gives the seasons a forecaster tries first (seasonality.ts).
 */
import type { Spacing } from './seasonality.js';

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

/** How rows are spaced: the median gap between consecutive times in calendar units, or null when irregular. */
export function timeSpacing(times: ArrayLike<number>): Spacing | null {
  const gaps: number[] = [];
  for (let i = 1; i < times.length; i++) gaps.push(times[i] - times[i - 1]);
  if (gaps.length === 0) return null;
  gaps.sort((a, b) => a - b);
  const median = gaps[Math.floor(gaps.length / 2)];
  const near = (unit: number, low: number, high: number) => median >= unit * low && median <= unit * high;
  if (median === MINUTE) return 'minutes';
  if (median === HOUR) return 'hours';
  if (median === DAY) return 'days';
  if (median === 7 * DAY) return 'weeks';
  if (near(DAY, 28, 31)) return 'months';
  if (near(DAY, 89, 92)) return 'quarters';
  if (near(DAY, 365, 366)) return 'years';
  return null;
}
