/**
 * Hostile or unlucky files: non-finite weights are refused (naming the tensor and index) unless asked for; a tensor
 * named `__proto__` is a name like any other and changes no object's prototype; an atomic save never shares a
 * temporary name with another and clears what killed saves of the same file left behind.
 */
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { readWeightFile, writeWeightFile } from '@weft/io';
import { writeFileAtomic } from '@weft/io/node';

const folder = mkdtempSync(join(tmpdir(), 'weft-hostile-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

const model = { input: { kind: 'values' as const, width: 1 }, layers: [{ cell: 'plain' as const, hidden: 1 }] };

describe('hostile weight files', () => {
  it('refuses NaN and infinite weights, naming the tensor and the first bad index, unless allowNonFinite is set', async () => {
    const text = await writeWeightFile(model, [
      { name: 'layers[0].forward.input', shape: [1, 1], values: Float32Array.of(NaN) },
      { name: 'layers[0].forward.recurrent', shape: [1, 1], values: Float32Array.of(0.5) },
      { name: 'layers[0].forward.bias', shape: [1], values: Float32Array.of(-Infinity) },
    ]);
    await expect(readWeightFile(text)).rejects.toThrowError(
      '2 problems:\n  - Non-finite value at tensors (layers[0].forward.input)[0]: expected finite weights, received NaN (a model with a non-finite weight computes NaN; retrain, or read with allowNonFinite to inspect it)\n' +
        '  - Non-finite value at tensors (layers[0].forward.bias)[0]: expected finite weights, received -Infinity (a model with a non-finite weight computes NaN; retrain, or read with allowNonFinite to inspect it)',
    );
    const file = await readWeightFile(text, { allowNonFinite: true });
    expect(Number.isNaN(file.tensors[0].values[0])).toBe(true);
  });

  it('keeps a tensor named __proto__ as a name, changing no prototype', async () => {
    const text = await writeWeightFile(model, [{ name: '__proto__', shape: [1], values: Float32Array.of(1) }]);
    const file = await readWeightFile(text);
    expect(file.tensors.map((t) => t.name)).toEqual(['__proto__']);
    expect(Object.getPrototypeOf(file.storedAs)).toBe(null);
    expect(Object.keys(file.storedAs)).toEqual(['__proto__']);
    // biome-ignore lint/suspicious/noProto: the test is that a tensor named __proto__ is a plain key here.
    expect(file.storedAs.__proto__).toBe('f32');
    expect(({} as Record<string, unknown>).f32).toBeUndefined();
  });
});

describe('descriptions that claim too much', () => {
  it('refuses a million layers and an embedding of 10^6 × 1000 in one line each, before building anything', async () => {
    const text = await writeWeightFile(model, [
      { name: 'layers[0].forward.input', shape: [1, 1], values: Float32Array.of(0.5) },
      { name: 'layers[0].forward.recurrent', shape: [1, 1], values: Float32Array.of(0.5) },
      { name: 'layers[0].forward.bias', shape: [1], values: Float32Array.of(0) },
    ]);
    const parsed = JSON.parse(text) as { model: Record<string, unknown> };
    const before = process.memoryUsage().rss;
    parsed.model.layers = Array.from({ length: 1_000_000 }, () => ({ cell: 'plain', hidden: 1 }));
    await expect(readWeightFile(JSON.stringify(parsed))).rejects.toThrowError(
      'Bad weight file at model.layers: expected at most 256 layers, received an array of 1000000',
    );
    parsed.model.layers = [{ cell: 'plain', hidden: 1 }];
    parsed.model.input = { kind: 'embedding', vocabulary: 1_000_000, width: 1000 };
    await expect(readWeightFile(JSON.stringify(parsed))).rejects.toThrowError(
      /Bad weight file at model: expected a model of at most 100000000 parameters, received "1000001002 parameters"/,
    );
    // What the test itself makes (a million layer records, their JSON, parsed again) grows the resident memory by an
    // amount that depends on the Node line's collector: under 300 MB on Node 20 and 26, 522 MB measured on Node 24.
    // The embedding, if it were built, would take 4 GB.
    expect(process.memoryUsage().rss - before).toBeLessThan(1024 * 1024 * 1024);
  });
});

describe('atomic saves', () => {
  it('clear the temporary files of killed saves of the same file, and leave the others alone', () => {
    const target = join(folder, 'model.weft.json');
    // A leftover of a process that no longer runs (pid 2^22 + 1 is above Linux's default pid_max), one of a
    // running process (this one's parent), and one of another file.
    const dead = `.model.weft.json.${2 ** 22 + 1}.00112233aabbccdd.tmp`;
    const running = `.model.weft.json.${process.ppid}.00112233aabbccdd.tmp`;
    const other = `.other.json.${2 ** 22 + 1}.00112233aabbccdd.tmp`;
    for (const name of [dead, running, other]) writeFileSync(join(folder, name), 'half a file');
    writeFileAtomic(target, 'the whole file');
    const names = readdirSync(folder);
    expect(names).not.toContain(dead);
    expect(names).toContain(running);
    expect(names).toContain(other);
    expect(existsSync(target)).toBe(true);
    expect(names.filter((n) => n.startsWith('.model.weft.json.') && n.includes(`.${process.pid}.`))).toEqual([]);
  });
});
