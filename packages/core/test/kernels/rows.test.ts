import { describe, expect, it } from 'vitest';
import { addRowInto, copyRow, holdRow, isHeld, passHeldRow } from '../../src/kernels/rows.js';

describe('the row helpers for ragged batches (a row past its length holds its state)', () => {
  const lengths = Int32Array.of(2, 5);

  it('call a row held from the step that equals its length on, and no row held without lengths', () => {
    expect([isHeld(lengths, 0, 1), isHeld(lengths, 0, 2), isHeld(lengths, 1, 4), isHeld(null, 0, 99)]).toEqual([false, true, false, false]);
  });

  it('copy and add rows at an offset, adding nothing when either side is missing', () => {
    const target = Float64Array.of(1, 2, 3, 4);
    copyRow(target, Float64Array.of(9, 9, 7, 8), 2, 2);
    expect(Array.from(target)).toEqual([1, 2, 7, 8]);
    addRowInto(target, Float64Array.of(0, 0, 1, 1), 2, 2);
    expect(Array.from(target)).toEqual([1, 2, 8, 9]);
    addRowInto(null, target, 0, 2);
    addRowInto(target, null, 0, 2);
    expect(Array.from(target)).toEqual([1, 2, 8, 9]);
  });

  it("forward: copy a held row's previous state across and say so; leave an active row alone", () => {
    const state = Float64Array.of(0, 0, 0, 0);
    const previous = Float64Array.of(1, 2, 3, 4);
    const at = { rows: 2, hidden: 2, lengths, step: 2 };
    expect(holdRow(at, 0, state, previous)).toBe(true);
    expect(holdRow(at, 1, state, previous)).toBe(false);
    expect(Array.from(state)).toEqual([1, 2, 0, 0]);
  });

  it("backward: zero a held row's gate gradients and pass its state gradient to the previous state", () => {
    const gates = Float64Array.of(5, 5, 5, 5, 5, 5);
    const previousGradient = Float64Array.of(1, 1);
    const at = { rows: 2, hidden: 2, lengths, step: 3 };
    expect(passHeldRow(at, 0, previousGradient, Float64Array.of(0.5, 0.25, 0, 0), gates, 3)).toBe(true);
    expect(Array.from(gates)).toEqual([0, 0, 0, 5, 5, 5]);
    expect(Array.from(previousGradient)).toEqual([1.5, 1.25]);
    expect(passHeldRow(at, 1, previousGradient, Float64Array.of(9, 9, 9, 9), gates, 3)).toBe(false);
    expect(Array.from(gates)).toEqual([0, 0, 0, 5, 5, 5]);
  });
});
