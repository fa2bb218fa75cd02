import { describe, expect, it } from 'vitest';
import { EncoderDecoderModel } from '@weft/cells';
import { loadEncoderDecoder, loadModel, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { descriptions, shaken } from './models.js';

describe('between models and weight files', () => {
  it("takes a model's tensors by their stable names, in parameter order, sharing its values", () => {
    const model = shaken(descriptions.bidirectional);
    const tensors = modelTensors(model);
    expect(tensors.map((t) => t.name)).toEqual(model.parameters().map((p) => p.name));
    expect(tensors[1].values).toBe(model.parameters()[1].tensor.data);
  });

  it("builds a model with the file's values, and lists every tensor missing, extra or of the wrong shape", async () => {
    const model = shaken(descriptions['plain tanh']);
    const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
    expect(Array.from(loadModel(file).parameters()[0].tensor.data)).toEqual(Array.from(model.parameters()[0].tensor.data));
    const damaged = { ...file, tensors: [...file.tensors.slice(1), { name: 'extra', shape: [1], values: Float32Array.of(1) }] };
    expect(() => loadModel(damaged)).toThrowError(
      '2 problems:\n  - Bad weight file at tensors (layers[0].forward.input): expected a tensor named layers[0].forward.input, shape [3, 5], received none\n' +
        '  - Bad weight file at tensors (extra): expected only tensors the model description names, received extra',
    );
  });

  it('loads an encoder-decoder with loadEncoderDecoder, and refuses one given to loadModel, saying which to use', async () => {
    const description = {
      kind: 'encoder-decoder' as const,
      encoder: { input: { kind: 'embedding' as const, vocabulary: 6, width: 3 }, layers: [{ cell: 'gru', hidden: 4 }] },
      decoder: { input: { kind: 'embedding' as const, vocabulary: 5, width: 3 }, layers: [{ cell: 'gru', hidden: 4 }], readout: { width: 5 } },
    };
    const model = new EncoderDecoderModel(description, { seed: 3 });
    const file = await readWeightFile(await writeWeightFile(description, modelTensors(model)));
    expect(
      loadEncoderDecoder(file)
        .parameters()
        .map((p) => p.name),
    ).toEqual(model.parameters().map((p) => p.name));
    expect(() => loadModel(file)).toThrowError(
      'Bad weight file at model.kind: expected a sequence model (use loadEncoderDecoder for this file), received "encoder-decoder"',
    );
  });
});
