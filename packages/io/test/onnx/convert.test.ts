import { describe, expect, it } from 'vitest';
import { EncoderDecoderModel, buildModel } from '@weft/cells';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { onnxFromWeightFile, weightFileFromOnnx } from '@weft/io/onnx';
import { smallModel } from './refusals.js';
import { encodeOnnxModel } from '@weft/io/onnx';

describe('converting files', () => {
  it('turn ONNX bytes into a weight file that records how it binds to the graph', async () => {
    const file = await readWeightFile(await weightFileFromOnnx(encodeOnnxModel(smallModel()), { file: 'small.onnx' }));
    expect(file.model).toEqual({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'lstm', hidden: 3 }] });
    expect((file.metadata as { onnx: { input: unknown; output: unknown; states: unknown } }).onnx).toMatchObject({
      input: { name: 'X', kind: 'values' },
      output: { name: 'Y', axes: ['t', 'd', 'b', 'h'] },
      states: [{ h: 'Y_h', c: null }],
    });
  });

  it('turn a weight file into ONNX bytes, and refuse an encoder-decoder by name', async () => {
    const model = buildModel({ input: { kind: 'values', width: 2 }, layers: [{ cell: 'gru', hidden: 3 }] }, { seed: 1 });
    const bytes = await onnxFromWeightFile(await writeWeightFile(model.description, modelTensors(model)));
    expect(bytes.length).toBeGreaterThan(100);
    const description = {
      kind: 'encoder-decoder' as const,
      encoder: { input: { kind: 'embedding' as const, vocabulary: 5, width: 2 }, layers: [{ cell: 'gru', hidden: 3 }] },
      decoder: { input: { kind: 'embedding' as const, vocabulary: 5, width: 2 }, layers: [{ cell: 'gru', hidden: 3 }], readout: { width: 5 } },
    };
    const pair = new EncoderDecoderModel(description);
    await expect(onnxFromWeightFile(await writeWeightFile(description, modelTensors(pair)))).rejects.toThrowError(
      'Invalid option at model.kind: expected a sequence model (encoder-decoders are not exported to ONNX), received "encoder-decoder"',
    );
  });
});
