/**
 * Calendar inputs (data/calendar.ts), worked by hand from their definition (sine and cosine of 2π · the fraction of
 * the cycle, in UTC; common practice), with dates checked against JavaScript's own Date (ECMA-262): 2024-01-01 was a
 * Monday, so the week starts there.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { calendarFor, calendarInputs } from '@weft/io';

describe('calendar inputs', () => {
  it('choose the positions of a spacing: month of year for months, day of week and year for days, time of day and day of week under a day', () => {
    expect(calendarFor({ unit: 'months', seasons: [12] })).toEqual(['month of year']);
    expect(calendarFor({ unit: 'days', seasons: [7, 365] })).toEqual(['day of week', 'day of year']);
    expect(calendarFor({ unit: '15 minutes', seasons: [96, 672] })).toEqual(['time of day', 'day of week']);
    expect(calendarFor({ unit: 'years', seasons: [] })).toEqual([]);
    expect(calendarFor(null)).toEqual([]);
  });

  it('put January at angle 0, April a quarter turn on, Monday at 0 and 06:00 a quarter of the day', () => {
    const out = new Array<number>(6).fill(NaN);
    calendarInputs(['month of year'], Date.UTC(2024, 0, 15), out);
    expect([out[0], out[1]]).toEqual([0, 1]);
    calendarInputs(['month of year'], Date.UTC(2024, 3, 1), out);
    expect(out[0]).toBeCloseTo(1, 15);
    expect(out[1]).toBeCloseTo(0, 15);
    // Monday 2024-01-01 06:00: day of week 0, time of day ¼ (sin 1, cos 0), written from offset 2.
    calendarInputs(['day of week', 'time of day'], Date.UTC(2024, 0, 1, 6), out, 2);
    expect(new Date(Date.UTC(2024, 0, 1)).getUTCDay()).toBe(1);
    expect([out[2], out[3]]).toEqual([0, 1]);
    expect(out[4]).toBeCloseTo(1, 15);
    expect(out[5]).toBeCloseTo(0, 15);
    // Thursday: 3 days into the week.
    calendarInputs(['day of week'], Date.UTC(2024, 0, 4), out);
    expect(out[0]).toBeCloseTo(Math.sin((2 * Math.PI * 3) / 7), 15);
  });

  it('agree with the calendar of ECMA-262 Date for times from the year 1600 to 2400, before and after 1970', () => {
    const positions = ['month of year', 'quarter of year', 'week of year', 'day of week', 'day of year', 'time of day'] as const;
    const DAY = 86_400_000;
    const YEAR = 365.2425 * DAY;
    const out = new Float64Array(12);
    const random = new Random('calendar');
    const start = Date.UTC(1600, 0, 1);
    const end = Date.UTC(2400, 0, 1);
    // Every 1 January and 28 February to 1 March around leap years, and random times.
    const times = [Date.UTC(2000, 1, 29), Date.UTC(1900, 2, 1), Date.UTC(1969, 11, 31, 23, 59), Date.UTC(1970, 0, 1), Date.UTC(2100, 0, 1) - 1];
    for (let i = 0; i < 2000; i++) times.push(Math.floor(start + random.uniform() * (end - start)));
    for (const time of times) {
      calendarInputs(positions, time, out);
      const date = new Date(time);
      const startOfYear = Date.UTC(date.getUTCFullYear(), 0, 1);
      const fractions = [
        date.getUTCMonth() / 12,
        Math.floor(date.getUTCMonth() / 3) / 4,
        (time - startOfYear) / YEAR,
        ((date.getUTCDay() + 6) % 7) / 7,
        (time - startOfYear) / YEAR,
        (((time % DAY) + DAY) % DAY) / DAY,
      ];
      fractions.forEach((f, i) => {
        expect(out[2 * i]).toBeCloseTo(Math.sin(2 * Math.PI * f), 12);
        expect(out[2 * i + 1]).toBeCloseTo(Math.cos(2 * Math.PI * f), 12);
      });
    }
  });
});
