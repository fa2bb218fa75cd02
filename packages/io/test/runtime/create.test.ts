import { describe, expect, it } from 'vitest';
import { modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
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
});
