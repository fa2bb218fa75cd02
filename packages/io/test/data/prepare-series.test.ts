/**
 * prepareSeries (prepare-series.ts): sliding windows up to SLIDING_ROWS training rows and long streams past them
 * (or when asked; the streams themselves in series-streams.test.ts); settings that need the other kind of examples
 * refused naming the flag.
 */
import { describe, expect, it } from 'vitest';
import { prepareSeries } from '@weft/io';
import { SLIDING_ROWS } from '@weft/io/internal';

const options = { window: 8, lookback: 0, streams: 4, validationShare: 0.1, testShare: 0.1, horizon: 1, seed: '1' };
const table = (rows: number) =>
  `level,flow\n${Array.from({ length: rows }, (_, t) => `${(20 + 0.01 * t + Math.sin(t / 5)).toFixed(5)},${(3 + Math.cos(t / 7)).toFixed(5)}`).join('\n')}\n`;

describe('preparing a series', () => {
  it('trains on sliding windows up to SLIDING_ROWS training rows and on streams past them', () => {
    expect(prepareSeries(table(400), 's.csv', options).examples.kind).toBe('windows');
    const long = Math.ceil((SLIDING_ROWS + 10) / 0.8);
    expect(prepareSeries(table(long), 's.csv', options).examples.kind).toBe('streams');
    expect(prepareSeries(table(400), 's.csv', { ...options, transform: 'differences' }).examples.kind).toBe('streams');
  });

  it('refuses settings that need the other kind of examples, naming the flag', () => {
    expect(() => prepareSeries(table(400), 's.csv', { ...options, examples: 'streams', hybrid: true })).toThrowError(
      /^Invalid option at --hybrid: expected sliding windows/,
    );
    expect(() => prepareSeries(table(400), 's.csv', { ...options, examples: 'sliding', transform: 'log-returns' })).toThrowError(
      /^Invalid option at --transform: expected --examples streams/,
    );
    expect(() => prepareSeries(table(400), 's.csv', { ...options, examples: 'sliding', lookback: 4 })).toThrowError(
      /^Invalid option at --lookback: expected --examples streams/,
    );
  });
});
