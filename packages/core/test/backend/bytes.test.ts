import { describe, expect, it } from 'vitest';
import { decodeBase64Bytes } from '../../src/backend/bytes.js';

describe('decoding the WebAssembly modules shipped as base64', () => {
  // RFC 4648 §10 test vectors.
  for (const [encoded, plain] of [
    ['', ''],
    ['Zg==', 'f'],
    ['Zm8=', 'fo'],
    ['Zm9v', 'foo'],
    ['Zm9vYg==', 'foob'],
    ['Zm9vYmE=', 'fooba'],
    ['Zm9vYmFy', 'foobar'],
  ]) {
    it(`gives ${JSON.stringify(plain)} for ${JSON.stringify(encoded)} (RFC 4648 §10)`, () => {
      expect(new TextDecoder().decode(decodeBase64Bytes(encoded))).toBe(plain);
    });
  }

  it("gives every byte value back as Node's Buffer encodes it", () => {
    const bytes = Uint8Array.from({ length: 256 }, (_, i) => i);
    expect(Array.from(decodeBase64Bytes(Buffer.from(bytes).toString('base64')))).toEqual(Array.from(bytes));
  });
});
