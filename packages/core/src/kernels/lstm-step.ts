/**
 * The elementwise part of one LSTM step, forward and backward, for a batch of rows. The matrix products around
 * it (gate pre-activations, and the recurrent products of the reverse sweep) are core matmul calls made by the
 * caller. Equations (Gers, Schmidhuber & Cummins 2000, forget gate; Gers & Schmidhuber 2000, peepholes; in the
 * form of the ONNX LSTM operator, where the output gate's peephole reads the new cell):
 *
 *   i = σ(a_i + p_i ⊙ c₋),  f = σ(a_f + p_f ⊙ c₋),  g = tanh(a_g),
 *   c = f ⊙ c₋ + i ⊙ g,     o = σ(a_o + p_o ⊙ c),    h = o ⊙ tanh(c)
 *
 * where a = x·W + h₋·R + b is the [B, 4H] pre-activation in our gate order i, f, g, o. Rows past their length
 * (step ≥ lengths[b]) hold their state: h = h₋, c = c₋.
 */
import type { FloatArray } from '../dtype.js';
import { logistic } from './logistic.js';
import { addRowInto, copyRow, holdRow, passHeldRow } from './rows.js';
import { matmul, matmulInto } from './matmul.js';
import { addRow } from './elementwise.js';
import { productShape, refill } from './shapes.js';
import type { LayerStepAt, LstmArriving, LstmSaved, LstmState, LstmStepGradients, LstmStepOut, LstmWeights, LstmWork, StepAt } from './step-records.js';

/**
 * On entry `out.gates` holds the pre-activations a; on exit the activations i, f, g, o (saved for backward).
 * Writes out.h and out.c, and tanh(c) into `out.tanhCell`. `peephole` is [3H] in the order i, f, o, or null.
 *
 * Aliasing: out.h may be previous.h and out.c may be previous.c (each entry is read before the same entry is
 * written; the runtime steps its state in place this way). No other output may alias an input.
 */
export function lstmStepForward(out: LstmStepOut, previous: LstmState, peephole: FloatArray | null, at: StepAt): void {
  const { h: hState, c: cell, gates, tanhCell } = out;
  const { h: hPrevious, c: cellPrevious } = previous;
  const { rows, hidden } = at;
  const width = 4 * hidden;
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (holdRow(at, b, hState, hPrevious)) {
      copyRow(cell, cellPrevious, row, hidden);
      continue;
    }
    const gate = b * width;
    for (let j = 0; j < hidden; j++) {
      const cPrev = cellPrevious[row + j];
      let ai = gates[gate + j];
      let af = gates[gate + hidden + j];
      let ao = gates[gate + 3 * hidden + j];
      if (peephole !== null) {
        ai += peephole[j] * cPrev;
        af += peephole[hidden + j] * cPrev;
      }
      const i = logistic(ai);
      const f = logistic(af);
      const g = Math.tanh(gates[gate + 2 * hidden + j]);
      const c = f * cPrev + i * g;
      if (peephole !== null) ao += peephole[2 * hidden + j] * c;
      const o = logistic(ao);
      const tc = Math.tanh(c);
      gates[gate + j] = i;
      gates[gate + hidden + j] = f;
      gates[gate + 2 * hidden + j] = g;
      gates[gate + 3 * hidden + j] = o;
      cell[row + j] = c;
      tanhCell[row + j] = tc;
      hState[row + j] = o * tc;
    }
  }
}

/**
 * Writes ∂L/∂a into `out.gates` [B, 4H] (zero for held rows) and adds into the previous state's gradients
 * and the peephole gradient (each when not null). `arriving.h` / `arriving.c` are the gradients arriving at h and
 * c, either may be null (no gradient reached it).
 *
 * Derivatives (chain rule on the equations above): with δh, δc arriving,
 *   δo = δh·tanh(c),        δa_o = δo·o(1−o),
 *   δc* = δc + δh·o·(1 − tanh²c) + δa_o·p_o,
 *   δa_i = δc*·g·i(1−i),    δa_f = δc*·c₋·f(1−f),    δa_g = δc*·i·(1 − g²),
 *   δc₋ = δc*·f + δa_i·p_i + δa_f·p_f,
 *   δp_i = Σ_b δa_i·c₋,     δp_f = Σ_b δa_f·c₋,     δp_o = Σ_b δa_o·c.
 * The δh₋ share through R is the caller's matmul.
 *
 * Aliasing: out.hPrevious may alias arriving.h and out.cPrevious arriving.c (each entry is read before the same
 * entry is written); out.peephole must not alias the peephole (it is added into row after row while the
 * peephole is still read). Give the other outputs arrays of their own.
 */
