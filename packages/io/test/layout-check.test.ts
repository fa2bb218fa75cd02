/**
 * A weight file is checked against the layout its description implies before anything is built from it: the
 * runtime and `loadModel` report every missing tensor, wrong shape and stray tensor at once, and a file whose
 * description claims a model far larger than its tensors is refused without building that model.
 */
import { describe, expect, it } from 'vitest';
import { WeftError } from '@weft/core';
import { buildModel } from '@weft/cells';
import { loadModel, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { Runtime } from '@weft/io/runtime';

const description = { input: { kind: 'values' as const, width: 3 }, layers: [{ cell: 'gru' as const, hidden: 4 }], readout: { width: 2 } };

async function fileWith(tensors: { name: string; shape: number[]; values: Float32Array }[], model: object = description) {
  return readWeightFile(await writeWeightFile(model as typeof description, tensors));
}

describe('checking a weight file against its layout', () => {
  it('collects every problem of the file in one error, in the runtime and in loadModel alike', async () => {
    const good = modelTensors(buildModel(description, { seed: 1 })).map((t) => ({ name: t.name, shape: [...t.shape], values: Float32Array.from(t.values) }));
    const broken = good
      .filter((t) => t.name !== 'readout.bias')
      .map((t) => (t.name === 'layers[0].forward.recurrent' ? { ...t, shape: [4, 7], values: new Float32Array(28) } : t));
    broken.push({ name: 'extra', shape: [1], values: new Float32Array(1) });
    const file = await fileWith(broken);
    const expected = [
      'Bad weight file at tensors (layers[0].forward.recurrent).shape: expected [4, 8] (from the model description), received [4, 7]',
      'Bad weight file at tensors (readout.bias): expected a tensor named readout.bias, shape [2], received none',
      'Bad weight file at tensors (extra): expected only tensors the model description names, received extra',
    ];
    for (const attempt of [() => new Runtime(file), () => loadModel(file)]) {
      let error: unknown;
      try {
        attempt();
      } catch (caught) {
        error = caught;
      }
      expect(error).toBeInstanceOf(WeftError);
      expect((error as WeftError).message).toBe(`3 problems:\n${expected.map((line) => `  - ${line}`).join('\n')}`);
    }
  });

  it('refuses a small file that describes ten LSTM layers of hidden 4096 (1.3 billion parameters) while reading it, and one of hidden 20000 by its bound', async () => {
    const tensors = modelTensors(buildModel(description, { seed: 1 })).map((t) => ({ name: t.name, shape: [...t.shape], values: Float32Array.from(t.values) }));
    // Written for the small model, then its description edited (the digest covers the tensor bytes only).
    const parsed = JSON.parse(await writeWeightFile(description, tensors)) as { model: { layers: unknown[] } };
    parsed.model.layers = Array.from({ length: 10 }, () => ({ cell: 'lstm', hidden: 4096 }));
    // 4·4096·(3 + 4096 + 1) + 9·4·4096·(4096 + 4096 + 1) + 4096·2 + 2 parameters.
    await expect(readWeightFile(JSON.stringify(parsed))).rejects.toThrowError(
      'expected a model of at most 100000000 parameters, received "1275289602 parameters"',
    );
    parsed.model.layers = [{ cell: 'lstm', hidden: 20000 }];
    await expect(readWeightFile(JSON.stringify(parsed))).rejects.toThrowError(
      'Bad weight file at model.layers[0].hidden: expected a whole number from 1 to 4096, received 20000',
    );
  });

  it('refuses a small file that describes an LSTM of hidden 2000 without building it (memory stays flat)', async () => {
    const tensors = modelTensors(buildModel(description, { seed: 1 })).map((t) => ({ name: t.name, shape: [...t.shape], values: Float32Array.from(t.values) }));
    const file = await fileWith(tensors, { ...description, layers: [{ cell: 'lstm', hidden: 2000 }] });
    const before = process.memoryUsage().rss;
    expect(() => loadModel(file)).toThrowError(/^\d+ problems:\n {2}- Bad weight file at tensors \(layers\[0\]\.forward\.input\)/);
    expect(() => new Runtime(file)).toThrowError(/^\d+ problems:\n {2}- Bad weight file at tensors \(layers\[0\]\.forward\.input\)/);
    // Built, that model's weights alone would take 64 MB in f32; nothing of it was made.
    expect(process.memoryUsage().rss - before).toBeLessThan(32 * 1024 * 1024);
  });
});
