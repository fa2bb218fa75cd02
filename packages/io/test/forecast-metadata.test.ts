/**
 * Reading what a forecast model's metadata says about running it (forecast-metadata.ts): the window of a model on
 * sliding windows, the rows ahead of its outputs and its prediction intervals, each malformed field refused in one
 * line naming it (worked by hand from docs/weight-format.md).
 */
import { describe, expect, it } from 'vitest';
import { forecastIntervals, forecastPanel, forecastRowsAhead, forecastWindow } from '@weft/io';
import { seriesMetadata } from '@weft/io/internal';

const window = { rows: 4, deviation: [0.5, 2], targetDeviation: [0.25] };

describe('forecast metadata', () => {
  it('gives the window as recorded, or null for a model trained on streams, and refuses each malformed field', () => {
    expect(forecastWindow({}, 2, 1)).toBeNull();
    expect(forecastWindow({ window }, 2, 1)).toEqual(window);
    expect(() => forecastWindow({ window: { ...window, rows: 0 } }, 2, 1)).toThrowError(
      'Bad weight file at metadata.window.rows: expected a whole number ≥ 1, received 0',
    );
    expect(() => forecastWindow({ window: { ...window, deviation: [1] } }, 2, 1)).toThrowError(
      'Bad weight file at metadata.window.deviation: expected 2 finite numbers > 0 (one per column), received [1]',
    );
    expect(() => forecastWindow({ window }, 2, 1, 3)).toThrowError(
      'Bad weight file at metadata.window.targetDeviation: expected 3 finite numbers > 0 (one per target and row ahead, rows ahead outer), received [0.25]',
    );
    expect(() => forecastWindow({ window: { ...window, hybrid: [{ method: 'magic' }] } }, 2, 1)).toThrowError(
      /^Bad weight file at metadata\.window\.hybrid: expected 1 smoothing records/,
    );
    expect(() => forecastWindow({ window: { ...window, calendar: ['hour of moon'] } }, 2, 1)).toThrowError(
      /^Bad weight file at metadata\.window\.calendar: expected calendar positions among month of year/,
    );
    expect(() => forecastWindow({ window: { ...window, calendar: ['month of year'] } }, 2, 1)).toThrowError(
      /^Bad weight file at metadata\.timeColumn: expected the name of the time column/,
    );
    expect(() => forecastWindow({ window: { ...window, log: [true] } }, 2, 1)).toThrowError(
      'Bad weight file at metadata.window.log: expected 2 true or false (one per column), received [true]',
    );
  });

  it('gives the rows ahead: the horizon alone, or every row up to it', () => {
    expect(forecastRowsAhead({ horizon: 6 })).toEqual([6]);
    expect(forecastRowsAhead({ horizon: 3, rowsAhead: 'all' })).toEqual([1, 2, 3]);
    expect(forecastRowsAhead({})).toEqual([1]);
    expect(() => forecastRowsAhead({ horizon: 3, rowsAhead: 'some' })).toThrowError(
      'Bad weight file at metadata.rowsAhead: expected "all" (every row up to the horizon) or no entry (the horizon alone), received "some"',
    );
  });

  it('gives the intervals, an unbounded one where none was recorded, and refuses a level or count that does not fit', () => {
    expect(forecastIntervals({}, 2)).toBeNull();
    expect(forecastIntervals({ intervals: { level: 0.9, halfWidth: [1.5, null] } }, 2)).toEqual({ level: 0.9, halfWidth: [1.5, Infinity] });
    expect(() => forecastIntervals({ intervals: { level: 90, halfWidth: [1, 1] } }, 2)).toThrowError(
      'Bad weight file at metadata.intervals.level: expected a share between 0 and 1, received 90',
    );
    expect(() => forecastIntervals({ intervals: { level: 0.9, halfWidth: [1] } }, 2)).toThrowError(
      'Bad weight file at metadata.intervals.halfWidth: expected 2 half-widths ≥ 0 (null for none), one per row ahead and target, received [1]',
    );
    expect(() => forecastIntervals({ intervals: { level: 0.9, halfWidth: [-1, 1] } }, 2)).toThrowError(/^Bad weight file at metadata\.intervals\.halfWidth/);
  });

  it("gives a model of many series' record, each series' metadata as one series' with its block of half-widths, and refuses a malformed record", () => {
    const series = [
      { id: 'north', window, normalisation: { mean: [1], deviation: [2] } },
      { id: 'south', window: { ...window, rows: 4 }, normalisation: { mean: [5], deviation: [6] } },
    ];
    const meta = {
      task: 'forecast',
      columns: ['heat'],
      targetColumns: ['heat'],
      horizon: 1,
      panel: { idColumn: 'site', idInputs: true, series },
      intervals: { level: 0.95, halfWidth: [1, 2] },
    };
    expect(forecastPanel(meta)).toEqual({ idColumn: 'site', idInputs: true, ids: ['north', 'south'] });
    expect(forecastPanel({ task: 'forecast' })).toBeNull();
    expect(seriesMetadata(meta, 'south')).toEqual({
      task: 'forecast',
      columns: ['heat'],
      targetColumns: ['heat'],
      horizon: 1,
      window: series[1].window,
      normalisation: series[1].normalisation,
      intervals: { level: 0.95, halfWidth: [2] },
      seriesInput: { index: 1, count: 2 },
    });
    expect(() => forecastPanel({ panel: { series } })).toThrowError(
      'Bad weight file at metadata.panel.idColumn: expected the name of the column naming each series, received nothing',
    );
    expect(() => forecastPanel({ panel: { idColumn: 'site', series: [] } })).toThrowError(
      /^Bad weight file at metadata\.panel\.series: expected an array of records, each with the series' id/,
    );
    expect(() => forecastPanel({ panel: { idColumn: 'site', series: [series[0], series[0]] } })).toThrowError(
      'Bad weight file at metadata.panel.series[1].id: expected ids that differ, received "north" again',
    );
    expect(() => forecastPanel({ window, panel: { idColumn: 'site', series } })).toThrowError(
      /^Bad weight file at metadata\.window: expected no entry in a model of many series/,
    );
    expect(() => seriesMetadata({ ...meta, intervals: { level: 0.95, halfWidth: [1, 2, 3] } }, 'north')).toThrowError(
      /^Bad weight file at metadata\.intervals\.halfWidth: expected half-widths for each of the 2 series in turn/,
    );
  });
});
