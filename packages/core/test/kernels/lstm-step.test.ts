import { describe, expect, it } from 'vitest';
import { Random, kernels } from '@weft/core';
import { worstGap } from '../../../../tests/helpers/close.js';
import { numericGradient, uniform, weighted } from './finite-differences.js';
import * as layer from './layer-batch.js';
import { specLstm } from '../../../cells/test/onnx-equations.js';

// Three rows at step 1; row 1 has length 1, so it is past its end and holds its state.
const rows = 3;
const hidden = 4;
const lengths = Int32Array.of(3, 1, 2);
const step = 1;
const at = { rows, hidden, lengths, step };
const sigma = (x: number): number => 1 / (1 + Math.exp(-x));

interface Inputs {
  pre: Float64Array;
  hPrevious: Float64Array;
  cPrevious: Float64Array;
  peephole: Float64Array | null;
}

function inputs(seed: string, peepholes: boolean): Inputs {
  const random = new Random(seed);
  return {
    pre: uniform(random, rows * 4 * hidden, -2, 2),
    hPrevious: uniform(random, rows * hidden),
    cPrevious: uniform(random, rows * hidden),
    peephole: peepholes ? uniform(random, 3 * hidden) : null,
  };
}

function forward(x: Inputs) {
  const h = new Float64Array(rows * hidden);
  const c = new Float64Array(rows * hidden);
  const gates = Float64Array.from(x.pre);
  const tanhCell = new Float64Array(rows * hidden);
  kernels.lstmStepForward({ h, c, gates, tanhCell }, { h: x.hPrevious, c: x.cPrevious }, x.peephole, at);
  return { h, c, gates, tanhCell };
}

describe('the LSTM step kernels (Gers, Schmidhuber & Cummins 2000; peepholes: Gers & Schmidhuber 2000)', () => {
  for (const peepholes of [false, true]) {
    const name = peepholes ? 'with peepholes' : 'without peepholes';
    it(`compute the gates, c and h of the equations ${name}, and hold a row past its length`, () => {
      const x = inputs(`lstm-${name}`, peepholes);
      const { h, c } = forward(x);
      const p = x.peephole;
      for (let b = 0; b < rows; b++) {
        for (let j = 0; j < hidden; j++) {
          const at = b * hidden + j;
          if (b === 1) {
            expect([h[at], c[at]]).toEqual([x.hPrevious[at], x.cPrevious[at]]);
            continue;
          }
          // The equations, gate order i, f, g, o: c = f·c₋ + i·g, h = o·tanh(c), peepholes i, f on c₋ and o on c.
          const a = (gate: number) => x.pre[b * 4 * hidden + gate * hidden + j];
          const cPrev = x.cPrevious[at];
          const i = sigma(a(0) + (p === null ? 0 : p[j] * cPrev));
          const f = sigma(a(1) + (p === null ? 0 : p[hidden + j] * cPrev));
          const g = Math.tanh(a(2));
          const cNext = f * cPrev + i * g;
          const o = sigma(a(3) + (p === null ? 0 : p[2 * hidden + j] * cNext));
          expect(worstGap([c[at], h[at]], [cNext, o * Math.tanh(cNext)])).toBeLessThan(1e-15);
        }
      }
    });

    it(`give δa, δc₋ and δp ${name} as finite differences do, and pass a held row's gradients to the previous state`, () => {
      const x = inputs(`lstm-back-${name}`, peepholes);
      const random = new Random(`lstm-upstream-${name}`);
      const towardH = uniform(random, rows * hidden);
      const towardC = uniform(random, rows * hidden);
      const objective = () => {
        const { h, c } = forward(x);
        return weighted(h, towardH) + weighted(c, towardC);
      };
      const { c, gates, tanhCell } = forward(x);
      const gateGradient = new Float64Array(rows * 4 * hidden).fill(7);
      const hPreviousGradient = new Float64Array(rows * hidden);
      const cPreviousGradient = new Float64Array(rows * hidden);
      const peepholeGradient = peepholes ? new Float64Array(3 * hidden) : null;
      kernels.lstmStepBackward(
        { gates: gateGradient, hPrevious: hPreviousGradient, cPrevious: cPreviousGradient, peephole: peepholeGradient },
        { h: towardH, c: towardC },
        { gates, tanhCell, cPrevious: x.cPrevious, c, peephole: x.peephole },
        at,
      );
      expect(worstGap(gateGradient, numericGradient(objective, x.pre))).toBeLessThan(1e-8);
      expect(worstGap(cPreviousGradient, numericGradient(objective, x.cPrevious))).toBeLessThan(1e-8);
      // h₋ reaches the objective only through a held row here (its share through R is the caller's product).
      expect(worstGap(hPreviousGradient, numericGradient(objective, x.hPrevious))).toBeLessThan(1e-8);
      if (peepholeGradient !== null) expect(worstGap(peepholeGradient, numericGradient(objective, x.peephole!))).toBeLessThan(1e-8);
      expect(Array.from(gateGradient.subarray(4 * hidden, 8 * hidden)).every((v) => v === 0)).toBe(true);
    });
  }
});

describe("the runtime's whole-layer LSTM step", () => {
  const { rows, width, hidden, lengths, table, vector, ours, batch } = layer;
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
      { h: state, c: cell },
      flatX,
      { input: ours(w, blocks), recurrent: ours(r, blocks), bias, peephole },
      { gates: new Float64Array(rows * 4 * hidden), tanhCell: new Float64Array(rows * hidden) },
      { rows, inputWidth: width, hidden, lengths, step: 0 },
    );
    expect(worstGap(state, spec.yh.flat())).toBeLessThan(1e-14);
    expect(worstGap(cell, spec.yc!.flat())).toBeLessThan(1e-14);
  });
});