export function lstmStepBackward(out: LstmStepGradients, arriving: LstmArriving, saved: LstmSaved, at: StepAt): void {
  const { gates: gateGradient, hPrevious: hiddenPreviousGradient, cPrevious: cellPreviousGradient, peephole: peepholeGradient } = out;
  const { h: hiddenGradient, c: cellGradient } = arriving;
  const { gates, tanhCell, cPrevious: cellPrevious, c: cell, peephole } = saved;
  const { rows, hidden } = at;
  const width = 4 * hidden;
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    const gate = b * width;
    if (passHeldRow(at, b, hiddenPreviousGradient, hiddenGradient, gateGradient, width)) {
      addRowInto(cellPreviousGradient, cellGradient, row, hidden);
      continue;
    }
    for (let j = 0; j < hidden; j++) {
      const i = gates[gate + j];
      const f = gates[gate + hidden + j];
      const g = gates[gate + 2 * hidden + j];
      const o = gates[gate + 3 * hidden + j];
      const tc = tanhCell[row + j];
      const cPrev = cellPrevious[row + j];
      const dh = hiddenGradient === null ? 0 : hiddenGradient[row + j];
      const dao = dh * tc * o * (1 - o);
      let dc = (cellGradient === null ? 0 : cellGradient[row + j]) + dh * o * (1 - tc * tc);
      if (peephole !== null) dc += dao * peephole[2 * hidden + j];
      const dai = dc * g * i * (1 - i);
      const daf = dc * cPrev * f * (1 - f);
      const dag = dc * i * (1 - g * g);
      gateGradient[gate + j] = dai;
      gateGradient[gate + hidden + j] = daf;
      gateGradient[gate + 2 * hidden + j] = dag;
      gateGradient[gate + 3 * hidden + j] = dao;
      if (cellPreviousGradient !== null) {
        let dcPrev = dc * f;
        if (peephole !== null) dcPrev += dai * peephole[j] + daf * peephole[hidden + j];
        cellPreviousGradient[row + j] += dcPrev;
      }
      if (peepholeGradient !== null) {
        peepholeGradient[j] += dai * cPrev;
        peepholeGradient[hidden + j] += daf * cPrev;
        peepholeGradient[2 * hidden + j] += dao * cell[row + j];
      }
    }
  }
}

/**
 * The runtime's whole-layer step (its WebAssembly twin: core/wasm/layers.ts; one call per layer and step):
 * gates [rows, 4H] = x·W + b + h·R, then h, c ← the LSTM step (work.tanhCell [rows, H] is working memory).
 *
 * Aliasing: the state is updated in place (the step reads each h₋, c₋ entry before writing the same entry);
 * `x` must not alias the state or the working memory.
 */
export function lstmLayerStep(state: LstmState, x: FloatArray, weights: LstmWeights, work: LstmWork, at: LayerStepAt): void {
  const { rows, hidden, inputWidth } = at;
  refill(inputProduct, rows, inputWidth, 4 * hidden);
  refill(recurrentProduct, rows, hidden, 4 * hidden);
  matmul(work.gates, x, weights.input, inputProduct);
  addRow(work.gates, work.gates, weights.bias, rows, 4 * hidden);
  matmulInto(work.gates, state.h, weights.recurrent, recurrentProduct);
  layerOut.h = state.h;
  layerOut.c = state.c;
  layerOut.gates = work.gates;
  layerOut.tanhCell = work.tanhCell;
  lstmStepForward(layerOut, state, weights.peephole, at);
}

/** The layer step's own records, made once and refilled per call (kernels are synchronous and not re-entered). */
const inputProduct = productShape(0, 0, 0);
const recurrentProduct = productShape(0, 0, 0);
const layerOut: LstmStepOut = { h: new Float32Array(0), c: new Float32Array(0), gates: new Float32Array(0), tanhCell: new Float32Array(0) };
