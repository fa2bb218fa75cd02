/**
 * Calendar inputs (data/calendar.ts), worked by hand from their definition (sine and cosine of 2π · the fraction of
 * the cycle, in UTC; common practice), with dates checked against JavaScript's own Date (ECMA-262): 2024-01-01 was a
 * Monday, so the week starts there.
 */
import { describe, expect, it } from 'vitest';
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
});
