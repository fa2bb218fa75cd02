import { describe, expect, it } from 'vitest';
import { EncoderDecoderModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { createEncoderDecoderRuntime, createRuntime } from '@weft/io/runtime';
import { descriptions, shaken } from '../models.js';

describe('making a runtime', () => {
  it('reads weight-file text or takes a file already read, on the backend named', async () => {
    const model = shaken(descriptions['LSTM with peepholes']);
    const text = await writeWeightFile(model.description, modelTensors(model));
    const fromText = await createRuntime(text, { backend: 'javascript' });
    const fromFile = await createRuntime(await readWeightFile(text), { backend: 'javascript' });
    expect([fromText.outputWidth, fromFile.outputWidth, fromText.backend.name]).toEqual([2, 2, 'javascript']);
    await expect(createRuntime('{}')).rejects.toThrowError(/^Bad weight file at format/);
  });

  it('makes an encoder-decoder runtime from an encoder-decoder file', async () => {
    const description = {
      kind: 'encoder-decoder' as const,
      encoder: { input: { kind: 'embedding' as const, vocabulary: 6, width: 3 }, layers: [{ cell: 'lstm', hidden: 4 }] },
      decoder: { input: { kind: 'embedding' as const, vocabulary: 5, width: 3 }, layers: [{ cell: 'lstm', hidden: 4 }], readout: { width: 5 } },
    };
    const model = new EncoderDecoderModel(description, { seed: 1 });
    const runtime = await createEncoderDecoderRuntime(await writeWeightFile(description, modelTensors(model)), { backend: 'javascript' });
    expect(runtime.constructor.name).toBe('EncoderDecoderRuntime');
  });
});
