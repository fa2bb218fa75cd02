import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Tape, tensor } from '@weft/core';
import { loadModelFile, loadWeightFile, readText, saveWeightFile, writeFileAtomic } from '@weft/io/node';
import { descriptions, shaken } from '../models.js';

const folder = mkdtempSync(join(tmpdir(), 'weft-node-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

describe('files in Node', () => {
  it('are written atomically: the whole text or nothing, no temporary file left, a dead save\'s leftover removed', () => {
    const path = join(folder, 'atomic.json');
    writeFileSync(join(folder, '.atomic.json.999999999.0011223344556677.tmp'), 'half a file');
    writeFileAtomic(path, 'first');
    writeFileAtomic(path, 'second');
    expect(readFileSync(path, 'utf8')).toBe('second');
    expect(readdirSync(folder)).toEqual(['atomic.json']);
    expect(() => writeFileAtomic(join(folder, 'no-such-folder', 'x.json'), 'x')).toThrowError(/ENOENT/);
    expect(readdirSync(folder)).toEqual(['atomic.json']);
  });

  it('save a model and load it back computing the same outputs, and name the file in every error', async () => {
    const model = shaken(descriptions['GRU (reset before)']);
    const path = join(folder, 'model.weft.json');
    await saveWeightFile(path, model, { metadata: { task: 'test' } });
    const loaded = await loadModelFile(path);
    const input = tensor(Array.from({ length: 4 * 2 * 3 }, (_, i) => Math.sin(i)), [4, 2, 3]);
    expect(Array.from(loaded.run(new Tape({ recording: false }), input).outputs.data)).toEqual(Array.from(model.run(new Tape({ recording: false }), input).outputs.data));
    expect((await loadWeightFile(path)).metadata.task).toBe('test');
    writeFileSync(join(folder, 'bad.json'), '{"format": "weft-weights"');
    await expect(loadWeightFile(join(folder, 'bad.json'))).rejects.toThrowError(`Bad weight file at ${join(folder, 'bad.json')}: (file)`);
    expect(() => readText(join(folder, 'missing.json'))).toThrowError(`Bad data at ${join(folder, 'missing.json')}: expected a readable file, received no such file`);
  });
});
