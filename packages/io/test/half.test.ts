import { describe, expect, it } from 'vitest';
import { fromHalfBits, toHalfBits } from '@weft/io/internal';

describe('IEEE 754-2008 binary16', () => {
  const pairs: [number, number][] = [
    [65504, 0x7bff],
    [1, 0x3c00],
    [-2, 0xc000],
    [2 ** -14, 0x0400],
    [2 ** -24, 0x0001],
    [0, 0x0000],
    [-0, 0x8000],
  ];
  for (const [value, bits] of pairs) {
    it(`maps ${value} ↔ 0x${bits.toString(16).padStart(4, '0')}`, () => {
      expect(toHalfBits(value)).toBe(bits);
      expect(Object.is(fromHalfBits(bits), value)).toBe(true);
    });
  }

  it('rounds 1/3 to 0x3555 (nearest, ties to even)', () => {
    expect(toHalfBits(1 / 3)).toBe(0x3555);
    // 1 + 2⁻¹¹ is halfway between 1 and the next half (1 + 2⁻¹⁰): ties go to the even pattern 0x3c00.
    expect(toHalfBits(1 + 2 ** -11)).toBe(0x3c00);
    expect(toHalfBits(1 + 3 * 2 ** -11)).toBe(0x3c02);
  });

  it('overflows to infinity, keeps infinities and preserves NaN', () => {
    expect(toHalfBits(65520)).toBe(0x7c00);
    expect(toHalfBits(1e6)).toBe(0x7c00);
    expect(toHalfBits(-Infinity)).toBe(0xfc00);
    expect(fromHalfBits(0x7c00)).toBe(Infinity);
    const nan = toHalfBits(Number.NaN);
    expect((nan & 0x7c00) === 0x7c00 && (nan & 0x3ff) !== 0).toBe(true);
    expect(fromHalfBits(nan)).toBeNaN();
    // Just below the overflow threshold, 65519 rounds down to 65504.
    expect(toHalfBits(65519)).toBe(0x7bff);
  });

  it('round-trips every finite half exactly', () => {
    for (let bits = 0; bits < 0x10000; bits++) {
      if ((bits & 0x7c00) === 0x7c00) continue;
      expect(toHalfBits(fromHalfBits(bits))).toBe(bits);
    }
  });
});
