/**
 * Data files read as strict UTF-8 (text-bytes.ts), against RFC 3629: every well-formed sequence of one to four bytes
 * is text (checked against the platform's own strict decoder on 20,000 seeded random byte strings); a lone
 * continuation byte, an overlong form (0xC0 0xAF), an encoded surrogate (0xED 0xA0 0x80), a code point past U+10FFFF
 * (0xF4 0x90 …) and a cut-off sequence each break it at their first byte; the error names the file, the line and
 * the column in characters.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { firstInvalidUtf8, utf8Text } from '../src/text-bytes.js';

const bytes = (...values: number[]) => Uint8Array.from(values);

describe('data files as strict UTF-8', () => {
  it('read well-formed text of every length of sequence, and find the first byte of each ill-formed one', () => {
    expect(utf8Text(new TextEncoder().encode('a,é,€,𝄞\n'), 'f.csv')).toBe('a,é,€,𝄞\n');
    expect(firstInvalidUtf8(bytes(0x61, 0x80))).toBe(1);
    expect(firstInvalidUtf8(bytes(0x61, 0xc0, 0xaf))).toBe(1);
    expect(firstInvalidUtf8(bytes(0xed, 0xa0, 0x80))).toBe(0);
    expect(firstInvalidUtf8(bytes(0xf4, 0x90, 0x80, 0x80))).toBe(0);
    expect(firstInvalidUtf8(bytes(0x61, 0x62, 0xe2, 0x82))).toBe(2);
    expect(firstInvalidUtf8(bytes(0xef, 0xbf, 0xbd))).toBe(-1);
  });

  it("agrees with the platform's strict decoder on where text is well formed, over 20,000 random byte strings", () => {
    const random = new Random('utf-8');
    const strict = new TextDecoder('utf-8', { fatal: true });
    for (let n = 0; n < 20_000; n++) {
      const sample = Uint8Array.from({ length: 1 + random.integer(6) }, () => (random.uniform() < 0.5 ? 0x80 + random.integer(0x80) : random.integer(0x100)));
      let valid = true;
      try {
        strict.decode(sample);
      } catch {
        valid = false;
      }
      expect(firstInvalidUtf8(sample) === -1, Array.from(sample).join(',')).toBe(valid);
    }
  });

  it('names the file, line and column of the first bad byte', () => {
    const text = Uint8Array.from([...new TextEncoder().encode('source,target\nçà,x\nab'), 0xff, ...new TextEncoder().encode(',y\n')]);
    expect(() => utf8Text(text, 'pairs.csv')).toThrowError('pairs.csv:3:3: expected UTF-8 text, received the byte 0xff (save the file as UTF-8)');
  });
});
