import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Tape, tensor } from '@weft/core';
import { checkWritable, loadModelFile, loadWeightFile, readText, saveWeightFile, writeFileAtomic } from '@weft/io/node';
import { descriptions, shaken } from '../models.js';

const folder = mkdtempSync(join(tmpdir(), 'weft-node-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

describe('files in Node', () => {
  it("are written atomically: the whole text or nothing, no temporary file left, a dead save's leftover removed", () => {
    const path = join(folder, 'atomic.json');
    writeFileSync(join(folder, '.atomic.json.999999999.0011223344556677.tmp'), 'half a file');
    writeFileAtomic(path, 'first');
    writeFileAtomic(path, 'second');
    expect(readFileSync(path, 'utf8')).toBe('second');
    expect(readdirSync(folder)).toEqual(['atomic.json']);
    expect(() => writeFileAtomic(join(folder, 'no-such-folder', 'x.json'), 'x')).toThrowError(
      `Could not save at ${join(folder, 'no-such-folder', 'x.json')}: expected a file written in full (1 bytes), received the folder does not exist`,
    );
    expect(readdirSync(folder)).toEqual(['atomic.json']);
  });

  it('write every byte through short writes, and on a disk that takes no more keep the old file and say so', () => {
    const path = join(folder, 'short.json');
    // Text of 3-byte characters, written 1,000 bytes at a time: writes end in the middle of a character.
    const text = '€'.repeat(5000);
    const calls: number[] = [];
    const short = (descriptor: number, bytes: Uint8Array, offset: number, length: number) => {
      calls.push(length);
      return writeSync(descriptor, bytes, offset, Math.min(length, 1000));
    };
    writeFileAtomic(path, text, short);
    expect(readFileSync(path, 'utf8')).toBe(text);
    expect(calls).toHaveLength(15);
    // A disk that fills after 4,096 bytes: the write makes no more progress (or the system says so).
    const full = (descriptor: number, bytes: Uint8Array, offset: number, length: number) =>
      offset >= 4096 ? 0 : writeSync(descriptor, bytes, offset, Math.min(length, 4096 - offset));
    expect(() => writeFileAtomic(path, 'x'.repeat(8221), full)).toThrowError(
      `Could not save at ${path}: expected all 8221 bytes written, received 4096 (the disk took no more: is it full?)`,
    );
    const noSpace = () => {
      throw Object.assign(new Error('ENOSPC: no space left on device, write'), { code: 'ENOSPC' });
    };
    expect(() => writeFileAtomic(path, 'y'.repeat(10), noSpace)).toThrowError(
      `Could not save at ${path}: expected a file written in full (10 bytes), received no space left on the device`,
    );
    // The file saved before is whole, and no temporary file is left.
    expect(readFileSync(path, 'utf8')).toBe(text);
    expect(readdirSync(folder).filter((name) => name.includes('short'))).toEqual(['short.json']);
  });

  it('check before a long run that a file can be saved where asked, naming the path', () => {
    expect(() => checkWritable(join(folder, 'missing', 'model.weft.json'))).toThrowError(
      `Could not save at ${join(folder, 'missing', 'model.weft.json')}: expected a folder that exists and takes files, received the folder does not exist`,
    );
    const before = readdirSync(folder).sort();
    checkWritable(join(folder, 'fine.weft.json'));
    expect(readdirSync(folder).sort()).toEqual(before);
  });

  it('save a model and load it back computing the same outputs, and name the file in every error', async () => {
    const model = shaken(descriptions['GRU (reset before)']);
    const path = join(folder, 'model.weft.json');
    await saveWeightFile(path, model, { metadata: { task: 'test' } });
    const loaded = await loadModelFile(path);
    const input = tensor(
      Array.from({ length: 4 * 2 * 3 }, (_, i) => Math.sin(i)),
      [4, 2, 3],
    );
    expect(Array.from(loaded.run(new Tape({ recording: false }), input).outputs.data)).toEqual(
      Array.from(model.run(new Tape({ recording: false }), input).outputs.data),
    );
    expect((await loadWeightFile(path)).metadata.task).toBe('test');
    writeFileSync(join(folder, 'bad.json'), '{"format": "weft-weights"');
    await expect(loadWeightFile(join(folder, 'bad.json'))).rejects.toThrowError(`Bad weight file at ${join(folder, 'bad.json')}: (file)`);
    expect(() => readText(join(folder, 'missing.json'))).toThrowError(
      `Bad data at ${join(folder, 'missing.json')}: expected a readable file, received no such file`,
    );
  });
});
