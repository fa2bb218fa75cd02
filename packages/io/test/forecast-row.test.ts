/**
 * Reading a row's cells for a row forecaster (forecast-row.ts): numbers as they are, text parsed, and, where the model
 * takes missing readings, the markers of missing.ts and NaN read as missing (NaN); anything else, and a missing
 * reading for a model without a rule for them, is a one-line error naming the row and the column.
 */
import { describe, expect, it } from 'vitest';
import { missingTest } from '@weft/io/internal';
import { valueAt } from '../src/forecast-row.js';

describe("reading a row's cells", () => {
  const markers = missingTest(['-999']);

  it('take numbers as they are and parse text', () => {
    expect(valueAt({ heat: 21.5 }, 'heat', 'row 1', null)).toBe(21.5);
    expect(valueAt({ heat: ' 21.5 ' }, 'heat', 'row 1', null)).toBe(21.5);
  });

  it('read markers and NaN as missing for a model that takes missing readings', () => {
    for (const cell of ['', 'NA', 'null', '-', '-999', Number.NaN]) expect(valueAt({ heat: cell }, 'heat', 'row 2', markers)).toBeNaN();
  });

  it('refuse text that is neither a number nor a marker, a missing reading without a rule, and an absent column, naming where', () => {
    expect(() => valueAt({ heat: 'warm' }, 'heat', 'row 3', markers)).toThrowError(
      'Bad data at row 3.heat: expected a finite number or a missing-reading marker, received "warm"',
    );
    expect(() => valueAt({ heat: 'NA' }, 'heat', 'row 4', null)).toThrowError(
      'Bad data at row 4.heat: expected a finite number (this model records no rule for missing readings: retrain it with this version), received "NA"',
    );
    expect(() => valueAt({ flow: 1 }, 'heat', 'row 5', markers)).toThrowError(
      'Bad data at row 5.heat: expected a value for column "heat", which the model reads, received nothing',
    );
  });
});
