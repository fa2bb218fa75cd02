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
    expect(readSeries(table)).toEqual({
      columns: ['level', 'flow'],
      targets: ['level', 'flow'],
      values: [
        [1, 10],
        [2, 20],
      ],
      missing: [0, 0],
      notes: [],
      leftOut: ['day (no numbers: "mon" at line 2)'],
    });
    expect(readSeries(table, { columns: ['flow'], targets: ['flow'] })).toEqual({
      columns: ['flow'],
      targets: ['flow'],
      values: [[10], [20]],
      missing: [0],
      notes: [],
      leftOut: [],
    });
  });

  it('names the cell of a partly numeric column, an unknown column and a target not read', () => {
    const message = weftErrorMessage;
    expect(message(() => readSeries(parseTable('level\n1\ndry\n', { file: 'r.csv' })))).toBe(
      'Bad data at r.csv:3:1: expected a decimal number in column "level", received "dry" (1 of 2 cells there are; fix the cell, mark missing readings with --missing-marker, or choose the columns)',
    );
    expect(message(() => readSeries(table, { targets: ['depth'] }))).toBe(
      'Bad data at river.csv:1:1: expected a column named "depth" (a column to forecast), received the columns day, level, flow',
    );
    expect(message(() => readSeries(table, { columns: ['level'], targets: ['flow'] }))).toBe(
      'Bad data at river.csv:1:1: expected a target among the columns read (level), received "flow"',
    );
  });
});

describe('readSeries with missing readings', () => {
  const gappy = parseTable('day,level,flow,note\nmon,1,,\ntue,NA,20,\nwed,-,n/a,\nthu,4, 40 ,\n', { file: 'gaps.csv' });

  it('reads the standard markers (empty, NA, N/A in any case, -) as missing, counts them per column, and leaves out a column with every cell missing', () => {
    const read = readSeries(gappy);
    expect(read.columns).toEqual(['level', 'flow']);
    expect(read.values).toEqual([
      [1, NaN],
      [NaN, 20],
      [NaN, NaN],
      [4, 40],
    ]);
    expect(read.missing).toEqual([2, 2]);
    expect(read.leftOut).toEqual(['day (no numbers: "mon" at line 2)', 'note (every cell missing)']);
  });

  it('refuses a column chosen with every cell missing, and any missing cell when asked to, at its file:line:column', () => {
    expect(weftErrorMessage(() => readSeries(gappy, { columns: ['note'] }))).toBe(
      'Bad data at gaps.csv:2:8: expected a column with at least one reading ("note" was chosen), received every one of its 4 cells missing',
    );
    expect(weftErrorMessage(() => readSeries(gappy, { targets: ['note'], choices: { columns: 'with --columns', targets: 'for --target' } }))).toBe(
      'Bad data at gaps.csv:2:8: expected a column with at least one reading ("note" was chosen for --target), received every one of its 4 cells missing',
    );
    expect(weftErrorMessage(() => readSeries(gappy, { refuseMissing: true }))).toBe(
      'Bad data at gaps.csv:2:7: expected a reading in column "flow" (missing cells are refused here), received ""',
    );
  });

  it('adds the markers given, and notes one that is also a number with the first cell it took', () => {
    const sentinel = parseTable('level\n3\n-999\n5\n-999\n', { file: 's.csv' });
    const read = readSeries(sentinel, { markers: ['-999'] });
    expect(read.values).toEqual([[3], [NaN], [5], [NaN]]);
    expect(read.notes).toEqual(['note: the missing marker "-999" is also a number; 2 cells holding it were read as missing, the first at s.csv:3:1']);
    // A cell that is neither a number nor a marker is still an error where it stands.
    expect(weftErrorMessage(() => readSeries(parseTable('level\n3\n?\n5\n', { file: 'q.csv' })))).toBe(
      'Bad data at q.csv:3:1: expected a decimal number in column "level", received "?" (2 of 3 cells there are; fix the cell, mark missing readings with --missing-marker, or choose the columns)',
    );
    expect(readSeries(parseTable('level\n3\n?\n5\n', { file: 'q.csv' }), { markers: ['?'] }).values).toEqual([[3], [NaN], [5]]);
  });
});

describe('buildVocabulary', () => {
  it('puts the unknown token first and the distinct pieces after it in code-unit order', () => {
    expect(buildVocabulary(['b', 'a', 'é', 'b', 'A'])).toEqual([UNKNOWN_TOKEN, 'A', 'a', 'b', 'é']);
    expect(buildVocabulary([UNKNOWN_TOKEN, 'x'])).toEqual([UNKNOWN_TOKEN, 'x']);
  });
});
