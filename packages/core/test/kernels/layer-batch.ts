import type { Random } from '@weft/core';
import type { Matrix } from '../../../cells/test/onnx-equations.js';

export const rows = 3;
export const width = 5;
export const hidden = 4;
export const lengths = Int32Array.of(1, 0, 1);

export const table = (random: Random, r: number, c: number): Matrix => Array.from({ length: r }, () => Array.from({ length: c }, () => random.between(-1, 1)));
export const vector = (random: Random, n: number): number[] => Array.from({ length: n }, () => random.between(-1, 1));

/** Our [k, block·H + j] from ONNX's [(onnxBlock·H + j), k], for each of our blocks in turn. */
export function ours(onnx: Matrix, blocks: readonly number[], firstBlock = 0, count = blocks.length): Float64Array {
  const k = onnx[0].length;
  const out = new Float64Array(k * count * hidden);
  blocks.forEach((onnxBlock, block) => {
    for (let j = 0; j < hidden; j++) for (let i = 0; i < k; i++) out[i * count * hidden + (firstBlock + block) * hidden + j] = onnx[onnxBlock * hidden + j][i];
  });
  return out;
}

export function batch(random: Random) {
  const x = table(random, rows, width);
  const h0 = table(random, rows, hidden);
  return { x, h0, flatX: Float64Array.from(x.flat()), state: Float64Array.from(h0.flat()) };
}
