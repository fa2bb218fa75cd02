/**
 * The runtime's WebAssembly layer steps (core/wasm/runtime.ts, through forward-webassembly.ts) against their
 * JavaScript twins (kernels/layer-steps.ts, themselves checked against the ONNX operator equations), f32, within
 * |a − b| ≤ 1e-5·max(1, |a|, |b|) (tests/helpers/close.ts form).
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { createForwardWebAssembly, forwardWebAssemblyUnavailable, javascriptForward } from '@weft/core/forward';
import { worstGap } from '../../../../tests/helpers/close.js';

const available = forwardWebAssemblyUnavailable() === null;

/** A GRU layer step's working buffers for `rows` rows, zeroed, on `backend`. */
function gruWork(backend: typeof javascriptForward, rows: number, hidden: number) {
  return {
    projected: backend.floats(rows * 3 * hidden),
    gates: backend.floats(rows * 3 * hidden),
    updateReset: backend.floats(rows * 2 * hidden),
    candidate: backend.floats(rows * hidden),
    resetHidden: backend.floats(rows * hidden),
  };
}

describe.skipIf(!available)("the runtime's WebAssembly layer steps against their JavaScript twins", () => {
  it('agree on the LSTM, GRU (both forms) and plain layer steps and the readout, one row and five rows, ragged', () => {
    const wasm = createForwardWebAssembly({ memoryBytes: 8 * 1048576 });
    const random = new Random('layers');
    const values = (n: number, scale = 0.5): number[] => Array.from({ length: n }, () => random.between(-scale, scale));
    let worst = 0;
    const compare = (a: Float32Array, b: Float32Array): void => {
      worst = Math.max(worst, worstGap(a, b));
    };
    for (const rows of [1, 5]) {
      const inputWidth = 7;
      const hidden = 13;
      const lengths = rows === 1 ? null : Int32Array.from({ length: rows }, (_, b) => b % 3);
      // The same inputs, weights and state on each backend, weights through each backend's matrix layout.
      const make = (backend: typeof javascriptForward, list: number[]) => {
        const array = backend.floats(list.length);
        array.set(list);
        return array;
      };
      const x = values(rows * inputWidth);
      const h = values(rows * hidden);
      const c = values(rows * hidden);
      const w4 = values(inputWidth * 4 * hidden);
      const r4 = values(hidden * 4 * hidden);
      const b4 = values(4 * hidden);
      const p3 = values(3 * hidden);
      const sides = [wasm, javascriptForward].map((backend) => {
        const state = make(backend, h);
        const cell = make(backend, c);
        backend.kernels.lstmLayerStep(
          { h: state, c: cell },
          make(backend, x),
          {
            input: backend.matrix(w4, inputWidth, 4 * hidden),
            recurrent: backend.matrix(r4, hidden, 4 * hidden),
            bias: make(backend, b4),
            peephole: make(backend, p3),
          },
          { gates: backend.floats(rows * 4 * hidden), tanhCell: backend.floats(rows * hidden) },
          { rows, inputWidth, hidden, lengths, step: 1 },
        );
        return [state, cell];
      });
      compare(sides[0][0], sides[1][0]);
      compare(sides[0][1], sides[1][1]);
      const w3 = values(inputWidth * 3 * hidden);
      const b3 = values(3 * hidden);
      const r2 = values(hidden * 2 * hidden);
      const rn = values(hidden * hidden);
      const bn = values(hidden);
      for (const resetAfter of [false, true]) {
        const gru = [wasm, javascriptForward].map((backend) => {
          const state = make(backend, h);
          const weights = {
            input: backend.matrix(w3, inputWidth, 3 * hidden),
            bias: make(backend, b3),
            recurrent: backend.matrix(r2, hidden, 2 * hidden),
            candidate: backend.matrix(rn, hidden, hidden),
            candidateBias: resetAfter ? make(backend, bn) : null,
          };
          backend.kernels.gruLayerStep(state, make(backend, x), weights, gruWork(backend, rows, hidden), { rows, inputWidth, hidden, lengths, step: 1 });
          return state;
        });
        compare(gru[0], gru[1]);
      }
      const w1 = values(inputWidth * hidden);
      for (const rectified of [false, true]) {
        const plain = [wasm, javascriptForward].map((backend) => {
          const state = make(backend, h);
          const weights = { input: backend.matrix(w1, inputWidth, hidden), recurrent: backend.matrix(rn, hidden, hidden), bias: make(backend, bn) };
          const place = { rows, inputWidth, hidden, lengths, step: 1 };
          backend.kernels.plainLayerStep(state, make(backend, x), weights, backend.floats(rows * hidden), rectified ? 'relu' : 'tanh', place);
          return state;
        });
        compare(plain[0], plain[1]);
      }
      const readout = values(hidden * 3);
      const readoutBias = values(3);
      const outs = [wasm, javascriptForward].map((backend) => {
        const out = backend.floats(rows * 3);
        backend.kernels.affineRows(out, make(backend, h), backend.matrix(readout, hidden, 3), make(backend, readoutBias), { rows, inner: hidden, cols: 3 });
        return out;
      });
      compare(outs[0], outs[1]);
    }
    console.log(`layer steps worst difference: ${worst.toExponential(2)}`);
    expect(worst).toBeLessThanOrEqual(1e-5);
  });
});

