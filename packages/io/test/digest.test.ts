/** The SHA-256 digest through Web Crypto, and the choice between it and the plain TypeScript route (digest.ts). */
import { createHash } from 'node:crypto';
import { afterEach, describe, expect, it, vi } from 'vitest';
import { WeftError } from '@weft/core';
import { readWeightFile, writeWeightFile, modelTensors } from '@weft/io';
import { sha256Hex } from '@weft/io/internal';
import { descriptions, shaken } from './models.js';

const text = (s: string) => new TextEncoder().encode(s);
const nodeHex = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

describe('SHA-256 through Web Crypto', () => {
  // FIPS 180-4 example values (NIST "abc" and the empty message), from memory.
  it('hashes "abc"', async () => {
    expect(await sha256Hex(text('abc'))).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
  it('hashes the empty message', async () => {
    expect(await sha256Hex(text(''))).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });
});

describe('the digest route', () => {
  afterEach(() => vi.unstubAllGlobals());

  it('falls back to plain TypeScript where there is no Web Crypto (not a secure context) with the same digest', async () => {
    const bytes = text('greenhouse weights');
    const withCrypto = await sha256Hex(bytes);
    vi.stubGlobal('crypto', undefined);
    expect(globalThis.crypto).toBeUndefined();
    expect(await sha256Hex(bytes)).toBe(withCrypto);
    expect(withCrypto).toBe(nodeHex(bytes));
  });

  it('turns a Web Crypto failure into a WeftError naming the digest', async () => {
    vi.stubGlobal('crypto', { subtle: { digest: () => Promise.reject(new Error('operation not supported')) } });
    const error = await sha256Hex(text('x')).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).message).toBe('Digest failed at sha256Hex: expected a SHA-256 digest from Web Crypto, received operation not supported');
  });

  it('reads a weight file without hashing when verifyDigest is false, and hashes it otherwise', async () => {
    const model = shaken(descriptions['GRU (reset before)']);
    const text = await writeWeightFile(model.description, modelTensors(model), { metadata: { task: 'test' } });
    vi.stubGlobal('crypto', { subtle: { digest: () => Promise.reject(new Error('hashing was attempted')) } });
    const skipped = await readWeightFile(text, { verifyDigest: false });
    expect(skipped.digestChecked).toBe(false);
    await expect(readWeightFile(text)).rejects.toThrow('hashing was attempted');
  });
});
