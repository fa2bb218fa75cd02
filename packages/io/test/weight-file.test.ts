import { describe, expect, it } from 'vitest';
import { Tape, WeftError, tensor } from '@weft/core';
import type { SequenceModel } from '@weft/cells';
import { loadModel, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import type { StoredDType } from '@weft/io';
import { descriptions, shaken, trainedForecaster, trainedTextModel } from './models.js';

async function write(model: SequenceModel, dtype: StoredDType = 'f32'): Promise<string> {
  return writeWeightFile(model.description, modelTensors(model), { dtype, metadata: { task: 'test' } });
}

function outputsOf(model: SequenceModel, input: Parameters<SequenceModel['run']>[1]): Float32Array {
  return Float32Array.from(model.run(new Tape({ recording: false }), input).outputs.data);
}

/** Row-wise softmax: what a classifier's user reads from its logits. */
function probabilities(logits: Float32Array, width: number): Float32Array {
  const out = new Float32Array(logits.length);
  for (let r = 0; r < logits.length / width; r++) {
    let max = -Infinity;
    for (let j = 0; j < width; j++) max = Math.max(max, logits[r * width + j]);
    let total = 0;
    for (let j = 0; j < width; j++) total += Math.exp(logits[r * width + j] - max);
    for (let j = 0; j < width; j++) out[r * width + j] = Math.exp(logits[r * width + j] - max) / total;
  }
  return out;
}

async function worstGap(model: SequenceModel, dtype: StoredDType, input: Parameters<SequenceModel['run']>[1], asProbabilities = false): Promise<number> {
  const read = (m: SequenceModel) => (asProbabilities ? probabilities(outputsOf(m, input), m.outputWidth) : outputsOf(m, input));
  const reference = read(model);
  const loaded = loadModel(await readWeightFile(await write(model, dtype)));
  const got = read(loaded);
  let worst = 0;
  for (let i = 0; i < got.length; i++) worst = Math.max(worst, Math.abs(got[i] - reference[i]));
  return worst;
}

/** A version-2 file's text as version 1 wrote it: version 1 and the old spelling `layers.0.forward.input`. */
function asVersionOne(text: string): string {
  return text.replace('"version": 2', '"version": 1').replace(/"layers\[(\d+)\]\./g, '"layers.$1.');
}

describe('a version 1 weight file', () => {
  it('is read with its tensors named in the version 2 spelling, its digest verified, and runs the same', async () => {
    const model = shaken(descriptions.bidirectional);
    const text = await write(model);
    const old = asVersionOne(text);
    expect(old).toContain('"name":"layers.1.backward.peephole"');
    const file = await readWeightFile(old);
    expect(file.version).toBe(1);
    expect(file.digestVerified).toBe(true);
    expect(file.tensors.map((t) => t.name)).toEqual(model.parameters().map((p) => p.name));
    expect(file.tensors.map((t) => t.name)).toContain('layers[1].backward.peephole');
    const input = { tokens: Int32Array.from({ length: 12 }, (_, i) => i % 5), steps: 4, batch: 3 };
    expect(outputsOf(loadModel(file), input)).toEqual(outputsOf(model, input));
  });
});

describe('the weight file', () => {
  it('round-trips every model kind: write → read → outputs identical bit for bit (f32)', async () => {
    for (const [label, description] of Object.entries(descriptions)) {
      const model = shaken(description);
      const input =
        description.input.kind === 'embedding'
          ? { tokens: Int32Array.from({ length: 12 }, (_, i) => (i * 5) % 7), steps: 4, batch: 3 }
          : tensor(
              Array.from({ length: 36 }, (_, i) => Math.sin(i)),
              [4, 3, 3],
            );
      const reference = outputsOf(model, input);
      const file = await readWeightFile(await write(model));
      const again = outputsOf(loadModel(file), input);
      expect({ label, same: Array.from(again) }).toEqual({ label, same: Array.from(reference) });
      expect(file.metadata.task).toBe('test');
    }
  });

  // The text model's outputs are compared as next-character probabilities (what its user reads), the
  // forecaster's as the forecast values themselves.
  it('keeps f16 files within 1e-3 and int8 files within 2e-2 of the f32 outputs on the demo-style models', async () => {
    const { model: text, tokens } = trainedTextModel();
    const textInput = { tokens: tokens.slice(0, 64 * 2), steps: 64, batch: 2 };
    const { model: forecaster, values } = trainedForecaster();
    const forecastInput = tensor(values.slice(0, 100 * 2), [100, 1, 2]);
    const figures = {
      textF16: await worstGap(text, 'f16', textInput, true),
      textI8: await worstGap(text, 'i8', textInput, true),
      forecastF16: await worstGap(forecaster, 'f16', forecastInput),
      forecastI8: await worstGap(forecaster, 'i8', forecastInput),
    };
    console.log(`largest output difference from f32: ${JSON.stringify(figures)}`);
    expect(figures.textF16).toBeLessThan(1e-3);
    expect(figures.forecastF16).toBeLessThan(1e-3);
    expect(figures.textI8).toBeLessThan(2e-2);
    expect(figures.forecastI8).toBeLessThan(2e-2);
  });

  it('is JSON with a readable, pretty-printed header and one line per tensor', async () => {
    const text = await write(shaken(descriptions.LSTM));
    expect(text.startsWith('{\n  "format": "weft-weights",\n  "version": 2,\n  "model": {\n')).toBe(true);
    expect(text.split('\n').filter((line) => line.trimStart().startsWith('{"name":')).length).toBe(6);
    expect(() => JSON.parse(text)).not.toThrow();
  });

  describe('refuses', () => {
    const good = () => write(shaken(descriptions['GRU (reset before)']));

    async function problems(text: string, options = {}): Promise<string[]> {
      try {
        await readWeightFile(text, options);
      } catch (error) {
        expect(error).toBeInstanceOf(WeftError);
        return (error as WeftError).problems.map((p) => `${p.path}: expected ${p.expected}, received ${p.received}`);
      }
      throw new Error('expected the file to be refused');
    }

    it('a newer version, saying so', async () => {
      const text = (await good()).replace('"version": 2', '"version": 7');
      expect(await problems(text)).toEqual([
        "version: expected version 2 or older (this reader's), received 7: written by a newer weft; update weft to read it",
      ]);
    });

    it('a changed tensor byte, by its digest', async () => {
      const text = await good();
      const at = text.indexOf('"data": "') >= 0 ? text.indexOf('"data": "') + 9 : text.indexOf('"data":"') + 8;
      const flipped = text.slice(0, at) + (text[at] === 'A' ? 'B' : 'A') + text.slice(at + 1);
      const found = await problems(flipped);
      expect(found).toHaveLength(1);
      expect(found[0]).toMatch(/^digest\.hex: expected [0-9a-f]{64}, received [0-9a-f]{64} \(SHA-256 of the tensor bytes: the file was changed or damaged\)$/);
    });

    it('a changed tensor byte is reported, not refused, with verifyDigest "report", and not looked for with false', async () => {
      const text = await good();
      const at = text.indexOf('"data": "') >= 0 ? text.indexOf('"data": "') + 9 : text.indexOf('"data":"') + 8;
      const flipped = text.slice(0, at) + (text[at] === 'A' ? 'B' : 'A') + text.slice(at + 1);
      const reported = await readWeightFile(flipped, { verifyDigest: 'report' });
      expect([reported.digestChecked, reported.digestVerified]).toEqual([true, false]);
      const skipped = await readWeightFile(flipped, { verifyDigest: false });
      expect([skipped.digestChecked, skipped.digestVerified]).toEqual([false, false]);
      const intact = await readWeightFile(text);
      expect([intact.digestChecked, intact.digestVerified]).toEqual([true, true]);
    });

    it('a truncated file', async () => {
      const text = await good();
      const found = await problems(text.slice(0, Math.floor(text.length * 0.7)));
      expect(found[0]).toMatch(/^\(file\): expected valid JSON, received .* \(the file looks cut short\)$/);
    });

    it('__proto__, constructor and prototype keys anywhere', async () => {
      const text = (await good()).replace('"metadata": {', '"metadata": { "__proto__": { "polluted": true },');
      expect(await problems(text)).toEqual(['(file): expected no key named __proto__, constructor or prototype, received a key "__proto__"']);
      expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    });

    it('shapes over the element cap, before allocating anything', async () => {
      const text = (await good()).replace(/"shape":\[3,18\]/, '"shape":[300000,100000]');
      const found = await problems(text, { maxElements: 1_000_000 });
      expect(found).toEqual(['tensors[0].shape: expected at most 1000000 elements, received "30000000000"']);
    });

    it('every problem of a damaged file at once, each with its path', async () => {
      const parsed = JSON.parse(await good());
      parsed.tensors[1].dtype = 'f64';
      parsed.tensors[2].shape = [-1];
      delete parsed.tensors[3].data;
      parsed.model.layers[0].cell = 'transformer';
      const found = await problems(JSON.stringify(parsed));
      expect(found).toEqual([
        "model.layers[0].cell: expected one of 'lstm', 'gru', 'plain', received \"transformer\"",
        "tensors[1].dtype: expected 'f32', 'f16' or 'i8', received \"f64\"",
        'tensors[2].shape: expected up to 8 whole numbers in [0, 50000000], received an array of 1',
        'tensors[3].data: expected base64 text, received undefined',
      ]);
    });

    it('tensors that do not fit the model description, when loading a model', async () => {
      const parsed = JSON.parse(await good());
      parsed.model.layers[0].hidden = 7;
      // Re-reading is fine (shapes are only compared with the description when a model is built) …
      const file = await readWeightFile(JSON.stringify(parsed));
      // … and building names every tensor that does not fit.
      expect(() => loadModel(file)).toThrowError(
        /Bad weight file at tensors \(layers\[0\]\.forward\.input\)\.shape: expected \[3, 21\] \(from the model description\), received \[3, 18\]/,
      );
    });

    it('deep nesting, without recursing into it', async () => {
      const deep = `{"format":"weft-weights","version":1,"model":${'['.repeat(100000)}${']'.repeat(100000)}}`;
      expect((await problems(deep))[0]).toMatch(/expected nesting at most 64 deep/);
    });
  });

  it('reads what it wrote with a seeded random model bit for bit, in every stored dtype, per tensor', async () => {
    const model = shaken(descriptions.stacked, 9);
    const dtypes: Record<string, StoredDType> = {};
    model.parameters().forEach((p, i) => (dtypes[p.name] = (['f32', 'f16', 'i8'] as const)[i % 3]));
    const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model), { dtype: dtypes }));
    expect(file.storedAs).toEqual(dtypes);
    for (const t of file.tensors) {
      const original = model.parameters().find((p) => p.name === t.name)!.tensor.data;
      if (dtypes[t.name] === 'f32') expect(Array.from(t.values)).toEqual(Array.from(original));
    }
  });
});

describe('weight files as Blobs', () => {
  it('round-trip through a Blob', async () => {
    const { readWeightFileBlob, weightFileBlob } = await import('@weft/io');
    const model = shaken(descriptions.LSTM, 2);
    const blob = weightFileBlob(await writeWeightFile(model.description, modelTensors(model)));
    expect(blob.type).toBe('application/json');
    const file = await readWeightFileBlob(blob);
    expect(file.tensors.map((t) => t.name)).toEqual(model.parameters().map((p) => p.name));
    await expect(readWeightFileBlob(blob, { maxCharacters: 10 })).rejects.toThrowError(/Bad weight file at \(file\): expected at most 10 characters/);
  });
});
