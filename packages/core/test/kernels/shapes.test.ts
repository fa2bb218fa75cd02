import { describe, expect, it } from 'vitest';
import { productShape, refill, refillStep, transposedOf, transposesA, transposesB } from '../../src/kernels/shapes.js';

describe("the kernels' argument records", () => {
  it('name each of the four storages of a product by the two flags it stands for, and read them back', () => {
    const forms = [
      [false, false],
      [true, false],
      [false, true],
      [true, true],
    ] as const;
    expect(forms.map(([a, b]) => transposedOf(a, b))).toEqual(['neither', 'a', 'b', 'both']);
    for (const [a, b] of forms) {
      const shape = productShape(2, 3, 4, transposedOf(a, b));
      expect([transposesA(shape), transposesB(shape)]).toEqual([a, b]);
    }
    expect([transposesA({ rows: 1, inner: 1, cols: 1 }), transposesB({ rows: 1, inner: 1, cols: 1 })]).toEqual([false, false]);
  });

  it('are refilled in place, so a record made once serves every call', () => {
    const shape = productShape(1, 2, 3, 'both');
    expect(refill(shape, 4, 5, 6)).toBe(shape);
    expect(shape).toEqual({ rows: 4, inner: 5, cols: 6, transposed: 'neither' });
    expect(refill(shape, 7, 8, 9, 'a')).toEqual({ rows: 7, inner: 8, cols: 9, transposed: 'a' });
    const at = { rows: 0, hidden: 0, lengths: null as Int32Array | null, step: 0 };
    const lengths = Int32Array.of(3, 1);
    expect(refillStep(at, 2, 16, lengths, 5)).toBe(at);
    expect(at).toEqual({ rows: 2, hidden: 16, lengths, step: 5 });
  });
});
