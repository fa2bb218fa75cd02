/**
 * SHA-256 without Web Crypto (sha256.ts). Vectors: the NIST example values for FIPS 180-4 SHA-256 ("abc", the
 * 448-bit two-block message, one million "a"; recalled from memory, and each also checked against Node's own
 * `node:crypto` hash, which shares no code with ours).
 */
import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { sha256HexSync } from '../src/sha256.js';

const ascii = (text: string) => new TextEncoder().encode(text);
const nodeHex = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

describe('SHA-256 in plain TypeScript', () => {
  const vectors: [string, Uint8Array, string][] = [
    ['the empty message', new Uint8Array(0), 'e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855'],
    ['"abc" (one block)', ascii('abc'), 'ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad'],
    [
      'the 448-bit message (two blocks)',
      ascii('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq'),
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    ],
    ['one million "a"', new Uint8Array(1_000_000).fill(0x61), 'cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0'],
  ];
  for (const [name, bytes, hex] of vectors) {
    it(`gives the NIST digest of ${name}, as node:crypto does`, () => {
      expect(sha256HexSync(bytes)).toBe(hex);
      expect(nodeHex(bytes)).toBe(hex);
    });
  }

  it('agrees with node:crypto on every length around the padding boundaries', () => {
    const bytes = new Uint8Array(200);
    for (let i = 0; i < bytes.length; i++) bytes[i] = (i * 131 + 7) & 255;
    for (let length = 0; length <= 200; length++) expect(sha256HexSync(bytes.subarray(0, length)), `length ${length}`).toBe(nodeHex(bytes.subarray(0, length)));
  });
});
