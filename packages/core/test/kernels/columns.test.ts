/**
 * The column-block kernels (kernels/columns.ts) against the definition written out entry by entry: a [2, 3] matrix
 * placed in columns 1–3 of a [2, 5] one and read back, copied and added, on f64 and f32 arrays.
 */
import { describe, expect, it } from 'vitest';
import { kernels } from '@weft/core';

const block = { rows: 2, cols: 3, width: 5, first: 1 };

describe('the column-block kernels', () => {
  for (const make of [(n: number) => new Float64Array(n), (n: number) => new Float32Array(n)]) {
    it(`copy and add a narrow matrix into and out of a block of columns (${make(0).constructor.name})`, () => {
      const narrow = make(6);
      narrow.set([1, 2, 3, 4, 5, 6]);
      const wide = make(10).fill(9);
      kernels.copyToColumns(wide, narrow, block);
      expect(Array.from(wide)).toEqual([9, 1, 2, 3, 9, 9, 4, 5, 6, 9]);
      kernels.addToColumns(wide, narrow, block);
      expect(Array.from(wide)).toEqual([9, 2, 4, 6, 9, 9, 8, 10, 12, 9]);
      const back = make(6);
      kernels.copyFromColumns(back, wide, block);
      expect(Array.from(back)).toEqual([2, 4, 6, 8, 10, 12]);
      kernels.addFromColumns(back, wide, block);
      expect(Array.from(back)).toEqual([4, 8, 12, 16, 20, 24]);
    });
  }
});
