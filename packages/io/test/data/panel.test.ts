/**
 * Many series, one model (panel.ts). The checks: each series is read on its own scale (a series a thousand times
 * larger makes the same training windows: the scaling divides the units out, as Salinas et al. 2020 scale each series
 * for the same reason); every series is cut into its own parts, the test part at the end of each; ids are found or
 * given, and bad tables are refused at their file:line:column. The report and the pooled intervals: panel-report.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { prepareSeries, parseTable } from '@weft/io';
import { seriesRows } from '@weft/io/internal';
import type { SeriesWindows } from '@weft/io';

const options = { window: 32, lookback: 0, streams: 8, validationShare: 0.1, testShare: 0.1, horizon: 1, seed: '1' };

/** Monthly readings of shops from 2010-01, a shared season and trend on each shop's own level, rows taking turns. */
function shops(levels: readonly number[], months: number | readonly number[] = 96, noise = (s: number, r: number) => Math.sin(7 * s + 3 * r)): string {
  const lengths = levels.map((_, s) => (typeof months === 'number' ? months : months[s]));
  const lines: string[] = [];
  for (let r = 0; r < Math.max(...lengths); r++) {
    levels.forEach((level, s) => {
      if (r >= lengths[s]) return;
      const month = `${2010 + Math.floor(r / 12)}-${String((r % 12) + 1).padStart(2, '0')}`;
      lines.push(`${month},shop ${s + 1},${(level * (1 + 0.3 * Math.sin((2 * Math.PI * r) / 12) + 0.002 * r + 0.02 * noise(s, r))).toFixed(6)}`);
    });
  }
  return `month,shop,sales\n${lines.join('\n')}\n`;
}

