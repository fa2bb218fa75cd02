/**
 * The GRU cell's plan (Cho et al. 2014, "Learning phrase representations using RNN encoder–decoder for statistical
 * machine translation", eqs. 5–8), in the form of the ONNX GRU operator. Gate order z (update), r (reset),
 * n (candidate), as ONNX's z, r, h:
 *
 *   a = x·W + b
 *   z = σ(a_z + h₋·R_z),   r = σ(a_r + h₋·R_r)
 *   reset before the product (default):          n = tanh(a_n + (r ⊙ h₋)·R_n)
 *   reset after (`resetAfterProduct`):           n = tanh(a_n + r ⊙ (h₋·R_n + b_Rn))
 *   h = (1 − z) ⊙ n + z ⊙ h₋, written n + z ⊙ (h₋ − n)
 *
 * Parameters: input [I, 3H], bias [3H] (input-side biases, with the recurrent-side biases of z and r folded in),
 * recurrent [H, 2H] (z and r), recurrentCandidate [H, H] (n), recurrentCandidateBias [H] (reset after only).
 * The runtime's whole-layer step and the fused training step compute the same equations on the kernels
 * (core/src/kernels/gru-step.ts and its WebAssembly twin).
 */
import type { CellPlan } from './plan.js';

export const gruPlan: CellPlan = {
  kind: 'gru',
  state: ({ hidden }) => [{ name: 'h', width: hidden }],
  parameters({ inputWidth, hidden, layer }) {
    const list = [
      { name: 'input', shape: [inputWidth, 3 * hidden] },
      { name: 'bias', shape: [3 * hidden] },
      { name: 'recurrent', shape: [hidden, 2 * hidden] },
      { name: 'recurrentCandidate', shape: [hidden, hidden] },
    ];
    if (layer.resetAfterProduct === true) list.push({ name: 'recurrentCandidateBias', shape: [hidden] });
    return list;
  },
  step(w, { hidden, layer }) {
    const [h] = w.state;
    const projected = w.add(w.product(w.input, 'input'), w.vector('bias'));
    const gates = w.product(h, 'recurrent');
    const z = w.sigmoid(w.add(w.columns(projected, 0, hidden), w.columns(gates, 0, hidden)));
    const r = w.sigmoid(w.add(w.columns(projected, hidden, hidden), w.columns(gates, hidden, hidden)));
    const candidateInput = w.columns(projected, 2 * hidden, hidden);
    const n =
      layer.resetAfterProduct === true
        ? w.tanh(w.add(candidateInput, w.multiply(r, w.add(w.product(h, 'recurrentCandidate'), w.vector('recurrentCandidateBias')))))
        : w.tanh(w.add(candidateInput, w.product(w.multiply(r, h), 'recurrentCandidate')));
    return [w.add(n, w.multiply(z, w.subtract(h, n)))];
  },
};
