import { describe, expect, it } from 'vitest';
import { decodeBase64Into, decodedLength, encodeBase64 } from '@weft/io/internal';

const text = (s: string) => new TextEncoder().encode(s);

describe('base64', () => {
  // RFC 4648, §10 (test vectors).
  const vectors: [string, string][] = [
    ['', ''],
    ['f', 'Zg=='],
    ['fo', 'Zm8='],
    ['foo', 'Zm9v'],
    ['foob', 'Zm9vYg=='],
    ['fooba', 'Zm9vYmE='],
    ['foobar', 'Zm9vYmFy'],
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
