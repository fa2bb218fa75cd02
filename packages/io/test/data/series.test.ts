/**
 * Series and vocabularies (data/series.ts), worked by hand: columns of numbers found or chosen, text columns left
 * out with the reason, a partly numeric column an error at its first bad cell, targets among the columns read;
 * a vocabulary with the unknown token first and the pieces in code-unit order (ECMAScript's default sort).
 */
import { describe, expect, it } from 'vitest';
import { weftErrorMessage } from '../../../../tests/helpers/errors.js';
import { UNKNOWN_TOKEN, buildVocabulary, parseTable, readSeries } from '@weft/io';

const table = parseTable('day,level,flow\nmon,1,10\ntue,2,20\n', { file: 'river.csv' });

describe('readSeries', () => {
  it('reads every column of numbers, leaves out the rest with the reason, and takes chosen columns and targets', () => {
    expect(readSeries(table)).toEqual({ columns: ['level', 'flow'], targets: ['level', 'flow'], values: [[1, 10], [2, 20]], leftOut: ['day (no numbers: "mon" at line 2)'] });
    expect(readSeries(table, { columns: ['flow'], targets: ['flow'] })).toEqual({ columns: ['flow'], targets: ['flow'], values: [[10], [20]], leftOut: [] });
  });

  it('names the cell of a partly numeric column, an unknown column and a target not read', () => {
    const message = weftErrorMessage;
    expect(message(() => readSeries(parseTable('level\n1\ndry\n', { file: 'r.csv' })))).toBe(
      'Bad data at r.csv:3:1: expected a decimal number in column "level", received "dry" (1 of 2 cells there are; fix the cell, or choose the columns)');
    expect(message(() => readSeries(table, { targets: ['depth'] }))).toBe(
      'Bad data at river.csv:1:1: expected a column named "depth" (a column to forecast), received the columns day, level, flow');
    expect(message(() => readSeries(table, { columns: ['level'], targets: ['flow'] }))).toBe(
      'Bad data at river.csv:1:1: expected a target among the columns read (level), received "flow"');
  });
});

describe('buildVocabulary', () => {
  it('puts the unknown token first and the distinct pieces after it in code-unit order', () => {
    expect(buildVocabulary(['b', 'a', 'é', 'b', 'A'])).toEqual([UNKNOWN_TOKEN, 'A', 'a', 'b', 'é']);
    expect(buildVocabulary([UNKNOWN_TOKEN, 'x'])).toEqual([UNKNOWN_TOKEN, 'x']);
  });
});
