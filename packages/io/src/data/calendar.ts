/**
 * Calendar inputs: where in the year, week or day a row's time falls, as a sine and cosine pair of 2π · position /
 * period (common practice: the pair puts December next to January and midnight next to 23:00), in UTC. Which
 * positions a series gets follows its spacing: months → month of year; quarters → quarter of year; weeks → week of
 * year; days → day of week and day of year; rows under a day apart → time of day and day of week.
 */
import type { Spacing } from './seasonality.js';

/** A position in a calendar cycle. */
export type CalendarPosition = 'month of year' | 'quarter of year' | 'week of year' | 'day of week' | 'day of year' | 'time of day';

/** The calendar positions a spacing gives (none for years or irregular rows). */
export function calendarFor(spacing: Spacing | null): CalendarPosition[] {
  if (spacing === null) return [];
  switch (spacing.unit) {
    case 'months':
      return ['month of year'];
    case 'quarters':
      return ['quarter of year'];
    case 'weeks':
      return ['week of year'];
    case 'days':
      return ['day of week', 'day of year'];
    case 'years':
      return [];
    default:
      return ['time of day', 'day of week'];
  }
}

const DAY = 86_400_000;
const YEAR = 365.2425 * DAY;

/**
 * The UTC year and month (0–11) of a day counted from 1970-01-01, by the civil-from-days algorithm of H. Hinnant,
 * "chrono-Compatible Low-Level Date Algorithms" (proleptic Gregorian calendar), written into `into` [year, month]:
 * no Date is made, so a forecaster reading times allocates nothing.
 */
function civilFromDays(days: number, into: Float64Array): void {
  const z = days + 719468;
  const era = Math.floor(z / 146097);
  const doe = z - era * 146097;
  const yoe = Math.floor((doe - Math.floor(doe / 1460) + Math.floor(doe / 36524) - Math.floor(doe / 146096)) / 365);
  const doy = doe - (365 * yoe + Math.floor(yoe / 4) - Math.floor(yoe / 100));
  const mp = Math.floor((5 * doy + 2) / 153);
  const month = mp < 10 ? mp + 3 : mp - 9;
  into[0] = yoe + era * 400 + (month <= 2 ? 1 : 0);
  into[1] = month - 1;
}

/** Days from 1970-01-01 to 1 January of `year` (the inverse direction of the same paper's days-from-civil), into `into[2]`. */
function daysToNewYear(year: number, into: Float64Array): void {
  const y = year - 1;
  const era = Math.floor(y / 400);
  const yoe = y - era * 400;
  const doy = 306; // 1 January is day 306 of the March-based year before it
  const doe = yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy;
  into[2] = era * 146097 + doe - 719468;
}

// [year, month, days to new year, fraction, time]: numbers pass through here rather than as arguments and results,
// so none is boxed.
const civil = new Float64Array(5);

/** The fraction of its cycle the UTC time in `civil[4]` has reached, in [0, 1), into `civil[3]`. */
function fraction(position: CalendarPosition): void {
  const time = civil[4];
  const days = Math.floor(time / DAY);
  civilFromDays(days, civil);
  daysToNewYear(civil[0], civil);
  const startOfYear = civil[2] * DAY;
  switch (position) {
    case 'month of year':
      civil[3] = civil[1] / 12;
      break;
    case 'quarter of year':
      civil[3] = Math.floor(civil[1] / 3) / 4;
      break;
    case 'week of year':
      civil[3] = (time - startOfYear) / (7 * DAY) / (YEAR / (7 * DAY));
      break;
    // 1970-01-01 was a Thursday: Monday is 0.
    case 'day of week':
      civil[3] = ((((days + 3) % 7) + 7) % 7) / 7;
      break;
    case 'day of year':
      civil[3] = (time - startOfYear) / YEAR;
      break;
    case 'time of day':
      civil[3] = (((time % DAY) + DAY) % DAY) / DAY;
      break;
  }
}

/** Writes the sine and cosine of each position's angle for `time` into `into` from `offset` (2 per position). */
export function calendarInputs(positions: readonly CalendarPosition[], time: number, into: { [index: number]: number }, offset = 0): void {
  civil[4] = time;
  writeAngles(positions, into, offset);
}

/** As calendarInputs, the time read from `times[index]` (so a hot loop passes no number that needs boxing). */
export function calendarInputsAt(
  positions: readonly CalendarPosition[],
  times: ArrayLike<number>,
  index: number,
  into: { [index: number]: number },
  offset: number,
): void {
  civil[4] = times[index];
  writeAngles(positions, into, offset);
}

function writeAngles(positions: readonly CalendarPosition[], into: { [index: number]: number }, offset: number): void {
  const time = civil[4];
  for (let i = 0; i < positions.length; i++) {
    civil[4] = time;
    fraction(positions[i]);
    const angle = 2 * Math.PI * civil[3];
    into[offset + 2 * i] = Math.sin(angle);
    into[offset + 2 * i + 1] = Math.cos(angle);
  }
}
