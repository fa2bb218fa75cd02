/**
 * Times (data/time-column.ts): the ISO 8601 forms (ISO 8601-1:2019 calendar dates and times of day, with UTC
 * offsets) checked against JavaScript's own `Date.UTC` (ECMA-262 §21.4.1.28), and the spacing of rows.
 */
import { describe, expect, it } from 'vitest';
import { parseTable, parseTime, readTimeColumn, timeSpacing } from '@weft/io';
import { calendarCopies } from '@weft/io/internal';

describe('times in a column', () => {
  it('reads dates, date-times with offsets, year-months, year-quarters and years as UTC', () => {
    expect(parseTime('2024-03-01')).toBe(Date.UTC(2024, 2, 1));
    expect(parseTime('2024-03-01T13:05')).toBe(Date.UTC(2024, 2, 1, 13, 5));
    expect(parseTime('2024-03-01 13:05:09')).toBe(Date.UTC(2024, 2, 1, 13, 5, 9));
    expect(parseTime('2024-03-01T13:05:00+02:00')).toBe(Date.UTC(2024, 2, 1, 11, 5));
    expect(parseTime('2024-03-01T13:05:00Z')).toBe(Date.UTC(2024, 2, 1, 13, 5));
    expect(parseTime('1958-03')).toBe(Date.UTC(1958, 2, 1));
    expect(parseTime('2001-Q3')).toBe(Date.UTC(2001, 6, 1));
    expect(parseTime('2001Q4')).toBe(Date.UTC(2001, 9, 1));
    expect(parseTime(' 1990 ')).toBe(Date.UTC(1990, 0, 1));
  });

  it('refuses days and times that do not exist, and other text', () => {
    for (const text of ['2023-02-29', '2024-13', '2024-04-31', '2024-01-01T24:00', 'Jan 1 2000', '', '12.5']) expect(parseTime(text)).toBeNaN();
  });

  it('names the spacing of hourly, quarter-hourly, daily, monthly and quarterly rows and their seasons, and none for irregular ones', () => {
    const hours = Array.from({ length: 10 }, (_, i) => Date.UTC(2024, 0, 1, i));
    expect(timeSpacing(hours)).toEqual({ unit: 'hours', seasons: [24, 168] });
    expect(timeSpacing(Array.from({ length: 10 }, (_, i) => Date.UTC(2024, 0, 1, 0, 15 * i)))).toEqual({ unit: '15 minutes', seasons: [96, 672] });
    expect(timeSpacing(Array.from({ length: 10 }, (_, i) => Date.UTC(2024, 0, 1 + i)))).toEqual({ unit: 'days', seasons: [7, 365] });
    expect(timeSpacing(Array.from({ length: 30 }, (_, i) => Date.UTC(2000, i, 1)))).toEqual({ unit: 'months', seasons: [12] });
    expect(timeSpacing(Array.from({ length: 12 }, (_, i) => Date.UTC(2000, 3 * i, 1)))).toEqual({ unit: 'quarters', seasons: [4] });
    expect(timeSpacing([0, 5_000, 17_000, 18_000])).toBeNull();
  });

  it('takes the column of most distinct times when several look like times, and names columns that repeat its calendar', () => {
    const rows = Array.from(
      { length: 24 },
      (_, r) => `${2020 + Math.floor(r / 12)},${(r % 12) + 1},${2020 + Math.floor(r / 12)}-${String((r % 12) + 1).padStart(2, '0')}-01,${r * 3}`,
    );
    const table = parseTable(`year,month,date,sales\n${rows.join('\n')}\n`, { file: 'x.csv' });
    // "year" is named like a time and holds years (2 distinct); "date" holds 24 distinct dates.
    const time = readTimeColumn(table)!;
    expect(time.name).toBe('date');
    // Year and month number equal the date's UTC calendar (ECMA-262 Date getters); sales does not.
    expect(calendarCopies(table, time)).toEqual(['year', 'month']);
  });
});
