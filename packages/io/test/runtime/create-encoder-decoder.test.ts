import { describe, expect, it } from 'vitest';
import { EncoderDecoderModel } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createEncoderDecoderRuntime } from '@weft/io/runtime/encoder-decoder';

describe('making an encoder-decoder runtime', () => {
  it('makes an encoder-decoder runtime from an encoder-decoder file', async () => {
    const description = {
      kind: 'encoder-decoder' as const,
      encoder: { input: { kind: 'embedding' as const, vocabulary: 6, width: 3 }, layers: [{ cell: 'lstm', hidden: 4 }] },
      decoder: { input: { kind: 'embedding' as const, vocabulary: 5, width: 3 }, layers: [{ cell: 'lstm', hidden: 4 }], readout: { width: 5 } },
    };
    const model = new EncoderDecoderModel(description, { seed: 1 });
    const runtime = await createEncoderDecoderRuntime(await writeWeightFile(description, modelTensors(model)), { backend: 'javascript' });
    expect([runtime.constructor.name, runtime.encoder.backend.name, runtime.outputWidth]).toEqual(['EncoderDecoderRuntime', 'javascript', 5]);
    await expect(createEncoderDecoderRuntime(await writeWeightFile(description.encoder, modelTensors(model.encoder)))).rejects.toThrowError(
      /^Bad weight file at model\.kind: expected "encoder-decoder"/,
    );
  });
});
