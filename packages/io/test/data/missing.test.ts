/**
 * Missing readings (data/missing.ts), worked by hand: the markers, the causal fill of a window's column (linear
 * interpolation between the values either side of a gap, the last value carried where the gap reaches the window's
 * end, the first value after a gap at the start, the training mean for a column never observed), and the helpers
 * that find each row's last reading and the length of the gap it lies in. Linear interpolation and carrying the
 * last observation forward are common practice.
 */
import { describe, expect, it } from 'vitest';
import { MISSING_MARKERS, fillColumn, missingTest } from '@weft/io/internal';
import { gapLengths, interpolated, lastObserved } from '../../src/data/missing.js';

const column = (values: number[]) => Float64Array.from(values);

describe('missing readings', () => {
  it('read empty cells, NA, N/A, NaN, null, None (any case) and a dash as missing, and the markers given exactly', () => {
    const isMissing = missingTest(['-999']);
    for (const text of ['', '  ', 'NA', 'na', 'N/A', 'NaN', 'nan', 'null', 'NULL', 'None', '-', ' -999 ']) expect(isMissing(text)).toBe(true);
    for (const text of ['0', '-1', '999', 'n.a.', '--', '-9999']) expect(isMissing(text)).toBe(false);
    expect(MISSING_MARKERS).toContain('NA');
  });

  it('interpolate a gap closed inside the window linearly, and carry the last value over a gap that reaches its end', () => {
    const values = column([1, NaN, NaN, 4, 5, NaN, NaN]);
    fillColumn(values, 0, 1, 7, [NaN, -1, 0], 0, 'interpolate');
    expect(Array.from(values)).toEqual([1, 2, 3, 4, 5, 5, 5]);
    const carried = column([1, NaN, NaN, 4, 5, NaN, NaN]);
    fillColumn(carried, 0, 1, 7, [NaN, -1, 0], 0, 'carry');
    expect(Array.from(carried)).toEqual([1, 1, 1, 4, 5, 5, 5]);
  });

  it('interpolate from a value before the window at its true distance, take the first value after a gap with none before, and the fallback for none at all', () => {
    // The last value before the window, 0, stands 2 rows before its first row (position −2): 0 → 6 over 4 steps.
    const values = column([NaN, NaN, 6]);
    fillColumn(values, 0, 1, 3, [0, -2, 99], 0, 'interpolate');
    expect(Array.from(values)).toEqual([3, 4.5, 6]);
    const start = column([NaN, NaN, 6, NaN]);
    fillColumn(start, 0, 1, 4, [NaN, -1, 99], 0, 'interpolate');
    expect(Array.from(start)).toEqual([6, 6, 6, 6]);
    const none = column([NaN, NaN]);
    fillColumn(none, 0, 1, 2, [7, 7, NaN, -1, 99], 2, 'carry');
    expect(Array.from(none)).toEqual([99, 99]);
  });

  it('fill one column of a row-major window in place, leaving the other columns alone', () => {
    // Two columns, three rows: column 1 has a hole in its middle row.
    const window = column([1, 10, 2, NaN, 3, 30]);
    fillColumn(window, 1, 2, 3, [NaN, -1, 0], 0, 'interpolate');
    expect(Array.from(window)).toEqual([1, 10, 2, 20, 3, 30]);
  });

  it("follow the season's shape when a season of rows before the gap lies in the window", () => {
    // Season 3: rows 0–2 are 0, 3, 0; the next season is 10 higher. Row 4 is missing inside the window: the line from
    // row 3 (10) to row 5 (10) gives 10 at row 4, plus the previous season's departure from its own line at row 1,
    // 3 − (0 + (0 − 0) / 2) = 3: 13.
    const inside = column([0, 3, 0, 10, NaN, 10]);
    fillColumn(inside, 0, 1, 6, [NaN, -1, 0, 3], 0, 'interpolate');
    expect(inside[4]).toBe(13);
    // A gap at the window's end: carried from row 4 (13), moving as rows 1 → 2 and 1 → 3 moved a season earlier.
    const end = column([0, 3, 0, 10, 13, NaN, NaN]);
    fillColumn(end, 0, 1, 7, [NaN, -1, 0, 3], 0, 'carry');
    expect(Array.from(end.subarray(5))).toEqual([13 + (0 - 3), 13 + (10 - 3)]);
    // Without the season's rows in the window, a plain carry.
    const short = column([10, 13, NaN]);
    fillColumn(short, 0, 1, 3, [NaN, -1, 0, 3], 0, 'carry');
    expect(short[2]).toBe(13);
  });

  it("find each row's last reading and the length of the gap each row lies in", () => {
    expect(Array.from(lastObserved([NaN, 1, NaN, NaN, 4]))).toEqual([-1, 1, 1, 1, 4]);
    expect(
      Array.from(
        gapLengths(
          [
            [1, NaN],
            [NaN, NaN],
            [NaN, 3],
            [4, 4],
          ],
          [0, 1],
        ),
      ),
    ).toEqual([2, 2, 2, 0]);
    expect(Array.from(interpolated([NaN, 2, NaN, 4, NaN]))).toEqual([2, 2, 3, 4, 4]);
  });
});
