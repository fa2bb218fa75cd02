/**
 * The forms a weight file reaches a runtime in (runtime/source.ts): text, bytes (ArrayBuffer, Uint8Array, a view into
 * a larger buffer), a Response, a URL served over loopback HTTP, the parsed JSON object, and a file already read all
 * give a runtime with the same outputs, bit for bit; bytes that are not UTF-8, a failed response and a number are
 * one-line errors, and a parsed object with a changed layer size meets the reader's checks (every problem listed).
 */
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { buildModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime, readWeightFile } from '@weft/io/runtime';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';

const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'lstm', hidden: 4 }], readout: { width: 1 } }, { seed: 6 });
const input = Float32Array.of(0.5, -1, 0.25, 2, -0.75, 0.1);

async function outputsOf(source: Parameters<typeof createRuntime>[0]): Promise<number[]> {
  const runtime = await createRuntime(source, { backend: 'javascript' });
  return Array.from(runtime.run(input, 3, 1));
}

describe('weight-file sources', () => {
  it('give the same outputs from text, bytes, a Response, a URL, the parsed object and a file already read', async () => {
    const text = await writeWeightFile(model.description, modelTensors(model));
    const expected = await outputsOf(text);
    const bytes = new TextEncoder().encode(text);
    const padded = new Uint8Array(bytes.length + 8);
    padded.set(bytes, 4);
    expect(await outputsOf(bytes)).toEqual(expected);
    expect(await outputsOf(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength))).toEqual(expected);
    expect(await outputsOf(new DataView(padded.buffer, 4, bytes.length))).toEqual(expected);
    expect(await outputsOf(new Response(text))).toEqual(expected);
    expect(await outputsOf(JSON.parse(text) as Record<string, unknown>)).toEqual(expected);
    expect(await outputsOf(await readWeightFile(text))).toEqual(expected);
    const server = createServer((request, response) => {
      if (request.url === '/model.weft.json') response.end(text);
      else {
        response.statusCode = 404;
        response.end('none');
      }
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    try {
      const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
      expect(await outputsOf(new URL('/model.weft.json', base))).toEqual(expected);
      await expect(createRuntime(new URL('/missing.json', base))).rejects.toThrowError(
        `Bad weight file at ${base}/missing.json: expected a response with status 200–299, received status 404`,
      );
    } finally {
      server.close();
    }
  });

  it("refuse bytes that are not UTF-8 and a value of no known form in one line each, and check a parsed object as a file's text is checked", async () => {
    const text = await writeWeightFile(model.description, modelTensors(model));
    await expect(createRuntime(Uint8Array.of(0x7b, 0xff, 0x7d))).rejects.toThrowError(
      'Bad weight file at createRuntime.source: expected the UTF-8 bytes of a weight file, received 3 bytes that are not UTF-8',
    );
    await expect(createRuntime(42 as unknown as string)).rejects.toThrowError(
      'Invalid argument at createRuntime.source: expected weight-file text, bytes, a Response, a URL, a parsed weight file or one read by readWeightFile, received number',
    );
    const parsed = JSON.parse(text) as { model: { layers: { hidden: number }[] } };
    parsed.model.layers[0].hidden = 5;
    // A parsed object meets the checks a file's text meets: here every tensor's shape against the description.
    const error = await createRuntime(parsed as unknown as Record<string, unknown>).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).message).toContain(
      'Bad weight file at tensors (layers[0].forward.recurrent).shape: expected [5, 20] (from the model description), received [4, 16]',
    );
    // The encoder-decoder entry reads the same forms (here: bytes of a model that is not an encoder-decoder).
    await expect(createEncoderDecoderRuntime(new TextEncoder().encode(text))).rejects.toThrowError(WeftError);
  });
});
