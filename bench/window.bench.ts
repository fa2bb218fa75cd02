/**
 * One training window through a recurrent layer: forward and the reverse sweep (no optimiser), batch 32, 32
 * steps, 64 inputs, 128 hidden, f32. Reported in µs per token (one token = one row at one step, 1,024 per
 * window), for the fused cells and for their composed twins built from core operations; plus the fused LSTM's
 * matrix-product rate: forward and backward matmul FLOPs (3 × 2·T·B·(I + H)·4H per window) over its time.
 *
 * Decision these numbers led to: the fused cells project the whole window's inputs in one product and run one
 * tape node per step; see the results file for how far that puts them ahead of the composed twins and how close
 * the LSTM window comes to the bare matrix-product rate.
 *
 * On the WebAssembly backend the LSTM window ran at 0.76–0.87 of the bare product rate (≥ 0.6 asked) and 6.6–9× the
 * JavaScript backend: the step kernels' SIMD transcendentals keep the non-product share small, so the fused cells
 * stay one tape node per step rather than fusing the products into the step.
 */
import { Random, Tape, randomUniform, resetGradients } from '@weft/core';
import { GruCell, LstmCell, runSequence } from '@weft/cells';
import type { CellMode, RecurrentCell } from '@weft/cells';
import type { BenchCase, BenchResult, Derived } from './harness.js';

const T = 32;
const B = 32;
const I = 64;
const H = 128;
const TOKENS = T * B;

interface Size {
  readonly steps: number;
  readonly batch: number;
  readonly inputs: number;
  readonly hidden: number;
}

const large: Size = { steps: T, batch: B, inputs: I, hidden: H };
const small: Size = { steps: 64, batch: 1, inputs: 16, hidden: 32 };

function window(id: string, make: (mode: CellMode, size: Size) => RecurrentCell, mode: CellMode, size: Size = large): BenchCase {
  const { steps, batch, inputs: width, hidden } = size;
  return {
    id,
    unit: 'µs/token',
    setup: () => {
      const cell = make(mode, size);
      const random = new Random('window-bench');
      const inputs = randomUniform([steps, batch, width], random, -1, 1, 'f32');
      const seed = new Float32Array(steps * batch * hidden).fill(1e-3);
      const parameters = cell.parameters().map((p) => p.tensor);
      const tape = new Tape();
      return () => {
        const { outputs } = runSequence(tape, cell, inputs);
        tape.reverseSweep(outputs, seed);
        tape.clear();
        resetGradients(parameters);
      };
    },
    value: (hz) => 1e6 / (hz * steps * batch),
  };
}

const lstm = (mode: CellMode, size: Size) => new LstmCell({ inputWidth: size.inputs, hidden: size.hidden, random: 1, mode });
const gru = (mode: CellMode, size: Size) => new GruCell({ inputWidth: size.inputs, hidden: size.hidden, random: 1, mode });

export const cases: BenchCase[] = [
  window('window.lstm.b32t32i64h128', lstm, 'fused'),
  window('window.lstm-composed.b32t32i64h128', lstm, 'composed'),
  window('window.gru.b32t32i64h128', gru, 'fused'),
  window('window.gru-composed.b32t32i64h128', gru, 'composed'),
  // A streaming-sized window, where per-operation overhead rather than the matrix products decides.
  window('window.lstm.b1t64i16h32', lstm, 'fused', small),
  window('window.lstm-composed.b1t64i16h32', lstm, 'composed', small),
  window('window.gru.b1t64i16h32', gru, 'fused', small),
  window('window.gru-composed.b1t64i16h32', gru, 'composed', small),
];

export const derived: Derived = (results): Record<string, BenchResult> => {
  const out: Record<string, BenchResult> = {};
  const lstmWindow = results['window.lstm.b32t32i64h128'];
  if (lstmWindow !== undefined) {
    const flops = 3 * 2 * T * B * (I + H) * 4 * H;
    const seconds = (lstmWindow.value * TOKENS) / 1e6;
    out['window.lstm.b32t32i64h128.gflops'] = { value: Number((flops / seconds / 1e9).toPrecision(4)), unit: 'GFLOP/s' };
  }
  for (const kind of ['lstm', 'gru']) {
    for (const shape of ['b32t32i64h128', 'b1t64i16h32']) {
      const fused = results[`window.${kind}.${shape}`];
      const composed = results[`window.${kind}-composed.${shape}`];
      if (fused !== undefined && composed !== undefined) {
        out[`window.${kind}.${shape}.speedup-over-composed`] = { value: Number((composed.value / fused.value).toPrecision(4)), unit: 'ratio' };
      }
    }
  }
  const matmul = results['matmul.f32.32x192x512'];
  const gflops = out['window.lstm.b32t32i64h128.gflops'];
  if (matmul !== undefined && gflops !== undefined) {
    out['window.lstm.b32t32i64h128.share-of-matmul'] = { value: Number((gflops.value / matmul.value).toPrecision(4)), unit: 'ratio' };
  }
  return out;
};
