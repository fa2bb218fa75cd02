import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { modelTensors, writeWeightFile } from '@weft/io';
import { createRuntime, generateTokens } from '@weft/io/runtime';
import { descriptions, shaken } from '../models.js';

describe('generating tokens', () => {
  it('generates text greedily and by seeded sampling with temperature and top-k', async () => {
    const model = shaken(descriptions.LSTM, 7);
    const runtime = await createRuntime(await writeWeightFile(model.description, modelTensors(model)));
    const greedyRun = generateTokens(runtime, { prefix: [1, 2], length: 10 });
    expect(greedyRun).toEqual(generateTokens(runtime, { prefix: [1, 2], length: 10 }));
    const a = generateTokens(runtime, { prefix: [1], length: 30, random: new Random(3), temperature: 0.8, topK: 3 });
    const b = generateTokens(runtime, { prefix: [1], length: 30, random: new Random(3), temperature: 0.8, topK: 3 });
    expect(a).toEqual(b);
    expect(a.every((t) => t >= 0 && t < 7)).toBe(true);
  });

  it('refuses a model over numbers, an empty prefix and a negative length, naming which', async () => {
    const text = shaken(descriptions.LSTM, 7);
    const runtime = await createRuntime(await writeWeightFile(text.description, modelTensors(text)));
    expect(() => generateTokens(runtime, { prefix: [], length: 3 })).toThrowError(
      'Invalid argument at generateTokens.prefix: expected at least one token id, received none',
    );
    expect(() => generateTokens(runtime, { prefix: [1], length: -1 })).toThrowError(
      'Invalid argument at generateTokens.length: expected a whole number ≥ 0, received -1',
    );
    const values = shaken(descriptions['plain tanh']);
    const numbers = await createRuntime(await writeWeightFile(values.description, modelTensors(values)));
    expect(() => generateTokens(numbers, { prefix: [1], length: 3 })).toThrowError(
      'Invalid argument at generateTokens: expected a model over token ids, received a model over numbers',
    );
  });
});
