/**
 * Preparing training data never changes the task or the columns without a word: numbers are decimal only, a
 * column of numbers with a bad cell is an error at that cell, a column with no numbers is left out and said so,
 * one bad item in a numeric sequence file is an error there (not a switch to tokens), and values near the top of
 * the f64 range are normalised without overflow.
 */
import { describe, expect, it } from 'vitest';
import { columnStatistics, decimal } from '@weft/io';
import { prepareClassification, prepareForecast, prepareText } from '../src/datasets.js';

const options = {
  window: 4,
  lookback: 0,
  streams: 2,
  validationShare: 0.2,
  testShare: 0.1,
  horizon: 1,
  tokens: 'characters' as const,
  embedding: 4,
  batch: 4,
  seed: '1',
};

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

describe('preparing training data', () => {
  it('reads decimal numbers only: no hex, no words, nothing past the f64 range (IEEE 754)', () => {
    expect([decimal('12'), decimal('-1.5e3'), decimal('.5'), decimal(' 7 ')]).toEqual([12, -1500, 0.5, 7]);
    expect([decimal('0x10'), decimal('Infinity'), decimal('NaN'), decimal('n/a'), decimal('1e999'), decimal(''), decimal('1_000')].every(Number.isNaN)).toBe(
      true,
    );
  });

  it('leaves out a column with no numbers and says so, and refuses a column of numbers with one bad cell', () => {
    const prepared = prepareForecast(
      series(60, (r) => String(Math.sin(r))),
      'levels.csv',
      options,
    );
    expect(prepared.notes).toEqual(['left out columns that hold no numbers: site (no numbers: "north" at line 2)']);
    expect((prepared.metadata as { columns: string[] }).columns).toEqual(['level']);
    expect(() =>
      prepareForecast(
        series(60, (r) => (r === 0 ? 'n.a.' : String(r))),
        'levels.csv',
        options,
      ),
    ).toThrowError(
      'Bad data at levels.csv:2:7: expected a decimal number in column "level", received "n.a." (59 of 60 cells there are; fix the cell, mark missing readings with --missing-marker, or choose the columns with --columns)',
    );
    expect(() =>
      prepareForecast(
        series(60, (r) => (r === 7 ? '0x10' : String(r))),
        'levels.csv',
        options,
      ),
    ).toThrowError(/^Bad data at levels\.csv:9:7: expected a decimal number in column "level", received "0x10"/);
  });

  it('names the file and line of an unknown column and of a season longer than the training and validation rows', () => {
    const text = series(60, (r) => String(Math.sin(r)));
    expect(() => prepareForecast(text, 'levels.csv', { ...options, targets: ['flow'] })).toThrowError(
      'Bad data at levels.csv:1:1: expected a column named "flow" (for --target), received the columns site, level',
    );
    expect(() => prepareForecast(text, 'levels.csv', { ...options, season: 54 })).toThrowError(
      'Invalid option at levels.csv:55:1 (--season): expected a season shorter than the 54 training and validation rows (of 60), which end at this line, received 54',
    );
  });

  it('refuses log returns of a value that is not positive, naming its line and column', () => {
    expect(() =>
      prepareForecast(
        series(60, (r) => String(r === 30 ? 0 : 1 + r)),
        'levels.csv',
        { ...options, transform: 'log-returns' },
      ),
    ).toThrowError('Bad data at levels.csv:32:7: expected a number > 0 in column "level" (log returns need positive values), received 0');
  });

  it('says how many validation and test characters never occur in the training text, instead of reading them as unknown without a word', () => {
    const prepared = prepareText(`${'abc'.repeat(200)}xyz`, 'notes.txt', { ...options, validationShare: 0.1 });
    expect(prepared.notes).toEqual(['3 of the 120 validation and test characters never occur in the training text; the model reads them as <unknown>']);
  });

  it('trains a short series on sliding windows chosen from the data, and refuses a window longer than its training rows', () => {
    const prepared = prepareForecast(
      dated(100, (r) => String(10 + Math.sin(r / 3))),
      'daily.csv',
      { ...options, given: new Set(['streams']) },
    );
    // 70 training rows: a window of 17 (a quarter of them, under 24), 53 windows, 27 batches of 2, 2,000 updates in 75 epochs.
    expect(prepared.chosen?.said).toBe(
      'sliding windows: 53 training examples of 17 rows (no season found), 2 per batch, up to 75 epochs, patience 5, 32 hidden, reading the day of week and day of year (chosen from the data; flags override, --examples streams reads the series as streams)',
    );
    expect(prepared.metadata.window).toMatchObject({ rows: 17, calendar: ['day of week', 'day of year'] });
    expect(() =>
      prepareForecast(
        dated(100, (r) => String(r)),
        'daily.csv',
        { ...options, window: 90, given: new Set(['window']) },
      ),
    ).toThrowError(
      'Invalid option at --window: expected a window leaving at least 2 training windows 1 row ahead in the 70 training rows of daily.csv, received 90 rows (0 windows)',
    );
  });

  it('normalises values of ±1e300 and 1e308 without overflowing (mean and deviation finite)', () => {
    const top = prepareForecast(
      series(60, (r) => (r % 3 === 0 ? '1e308' : '-1e308')),
      'top.csv',
      options,
    );
    const stats = (top.metadata as { normalisation: { mean: number[]; deviation: number[] } }).normalisation;
    expect(Number.isFinite(stats.mean[0]) && Number.isFinite(stats.deviation[0]) && stats.deviation[0] > 0).toBe(true);
    const prepared = prepareForecast(
      series(60, (r) => (r % 2 === 0 ? '1e300' : '-1e300')),
      'huge.csv',
      options,
    );
    const { mean, deviation } = (prepared.metadata as { normalisation: { mean: number[]; deviation: number[] } }).normalisation;
    expect(Number.isFinite(mean[0]) && Number.isFinite(deviation[0])).toBe(true);
    expect(Math.abs(deviation[0] - 1e300) / 1e300).toBeLessThan(1e-12);
    expect(columnStatistics([[3], [5]], 1)).toEqual({ mean: [4], deviation: [1] });
  });

  it('refuses one item that is not a number in a file of numeric sequences, instead of turning it into tokens', () => {
    const rows = Array.from({ length: 40 }, (_, i) => `${i % 2 === 0 ? 'calm' : 'gusty'},${i === 5 ? '1 2 NaN 4' : '1 2 3 4'}`);
    expect(() =>
      prepareClassification(`label,sequence\n${rows.join('\n')}\n`, 'wind.csv', { ...options, labelColumn: 'label', sequenceColumn: 'sequence' }),
    ).toThrowError('Bad data at wind.csv:7:7: expected a decimal number, as 159 of the 160 items of the sequences are, received "NaN"');
  });
});
