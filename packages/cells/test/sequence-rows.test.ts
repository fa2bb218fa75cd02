import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { joinFeatures, reverseRows, zeroBeyond } from '@weft/cells/description';

const random = new Random('sequence-rows');
const shape = { steps: 4, rows: 3, width: 2 };
const lengths = Int32Array.of(4, 2, 0);
const sequence = (): Float64Array => Float64Array.from({ length: 24 }, () => random.between(-1, 1));

describe('the ragged convention on plain arrays', () => {
  it('reverses each row within its length, zero beyond, and gives the valid part back when applied twice', () => {
    const x = Float64Array.from({ length: 24 }, (_, i) => i + 1);
    const once = new Float64Array(24);
    reverseRows(once, x, shape, lengths);
    // Row 1 (length 2): steps 0 and 1 swap; steps 2 and 3 are zero. Row 2 (length 0): all zero.
    expect([once[(0 * 3 + 1) * 2], once[(1 * 3 + 1) * 2], once[(2 * 3 + 1) * 2]]).toEqual([x[(1 * 3 + 1) * 2], x[(0 * 3 + 1) * 2], 0]);
    expect(Array.from({ length: 4 }, (_, s) => once[(s * 3 + 2) * 2])).toEqual([0, 0, 0, 0]);
    const twice = new Float64Array(24);
    reverseRows(twice, once, shape, lengths);
    const valid = new Float64Array(24);
    zeroBeyond(valid, x, shape, lengths);
    expect(Array.from(twice)).toEqual(Array.from(valid));
  });

  it("accumulates the adjoint of each map for the gradient: ⟨A x, y⟩ = ⟨x, Aᵀ y⟩ (a map's transpose, common practice)", () => {
    const dot = (a: Float64Array, b: Float64Array): number => a.reduce((n, v, i) => n + v * b[i], 0);
    const x = sequence();
    const y = sequence();
    const ax = new Float64Array(24);
    reverseRows(ax, x, shape, lengths);
    const aty = new Float64Array(24);
    reverseRows(aty, y, shape, lengths, true);
    expect(Math.abs(dot(ax, y) - dot(x, aty))).toBeLessThan(1e-12);
    const mx = new Float64Array(24);
    zeroBeyond(mx, x, shape, lengths);
    const mty = new Float64Array(24);
    zeroBeyond(mty, y, shape, lengths, true);
    expect(Math.abs(dot(mx, y) - dot(x, mty))).toBeLessThan(1e-12);
  });

  it('zeroes in place when the target is the source', () => {
    const x = sequence();
    const copy = Float64Array.from(x);
    zeroBeyond(x, x, shape, lengths);
    const expected = new Float64Array(24);
    zeroBeyond(expected, copy, shape, lengths);
    expect(Array.from(x)).toEqual(Array.from(expected));
  });

  it('joins two directions side by side at each position, [first | second]', () => {
    const target = new Float32Array(2 * 5);
    joinFeatures(target, [1, 2, 3, 4, 5, 6], [7, 8, 9, 10], 3, 2);
    expect(Array.from(target)).toEqual([1, 2, 3, 7, 8, 4, 5, 6, 9, 10]);
  });
});
