/**
 * Skipped times (data/skipped-times.ts), worked by hand: absent days and months put back as rows of missing cells on
 * the grid of the usual step (whole calendar months for monthly rows), a spacing that changes part way refused at
 * the line where it changes, a gap off the grid left alone with a note, and `refuse` turning a skipped time into an
 * error at the row after it.
 */
import { describe, expect, it } from 'vitest';
import { insertSkippedTimes, parseTable, readTimeColumn } from '@weft/io';
import { weftErrorMessage } from '../../../../tests/helpers/errors.js';

function read(text: string, file = 't.csv') {
  const table = parseTable(text, { file });
  const time = readTimeColumn(table);
  if (time === null) throw new Error('a time column expected');
  return { table, time };
}

const day = (d: number) => new Date(Date.UTC(2026, 0, 1 + d)).toISOString().slice(0, 10);

describe('skipped times', () => {
  it('put back absent days as rows of missing cells, on the line of the row after them, and say so', () => {
    const days = [0, 1, 2, 5, 6, 7, 8, 9, 11, 12];
    const { table, time } = read(`date,level\n${days.map((d) => `${day(d)},${d}`).join('\n')}\n`);
    const filled = insertSkippedTimes(table, time);
    expect(filled.table.rows.map((r) => r.fields.join(','))).toEqual([
      '2026-01-01,0',
      '2026-01-02,1',
      '2026-01-03,2',
      '2026-01-04,',
      '2026-01-05,',
      '2026-01-06,5',
      '2026-01-07,6',
      '2026-01-08,7',
      '2026-01-09,8',
      '2026-01-10,9',
      '2026-01-11,',
      '2026-01-12,11',
      '2026-01-13,12',
    ]);
    expect(filled.inserted).toEqual([3, 4, 10]);
    expect(filled.table.rows[3].line).toBe(5);
    expect(filled.time.spacing?.unit).toBe('days');
    expect(filled.note).toBe('inserted 3 rows of missing readings at 2 skipped times in column "date", the longest 2 days before line 5');
  });

  it('put back whole calendar months for monthly rows, whatever their lengths in days', () => {
    const months = ['2025-11', '2025-12', '2026-02', '2026-03', '2026-06', '2026-07', '2026-08'];
    const { table, time } = read(`month,sales\n${months.map((m, i) => `${m},${i}`).join('\n')}\n`);
    const filled = insertSkippedTimes(table, time);
    expect(filled.table.rows.map((r) => r.fields[0])).toEqual([
      '2025-11',
      '2025-12',
      '2026-01-01',
      '2026-02',
      '2026-03',
      '2026-04-01',
      '2026-05-01',
      '2026-06',
      '2026-07',
      '2026-08',
    ]);
    expect(Array.from(filled.time.times.subarray(2, 3))).toEqual([Date.UTC(2026, 0, 1)]);
  });

  it('refuse a spacing that changes part way at the line where it changes, and a skipped time when asked to', () => {
    // Daily for 40 rows, then weekly for 20: putting back the weeks' days would make most of the series missing.
    const dates = [...Array.from({ length: 40 }, (_, i) => i), ...Array.from({ length: 20 }, (_, i) => 39 + 7 * (i + 1))];
    const { table, time } = read(`date,level\n${dates.map((d) => `${day(d)},1`).join('\n')}\n`, 'changes.csv');
    expect(weftErrorMessage(() => insertSkippedTimes(table, time))).toBe(
      'Bad data at changes.csv:42:1: expected one spacing in column "date": rows days apart up to line 41, as most rows are, received rows 7 days apart from here (120 rows would be put back for 60 given); forecast the parts apart',
    );
    // Weekly for most rows after a daily start: the daily rows are off the weekly grid, said with where.
    const weekly = [...Array.from({ length: 20 }, (_, i) => i), ...Array.from({ length: 40 }, (_, i) => 19 + 7 * (i + 1))];
    const later = read(`date,level\n${weekly.map((d) => `${day(d)},1`).join('\n')}\n`, 'weekly.csv');
    expect(insertSkippedTimes(later.table, later.time).note).toBe(
      'note: time column "date": weekly.csv:3:1 is off the grid of rows weeks apart (0.14 steps after the row above): no rows put back for skipped times',
    );
    const gap = read(`date,level\n${[0, 1, 2, 4, 5].map((d) => `${day(d)},1`).join('\n')}\n`, 'gap.csv');
    expect(weftErrorMessage(() => insertSkippedTimes(gap.table, gap.time, true))).toBe(
      'Bad data at gap.csv:5:1: expected a row at every time days apart in column "date" (missing rows are refused here), received 2 days after line 4',
    );
  });

  it('leave a gap off the grid as it is, with a note naming where', () => {
    const times = ['2026-01-01T00:00', '2026-01-01T01:00', '2026-01-01T02:00', '2026-01-01T03:30', '2026-01-01T04:30'];
    const { table, time } = read(`time,level\n${times.map((t) => `${t},1`).join('\n')}\n`, 'off.csv');
    const filled = insertSkippedTimes(table, time);
    expect(filled.table).toBe(table);
    expect(filled.note).toBe(
      'note: time column "time": off.csv:5:1 is off the grid of rows hours apart (1.5 steps after the row above): no rows put back for skipped times',
    );
  });
});
