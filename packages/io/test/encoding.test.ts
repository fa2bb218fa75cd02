import { describe, expect, it } from 'vitest';
import { decodeBase64Into, decodedLength, encodeBase64, fromHalfBits, sha256Hex, toHalfBits } from '@weft/io';

const text = (s: string) => new TextEncoder().encode(s);

describe('base64', () => {
  // RFC 4648, §10 (test vectors).
  const vectors: [string, string][] = [
    ['', ''], ['f', 'Zg=='], ['fo', 'Zm8='], ['foo', 'Zm9v'], ['foob', 'Zm9vYg=='], ['fooba', 'Zm9vYmE='], ['foobar', 'Zm9vYmFy'],
  ];
  for (const [plain, encoded] of vectors) {
    it(`encodes ${JSON.stringify(plain)} as ${JSON.stringify(encoded)} and back (RFC 4648 §10)`, () => {
      expect(encodeBase64(text(plain))).toBe(encoded);
      const out = new Uint8Array(decodedLength(encoded));
      expect(decodeBase64Into(encoded, out)).toBe(-1);
      expect(new TextDecoder().decode(out)).toBe(plain);
    });
  }

  it('refuses characters outside the alphabet, wrong lengths and misplaced padding', () => {
    expect(decodedLength('Zm9')).toBe(-1);
    expect(decodeBase64Into('Zm-v', new Uint8Array(3))).toBe(2);
    expect(decodeBase64Into('Z=9v', new Uint8Array(3))).toBe(1);
    expect(decodeBase64Into('Zm9v', new Uint8Array(3))).toBe(-1);
  });

  it('round-trips every byte value', () => {
    const all = Uint8Array.from({ length: 256 }, (_, i) => i);
    const encoded = encodeBase64(all);
    const back = new Uint8Array(decodedLength(encoded));
    expect(decodeBase64Into(encoded, back)).toBe(-1);
    expect(Array.from(back)).toEqual(Array.from(all));
  });
});

describe('SHA-256 through Web Crypto', () => {
  // FIPS 180-4 example values (NIST "abc" and the empty message), from memory.
  it('hashes "abc"', async () => {
    expect(await sha256Hex(text('abc'))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
  it('hashes the empty message', async () => {
    expect(await sha256Hex(text(''))).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });
});

describe('IEEE 754-2008 binary16', () => {
  const pairs: [number, number][] = [
    [65504, 0x7bff], [1, 0x3c00], [-2, 0xc000], [2 ** -14, 0x0400], [2 ** -24, 0x0001], [0, 0x0000], [-0, 0x8000],
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