describe.skipIf(!available)("the runtime's WebAssembly streaming products", () => {
  it('walk the weights from either end on alternate steps and give the same bits both ways (LSTM, GRU, plain; one row and three)', () => {
    // Each column's sum runs over k in order whichever end the panels are walked from (core/wasm/packed.ts), so an
    // even and an odd step number from the same state must agree to the bit; hidden 40 gives 6 groups of three
    // panels and a tail of two in the LSTM's 160 gate columns.
    const wasm = createForwardWebAssembly({ memoryBytes: 8 * 1048576 });
    const random = new Random('either end');
    const values = (n: number): Float32Array => {
      const array = wasm.floats(n);
      for (let i = 0; i < n; i++) array[i] = random.between(-0.5, 0.5);
      return array;
    };
    const copy = (a: Float32Array): Float32Array => {
      const out = wasm.floats(a.length);
      out.set(a);
      return out;
    };
    const inputWidth = 9;
    const hidden = 40;
    let compared = 0;
    for (const rows of [1, 3]) {
      const x = values(rows * inputWidth);
      const h = values(rows * hidden);
      const c = values(rows * hidden);
      const lstm = {
        input: wasm.matrix(values(inputWidth * 4 * hidden), inputWidth, 4 * hidden),
        recurrent: wasm.matrix(values(hidden * 4 * hidden), hidden, 4 * hidden),
        bias: values(4 * hidden),
        peephole: values(3 * hidden),
      };
      const gru = {
        input: wasm.matrix(values(inputWidth * 3 * hidden), inputWidth, 3 * hidden),
        bias: values(3 * hidden),
        recurrent: wasm.matrix(values(hidden * 2 * hidden), hidden, 2 * hidden),
        candidate: wasm.matrix(values(hidden * hidden), hidden, hidden),
        candidateBias: null,
      };
      const plain = {
        input: wasm.matrix(values(inputWidth * hidden), inputWidth, hidden),
        recurrent: wasm.matrix(values(hidden * hidden), hidden, hidden),
        bias: values(hidden),
      };
      const results = [0, 1].map((step) => {
        const place = { rows, inputWidth, hidden, lengths: null, step };
        const lstmState = { h: copy(h), c: copy(c) };
        wasm.kernels.lstmLayerStep(lstmState, x, lstm, { gates: wasm.floats(rows * 4 * hidden), tanhCell: wasm.floats(rows * hidden) }, place);
        const gruState = copy(h);
        wasm.kernels.gruLayerStep(gruState, x, gru, gruWork(wasm, rows, hidden), place);
        const plainState = copy(h);
        wasm.kernels.plainLayerStep(plainState, x, plain, wasm.floats(rows * hidden), 'tanh', place);
        return [lstmState.h, lstmState.c, gruState, plainState];
      });
      const before = [h, c, h, h];
      results[0].forEach((even, i) => {
        expect(Array.from(results[1][i])).toEqual(Array.from(even));
        expect(even.some((v, j) => v !== before[i][j])).toBe(true);
        compared += even.length;
      });
    }
    expect(compared).toBe(4 * 4 * hidden);
  });
});

describe.skipIf(!available)("the runtime's WebAssembly forward backend", () => {
  it('packs a weight matrix for its kernels, zeroes new arrays, takes released ones back and names itself', () => {
    const wasm = createForwardWebAssembly({ memoryBytes: 1048576 });
    const floats = wasm.floats(10);
    expect(Array.from(floats).every((v) => v === 0)).toBe(true);
    // 3 × 9 packs into two 8-column panels: 3 rows × 16 columns.
    expect(
      wasm.matrix(
        Array.from({ length: 27 }, (_, i) => i),
        3,
        9,
      ).length,
    ).toBeGreaterThanOrEqual(27);
    wasm.release(floats);
    expect(wasm.describe()).toMatch(/^webassembly/);
    expect(() => createForwardWebAssembly({ memoryBytes: 100 })).toThrowError(/^Invalid option at /);
  });
});
