/**
 * The LSTM cell's plan: the LSTM with forget gate (Gers, Schmidhuber & Cummins 2000, "Learning to forget") and
 * optional peepholes (Gers & Schmidhuber 2000, "Recurrent nets that time and count"), in the form of the ONNX LSTM
 * operator. Gate order i, f, g, o in every gate-stacked tensor (g is the cell candidate); peepholes i, f, o:
 *
 *   a = x·W + h₋·R + b
 *   i = σ(a_i + p_i ⊙ c₋),  f = σ(a_f + p_f ⊙ c₋),  g = tanh(a_g)
 *   c = f ⊙ c₋ + i ⊙ g
 *   o = σ(a_o + p_o ⊙ c),   h = o ⊙ tanh(c)
 *
 * Parameters: input [I, 4H], recurrent [H, 4H], bias [4H], peephole [3H] (with `peepholes`).
 * The runtime's whole-layer step and the fused training step compute the same equations on the kernels
 * (core/src/kernels/lstm-step.ts and its WebAssembly twin).
 */
import type { CellPlan } from './plan.js';

export const lstmPlan: CellPlan = {
  kind: 'lstm',
  state: ({ hidden }) => [
    { name: 'h', width: hidden },
    { name: 'c', width: hidden },
  ],
  parameters({ inputWidth, hidden, layer }) {
    const list = [
      { name: 'input', shape: [inputWidth, 4 * hidden] },
      { name: 'recurrent', shape: [hidden, 4 * hidden] },
      { name: 'bias', shape: [4 * hidden] },
    ];
    if (layer.peepholes === true) list.push({ name: 'peephole', shape: [3 * hidden] });
    return list;
  },
  step(w, { hidden, layer }) {
    const [h, c] = w.state;
    const a = w.add(w.add(w.product(w.input, 'input'), w.product(h, 'recurrent')), w.vector('bias'));
    let ai = w.columns(a, 0, hidden);
    let af = w.columns(a, hidden, hidden);
    const ag = w.columns(a, 2 * hidden, hidden);
    let ao = w.columns(a, 3 * hidden, hidden);
    const peephole = layer.peepholes === true ? w.vector('peephole') : null;
    if (peephole !== null) {
      ai = w.add(ai, w.multiply(c, w.columns(peephole, 0, hidden)));
      af = w.add(af, w.multiply(c, w.columns(peephole, hidden, hidden)));
    }
    const i = w.sigmoid(ai);
    const f = w.sigmoid(af);
    const g = w.tanh(ag);
    const cNext = w.add(w.multiply(f, c), w.multiply(i, g));
    if (peephole !== null) ao = w.add(ao, w.multiply(cNext, w.columns(peephole, 2 * hidden, hidden)));
    const o = w.sigmoid(ao);
    return [w.multiply(o, w.tanh(cNext)), cNext];
  },
};
