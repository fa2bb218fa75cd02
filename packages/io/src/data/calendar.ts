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
    case 'months': return ['month of year'];
    case 'quarters': return ['quarter of year'];
    case 'weeks': return ['week of year'];
    case 'days': return ['day of week', 'day of year'];
    case 'years': return [];
    default: return ['time of day', 'day of week'];
  }
}

const DAY = 86_400_000;
const YEAR = 365.2425 * DAY;

/** The fraction of its cycle a UTC time has reached, in [0, 1). */
function fraction(position: CalendarPosition, time: number): number {
  const date = new Date(time);
  const startOfYear = Date.UTC(date.getUTCFullYear(), 0, 1);
  switch (position) {
    case 'month of year': return date.getUTCMonth() / 12;
    case 'quarter of year': return Math.floor(date.getUTCMonth() / 3) / 4;
    case 'week of year': return ((time - startOfYear) / (7 * DAY)) / (YEAR / (7 * DAY));
    case 'day of week': return ((date.getUTCDay() + 6) % 7) / 7;
    case 'day of year': return (time - startOfYear) / YEAR;
    case 'time of day': return (((time % DAY) + DAY) % DAY) / DAY;
  }
}

/** Writes the sine and cosine of each position's angle for `time` into `into` from `offset` (2 per position). */
export function calendarInputs(positions: readonly CalendarPosition[], time: number, into: { [index: number]: number }, offset = 0): void {
  for (let i = 0; i < positions.length; i++) {
    const angle = 2 * Math.PI * fraction(positions[i], time);
    into[offset + 2 * i] = Math.sin(angle);
    into[offset + 2 * i + 1] = Math.cos(angle);
  }
}
