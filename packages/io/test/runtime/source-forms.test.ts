/**
 * The non-text forms of a weight file (runtime/source-forms.ts), turned into what the reader reads: UTF-8 bytes of
 * every kind into the same text, a Response into its body, a parsed object into its JSON, a file already read passed
 * through; bytes that are not UTF-8 (RFC 3629: 0xFF never appears in UTF-8), a failed response and a value of no known
 * form refused through the caller's `refuse`.
 */
import { describe, expect, it } from 'vitest';
import { fail } from '@weft/core';
import { sourceText } from '../../src/runtime/source-forms.js';
import type { WeightFile } from '@weft/io';

describe('weight-file forms other than text', () => {
  const text = '{"format":"weft-weights","é":"ü"}';

  it('turn bytes of every kind, a Response and a parsed object into text, and pass a file already read through', async () => {
    const bytes = new TextEncoder().encode(text);
    expect(await sourceText(bytes, fail)).toBe(text);
    expect(await sourceText(bytes.slice().buffer, fail)).toBe(text);
    expect(await sourceText(new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength), fail)).toBe(text);
    expect(await sourceText(new Response(text), fail)).toBe(text);
    expect(await sourceText(JSON.parse(text) as Record<string, unknown>, fail)).toBe(text);
    const read = { tensors: [{ name: 'w', shape: [1], values: Float32Array.of(1) }] } as unknown as WeightFile;
    expect(await sourceText(read, fail)).toBe(read);
  });

  it('refuse bytes that are not UTF-8, a failed response and a value of no known form, through refuse', async () => {
    await expect(sourceText(Uint8Array.of(0x22, 0xff, 0x22), fail)).rejects.toThrowError(
      'Bad weight file at createRuntime.source: expected the UTF-8 bytes of a weight file, received 3 bytes that are not UTF-8',
    );
    await expect(sourceText(new Response('gone', { status: 410 }), fail)).rejects.toThrowError(
      'Bad weight file at createRuntime.source: expected a response with status 200–299, received status 410',
    );
    await expect(sourceText(true as unknown as Record<string, unknown>, fail)).rejects.toThrowError(
      'Invalid argument at createRuntime.source: expected weight-file text, bytes, a Response, a URL, a parsed weight file or one read by readWeightFile, received boolean',
    );
  });
});
