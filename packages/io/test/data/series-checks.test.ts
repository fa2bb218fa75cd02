/**
 * The checks and cuts of a series table (series-checks.ts), through prepareSeries as the command meets them: three
 * parts in time order worked by hand; times that repeat, go back or skip more than a season off the grid refused at
 * their file:line:column (skipped times on the grid are put back: skipped-times.ts); a column that counts rows or names several series noted.
 */
import { describe, expect, it } from 'vitest';
import { prepareSeries } from '@weft/io';
import { seriesParts } from '@weft/io/internal';

const options = { window: 4, lookback: 0, streams: 2, validationShare: 0.2, testShare: 0.1, horizon: 1, seed: '1' };

function series(rows: number, cell: (r: number) => string): string {
  return `site,level\n${Array.from({ length: rows }, (_, r) => `north,${cell(r)}`).join('\n')}\n`;
}

/** A daily series from 2026-01-01 with a time column. */
function dated(
  rows: number,
  cell: (r: number) => string,
  date: (r: number) => string = (r) => new Date(Date.UTC(2026, 0, 1 + r)).toISOString().slice(0, 10),
): string {
  return `date,level\n${Array.from({ length: rows }, (_, r) => `${date(r)},${cell(r)}`).join('\n')}\n`;
}

describe('the checks and cuts of a series', () => {
  it('cut the rows into training, validation and test parts in time order, each at least one row', () => {
    expect(seriesParts(100, { validationShare: 0.2, testShare: 0.1, horizon: 1 })).toEqual({ rows: 100, trainEnd: 70, testStart: 90 });
    // 5 rows: a tenth rounds to 0, so each part keeps one row.
    expect(seriesParts(5, { validationShare: 0.1, testShare: 0.1, horizon: 1 })).toEqual({ rows: 5, trainEnd: 3, testStart: 4 });
  });

  it('reads a time column, names its spacing, and records the three parts of the rows in the metadata', () => {
    const prepared = prepareSeries(
      dated(100, (r) => String(Math.sin(r))),
      'daily.csv',
      options,
    );
    expect(prepared.notes).toEqual(['time column: date (rows days apart)']);
    expect(prepared.metadata.timeColumn).toBe('date');
    expect(prepared.metadata.split).toEqual({ kind: 'series', rows: 100, trainingRows: 70, validationRows: 20, testRows: 10 });
  });

  it('refuses a time that does not parse, naming its line and column', () => {
    expect(() =>
      prepareSeries(
        dated(
          60,
          (r) => String(r),
          (r) => (r === 4 ? '2026-02-30' : `2026-01-${String((r % 28) + 1).padStart(2, '0')}`),
        ),
        'daily.csv',
        options,
      ),
    ).toThrowError(
      'Bad data at daily.csv:6:1: expected a time in column "date" (2024-03-01, 2024-03-01T13:00, 2024-03, 2024-Q1 or 2024), received "2026-02-30"',
    );
  });

  it('refuses a test share that leaves fewer rows than the horizon, naming the flag', () => {
    expect(() =>
      prepareSeries(
        series(60, (r) => String(r)),
        'levels.csv',
        { ...options, testShare: 0.02, horizon: 3 },
      ),
    ).toThrowError('Invalid option at --test: expected a share leaving at least 3 test rows (the horizon) of the 60: 0.05 or more, received 0.02 (1 row)');
  });

  it('refuses times that repeat, go back or skip more than a season, at their line and column, and notes a column naming series or counting rows', () => {
    const twoCities = `date,city,temperature\n${Array.from({ length: 60 }, (_, r) => `2026-01-${String(Math.floor(r / 2) + 1).padStart(2, '0')},${r % 2 === 0 ? 'north' : 'south'},${r % 7}`).join('\n')}\n`;
    // Two cities taking turns: a text column under which no city repeats a time names the series (panel.ts).
    expect(prepareSeries(twoCities, 'cities.csv', options).notes[0]).toMatch(/^many series: 2 series named in column "city" \(found/);
    const repeated = `date,temperature\n${Array.from({ length: 60 }, (_, r) => `2026-01-${String(Math.floor(r / 2) + 1).padStart(2, '0')},${r % 7}`).join('\n')}\n`;
    expect(() => prepareSeries(repeated, 'cities.csv', options)).toThrowError(
      'Bad data at cities.csv:3:1: expected a time after line 2\'s in column "date", as a series has one row per time (several series in one table? name the column that tells them apart with --id-column NAME to forecast them all with one model), received "2026-01-01" again (as on line 2)',
    );
    const back = dated(
      60,
      (r) => String(Math.sin(r)),
      (r) => new Date(Date.UTC(2026, 0, 1 + (r === 30 ? 10 : r))).toISOString().slice(0, 10),
    );
    expect(() => prepareSeries(back, 'back.csv', options)).toThrowError(
      'Bad data at back.csv:32:1: expected a time after line 31\'s "2026-01-30" in column "date" (sort the file by time), received "2026-01-11"',
    );
    const hours = (r: number) => new Date(Date.UTC(2026, 0, 1, r < 100 ? r : r + 30)).toISOString().slice(0, 16);
    const gap = `time,level\n${Array.from({ length: 200 }, (_, r) => `${hours(r)},${(10 + 3 * Math.sin((2 * Math.PI * r) / 24) + 0.01 * r).toFixed(3)}`).join('\n')}\n`;
    // Skipped hours on the grid are put back as missing rows; refused with --missing refuse.
    expect(prepareSeries(gap, 'gap.csv', options).notes).toContain(
      'inserted 30 rows of missing readings at 1 skipped time in column "time", the longest 30 hours before line 102',
    );
    expect(() => prepareSeries(gap, 'gap.csv', { ...options, missing: 'refuse' })).toThrowError(
      'Bad data at gap.csv:102:1: expected a row at every time hours apart in column "time" (missing rows are refused here), received 31 hours after line 101',
    );
    // Off the grid (half an hour more), nothing is put back and a gap longer than a season stays an error.
    const offGrid = gap.replace('2026-01-06T10:00', '2026-01-06T10:30');
    expect(() => prepareSeries(offGrid, 'gap.csv', options)).toThrowError(
      'Bad data at gap.csv:102:1: expected a time at most a season (24 rows, hours apart) after line 101\'s in column "time"; fill the missing rows, or forecast the parts apart, received "2026-01-06T10:30", 32 rows\' time later',
    );
    const named = `site,level\n${Array.from({ length: 60 }, (_, r) => `${r < 30 ? 'north' : 'south'},${Math.sin(r)}`).join('\n')}\n`;
    expect(prepareSeries(named, 'sites.csv', options).notes).toContain(
      'note: column "site" names 2 repeating values: if each names a series, the table holds several series and weft would pool them into one; forecast each with one model with --id-column site, or pick one series\'s rows',
    );
    const counted =
      prepareSeries(`step,level\n${Array.from({ length: 60 }, (_, r) => `${r + 1},${Math.sin(r)}`).join('\n')}\n`, 'steps.csv', options).notes ?? [];
    expect(counted).toEqual(['note: column "step" counts the rows (1, 2, 3, …): it is probably an index, not a reading; leave it out with --columns']);
  });
});
