import { describe, expect, it } from 'vitest';
import { modelTensors, readWeightFileBlob, weightFileBlob, writeWeightFile } from '@weft/io';
import { descriptions, shaken } from './models.js';

describe('weight files as Blobs', () => {
  it('round-trip through a Blob of type application/json, as a page downloads and loads them', async () => {
    const model = shaken(descriptions['plain tanh']);
    const blob = weightFileBlob(await writeWeightFile(model.description, modelTensors(model)));
    expect(blob.type).toBe('application/json');
    const file = await readWeightFileBlob(blob);
    expect(file.tensors.map((t) => t.name)).toEqual(model.parameters().map((p) => p.name));
  });

  it('refuse a Blob too large for the character limit before reading it', async () => {
    await expect(readWeightFileBlob(new Blob(['x'.repeat(4001)]), { maxCharacters: 1000 })).rejects.toThrowError(
      'Bad weight file at (file): expected at most 1000 characters, received 4001 bytes',
    );
  });
});
