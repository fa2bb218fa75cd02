import { describe, expect, it } from 'vitest';
import type { Problem } from '@weft/core';
import { encodeBase64 } from '../src/base64.js';
import { readTensors, rowsAndCols } from '../src/weight-tensors.js';

const f32 = (values: number[]): string => encodeBase64(new Uint8Array(Float32Array.from(values).buffer));

function read(tensors: unknown, version = 2, options = {}) {
  const problems: Problem[] = [];
  const add = (path: string, expected: string, received: unknown) => problems.push({ code: 'bad_weight_file', path, expected, received: String(received) });
  return { ...readTensors(tensors, version, options, add, problems), problems };
}

describe("a weight file's tensors", () => {
  it('decode f32 little-endian bytes as IEEE 754 binary32 (common practice), the bytes kept for the digest in file order', () => {
    const { decoded, storedAs, digestParts, problems } = read([
      { name: 'a', shape: [2], dtype: 'f32', data: f32([1.5, -2]) },
      { name: 'b', shape: [1, 1], dtype: 'f32', data: f32([0.25]) },
    ]);
    expect(problems).toEqual([]);
    expect(decoded.map((t) => [t.name, t.shape, Array.from(t.values)])).toEqual([
      ['a', [2], [1.5, -2]],
      ['b', [1, 1], [0.25]],
    ]);
    expect(Object.getPrototypeOf(storedAs)).toBe(null);
    expect(digestParts.map((p) => p.length)).toEqual([8, 4]);
  });

  it('collect every problem with its path before decoding anything: a repeated name, a bad shape, a wrong byte count, an unknown field', () => {
    const { decoded, problems } = read([
      { name: 'a', shape: [2], dtype: 'f32', data: f32([1, 2]) },
      { name: 'a', shape: [1], dtype: 'f32', data: f32([1]) },
      { name: 'c', shape: [-1], dtype: 'f32', data: '' },
      { name: 'd', shape: [3], dtype: 'f32', data: f32([1]), extra: 1 },
    ]);
    expect(decoded).toEqual([]);
    expect(problems.map((p) => p.path)).toEqual(['tensors[1].name', 'tensors[2].shape', 'tensors[3].extra', 'tensors[3].data']);
  });

  it('refuse a weight that is not finite, naming the tensor and entry, unless asked to keep it; respell version-1 names', () => {
    expect(read([{ name: 'w', shape: [2], dtype: 'f32', data: f32([1, Number.NaN]) }]).problems[0]).toMatchObject({
      code: 'not_finite',
      path: 'tensors (w)[1]',
    });
    expect(read([{ name: 'w', shape: [2], dtype: 'f32', data: f32([1, Number.NaN]) }], 2, { allowNonFinite: true }).decoded).toHaveLength(1);
    expect(read([{ name: 'layers.0.forward.input', shape: [1], dtype: 'f32', data: f32([1]) }], 1).decoded[0].name).toBe('layers[0].forward.input');
    expect(rowsAndCols([3, 4, 5])).toEqual([12, 5]);
    expect(rowsAndCols([])).toEqual([1, 1]);
  });
});
