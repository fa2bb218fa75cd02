/**
 * The runtime's whole layer steps against the ONNX operator equations (a plain f64 implementation written from the
 * ONNX specification, packages/cells/test/onnx-equations.ts, which uses nothing of weft), one step of a batch with
 * a row of length 0 that must hold its state. Weights are drawn in ONNX's layout and moved into ours.
 */
import { describe, expect, it } from 'vitest';
import { matrix, multiply as referenceMultiply } from 'mathjs';
import type { Matrix as MathMatrix } from 'mathjs';
import { Random, kernels } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import { specGru, specLstm, specRnn } from '../../../cells/test/onnx-equations.js';
import type { Matrix } from '../../../cells/test/onnx-equations.js';

const rows = 3;
const width = 5;
const hidden = 4;
const lengths = Int32Array.of(1, 0, 1);

const table = (random: Random, r: number, c: number): Matrix => Array.from({ length: r }, () => Array.from({ length: c }, () => random.between(-1, 1)));
const vector = (random: Random, n: number): number[] => Array.from({ length: n }, () => random.between(-1, 1));

/** Our [k, block·H + j] from ONNX's [(onnxBlock·H + j), k], for each of our blocks in turn. */
function ours(onnx: Matrix, blocks: readonly number[], firstBlock = 0, count = blocks.length): Float64Array {
  const k = onnx[0].length;
  const out = new Float64Array(k * count * hidden);
  blocks.forEach((onnxBlock, block) => {
    for (let j = 0; j < hidden; j++) for (let i = 0; i < k; i++) out[i * count * hidden + (firstBlock + block) * hidden + j] = onnx[onnxBlock * hidden + j][i];
  });
  return out;
}

function batch(random: Random) {
  const x = table(random, rows, width);
  const h0 = table(random, rows, hidden);
  return { x, h0, flatX: Float64Array.from(x.flat()), state: Float64Array.from(h0.flat()) };
}

describe('the layer steps of the inference runtime', () => {
  it('compute one LSTM step with peepholes as the ONNX LSTM equations do', () => {
    const random = new Random('layer-lstm');
    const w = table(random, 4 * hidden, width);
    const r = table(random, 4 * hidden, hidden);
    const b = vector(random, 8 * hidden);
    const p = vector(random, 3 * hidden);
    const { x, h0, flatX, state } = batch(random);
    const c0 = table(random, rows, hidden);
    const spec = specLstm({ x: [x], w, r, b, p, h0, c0, lengths: Array.from(lengths) });
    // ONNX gate blocks i, o, f, c; ours i, f, g, o.
    const blocks = [0, 2, 3, 1];
    const bias = Float64Array.from(
      { length: 4 * hidden },
      (_, i) => b[blocks[Math.floor(i / hidden)] * hidden + (i % hidden)] + b[4 * hidden + blocks[Math.floor(i / hidden)] * hidden + (i % hidden)],
    );
    const peephole = Float64Array.from([...p.slice(0, hidden), ...p.slice(2 * hidden), ...p.slice(hidden, 2 * hidden)]);
    const cell = Float64Array.from(c0.flat());
    kernels.lstmLayerStep(
      flatX,
      ours(w, blocks),
      ours(r, blocks),
      bias,
      peephole,
      state,
      cell,
      new Float64Array(rows * 4 * hidden),
      new Float64Array(rows * hidden),
      rows,
      width,
      hidden,
      lengths,
      0,
    );
    expect(worstGap(state, spec.yh.flat())).toBeLessThan(1e-14);
    expect(worstGap(cell, spec.yc!.flat())).toBeLessThan(1e-14);
  });

  for (const linearBeforeReset of [false, true]) {
    it(`compute one GRU step as the ONNX GRU equations do, linear_before_reset ${Number(linearBeforeReset)}`, () => {
      const random = new Random(`layer-gru-${linearBeforeReset}`);
      const w = table(random, 3 * hidden, width);
      const r = table(random, 3 * hidden, hidden);
      // With the reset before the product ONNX's candidate Rb sits outside it, so it folds into our bias.
      const b = vector(random, 6 * hidden);
      const { x, h0, flatX, state } = batch(random);
      const spec = specGru({ x: [x], w, r, b, h0, lengths: Array.from(lengths), linearBeforeReset });
      const bias = Float64Array.from({ length: 3 * hidden }, (_, i) => b[i] + (linearBeforeReset && i >= 2 * hidden ? 0 : b[3 * hidden + i]));
      const candidateBias = linearBeforeReset ? Float64Array.from(b.slice(5 * hidden)) : null;
      kernels.gruLayerStep(
        flatX,
        ours(w, [0, 1, 2]),
        bias,
        ours(r, [0, 1]),
        ours(r, [2], 0, 1),
        candidateBias,
        state,
        new Float64Array(rows * 3 * hidden),
        new Float64Array(rows * 3 * hidden),
        new Float64Array(rows * 2 * hidden),
        new Float64Array(rows * hidden),
        new Float64Array(rows * hidden),
        rows,
        width,
        hidden,
        lengths,
        0,
      );
      expect(worstGap(state, spec.yh.flat())).toBeLessThan(1e-14);
    });
  }

  it('compute one plain tanh step as the ONNX RNN equations do, and a ReLU step as max(0, x·W + b + h·R)', () => {
    const random = new Random('layer-plain');
    const w = table(random, hidden, width);
    const r = table(random, hidden, hidden);
    const b = vector(random, 2 * hidden);
    const { x, h0, flatX, state } = batch(random);
    const spec = specRnn({ x: [x], w, r, b, h0, lengths: Array.from(lengths) });
    const bias = Float64Array.from({ length: hidden }, (_, j) => b[j] + b[hidden + j]);
    const relu = Float64Array.from(state);
    kernels.plainLayerStep(flatX, ours(w, [0]), ours(r, [0]), bias, state, new Float64Array(rows * hidden), false, rows, width, hidden, lengths, 0);
    expect(worstGap(state, spec.yh.flat())).toBeLessThan(1e-14);
    kernels.plainLayerStep(flatX, ours(w, [0]), ours(r, [0]), bias, relu, new Float64Array(rows * hidden), true, rows, width, hidden, lengths, 0);
    for (let row = 0; row < rows; row++) {
      for (let j = 0; j < hidden; j++) {
        let a = bias[j];
        for (let k = 0; k < width; k++) a += x[row][k] * w[j][k];
        for (let k = 0; k < hidden; k++) a += h0[row][k] * r[j][k];
        const expected = lengths[row] === 0 ? h0[row][j] : Math.max(0, a);
        expect(Math.abs(relu[row * hidden + j] - expected)).toBeLessThan(1e-14);
      }
    }
  });

  it('compute the readout x·W + b as mathjs multiply does, plus the bias row', () => {
    const random = new Random('affine');
    const x = table(random, 3, 6);
    const weights = table(random, 6, 2);
    const bias = Float64Array.of(0.5, -2);
    const out = kernels.affineRows(new Float64Array(6), bias, Float64Array.from(x.flat()), Float64Array.from(weights.flat()), 3, 6, 2);
    const product = ((referenceMultiply(matrix(x), matrix(weights)) as MathMatrix).toArray() as number[][]).flat();
    expect(
      worstGap(
        out,
        product.map((v, i) => v + bias[i % 2]),
      ),
    ).toBeLessThan(1e-14);
  });
});