describe('many series, one model', () => {
  it("finds the column naming series that share times, and trains one model on every series' windows", () => {
    const prepared = prepareSeries(shops([100, 5, 40]), 'shops.csv', options);
    expect(prepared.notes[0]).toBe(
      'many series: 3 series named in column "shop" (found: its names share times; --id-column to choose another, none for one series), one model across them, each read on its own scale',
    );
    const panel = prepared.metadata.panel as { idColumn: string; series: { id: string; split: { testRows: number; rows: number } }[] };
    expect(panel.idColumn).toBe('shop');
    expect(panel.series.map((s) => s.id)).toEqual(['shop 1', 'shop 2', 'shop 3']);
    // Each series is cut on its own: 96 rows, the last 10 the test part.
    expect(panel.series.map((s) => [s.split.rows, s.split.testRows])).toEqual([
      [96, 10],
      [96, 10],
      [96, 10],
    ]);
    const windows = prepared.examples as SeriesWindows;
    // Windows of a quarter of the 76 training rows (less than two seasons); every series' training windows.
    expect(prepared.chosen?.said).toMatch(/^sliding windows of 3 series: 171 training examples of 19 rows/);
    expect(windows.train.length).toBe(3 * (76 - 19 - 1 + 1));
    expect(windows.test.length).toBe(3 * 10);
  });

  it('reads each series on its own scale: a series a thousand times larger makes the same training windows', () => {
    const small = prepareSeries(shops([100, 5, 40]), 'shops.csv', options).examples as SeriesWindows;
    const large = prepareSeries(shops([100, 5000, 40]), 'shops.csv', options).examples as SeriesWindows;
    expect(large.train.length).toBe(small.train.length);
    large.train.forEach((example, i) => {
      // (Equal up to the six decimals the file keeps of the smaller series.)
      example.values.forEach((v, j) => expect(v).toBeCloseTo(small.train[i].values[j], 5));
      example.target.forEach((v, j) => expect(v).toBeCloseTo(small.train[i].target[j], 5));
    });
  });

  it("adds a 0/1 input per series with id inputs, the window's own series 1 in every row", () => {
    const prepared = prepareSeries(shops([100, 5, 40]), 'shops.csv', { ...options, idInputs: true, calendar: false });
    expect(prepared.inputWidth).toBe(1 + 3);
    const windows = prepared.examples as SeriesWindows;
    // The second series' first training window: its rows read [change, 0, 1, 0].
    const second = windows.train[windows.train.length / 3];
    for (let row = 0; row < 19; row++) expect(second.values.slice(row * 4 + 1, row * 4 + 4)).toEqual([0, 1, 0]);
    expect((prepared.metadata.panel as { idInputs: boolean }).idInputs).toBe(true);
  });

  it('leaves out a series too short for its window, horizon and parts with a note, or refuses it at its first id cell', () => {
    const text = shops([100, 5, 40], [96, 30, 96]);
    const prepared = prepareSeries(text, 'shops.csv', options);
    expect(prepared.notes[1]).toBe(
      'left out 1 series shorter than the 31 rows needed (two seasons of 12 rows to train on, 1 row ahead and the validation and test parts): "shop 2" (30 rows from line 3) (--short-series refuse to stop instead)',
    );
    expect((prepared.metadata.panel as { series: unknown[] }).series.length).toBe(2);
    expect(() => prepareSeries(text, 'shops.csv', { ...options, shortSeries: 'refuse' })).toThrowError(
      'Bad data at shops.csv:3:9: expected at least 31 rows for series "shop 2" (two seasons of 12 rows to train on, 1 row ahead and the validation and test parts; --short-series skip leaves such series out), received 30 rows',
    );
  });

  it('refuses a series whose rows go back in time, an empty id, one series alone and streams, each where it is', () => {
    const lines = shops([100, 5]).split('\n');
    // Line 6 (shop 1's third month) moved after line 8: shop 1 goes from 2010-04 back to 2010-03.
    const swapped = [...lines.slice(0, 5), lines[6], lines[7], lines[5], ...lines.slice(8)].join('\n');
    expect(() => prepareSeries(swapped, 'shops.csv', { ...options, idColumn: 'shop' })).toThrowError(
      'Bad data at shops.csv:8:1: expected a time after line 7\'s "2010-04" for series "shop 1" (each series\' rows in time order; series may take turns), received "2010-03"',
    );
    const empty = lines.map((line, i) => (i === 4 ? line.replace('shop 2', '') : line)).join('\n');
    expect(() => prepareSeries(empty, 'shops.csv', { ...options, idColumn: 'shop' })).toThrowError(
      'Bad data at shops.csv:5:9: expected a series name in column "shop", received an empty cell',
    );
    const one = shops([100]);
    expect(() => prepareSeries(one, 'shops.csv', { ...options, idColumn: 'shop' })).toThrowError(
      'Bad data at shops.csv:2:9: expected at least two series named in column "shop" (one series: leave out --id-column), received only "shop 1"',
    );
    expect(() => prepareSeries(shops([100, 5]), 'shops.csv', { ...options, examples: 'streams' })).toThrowError(
      /^Invalid option at --examples: expected sliding/,
    );
    expect(() => prepareSeries(shops([100, 5]), 'shops.csv', { ...options, idColumn: 'month' })).toThrowError(
      'Invalid option at --id-column: expected a column other than the time column, received "month"',
    );
    // With no id column, the table is one series again: the repeated month is refused as before.
    expect(() => prepareSeries(shops([100, 5]), 'shops.csv', { ...options, idColumn: null })).toThrowError(
      /^Bad data at shops\.csv:3:1: expected a time after line 2's in column "month", as a series has one row per time/,
    );
  });

  it("gives each series' rows in time order whichever way the series take turns", () => {
    const table = parseTable('t,id,v\n2020,a,1\n2020,b,2\n2021,b,3\n2021,a,4\n', { file: 'x.csv' });
    expect([...seriesRows(table, { index: 1, name: 'id' }, null)]).toEqual([
      ['a', [0, 3]],
      ['b', [1, 2]],
    ]);
  });
});
