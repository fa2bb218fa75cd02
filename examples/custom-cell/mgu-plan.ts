/**
 * A cell of your own as a plan: the minimal gated unit (Zhou, Wu, Zhang & Zhou 2016, "Minimal gated unit for
 * recurrent neural networks", eqs. 8–10), one gate f that both forgets and resets:
 *
 *   f = σ(x·W_f + h₋·U_f + b_f),   ĥ = tanh(x·W_h + (f ⊙ h₋)·U_h + b_h),   h = h₋ + f ⊙ (ĥ − h₋)
 *
 * A plan is data and one step written against the writer `w`: weft traces the step once and runs it on the tape
 * (training, gradient checks), in the runtime (streaming, allocation-free) and as an ONNX Scan. Its kind is
 * namespaced (`lab.mgu`), so it never takes a word weft may build in later.
 */
import type { CellPlan } from '@weft/cells';

export const mguPlan: CellPlan = {
  kind: 'lab.mgu',
  // The state carried from step to step; the first slot is the output.
  state: ({ hidden }) => [{ name: 'h', width: hidden }],
  // Every parameter by name and shape, in the order weight files list them.
  parameters: ({ inputWidth, hidden }) => [
    { name: 'input', shape: [inputWidth, 2 * hidden] }, // W_f | W_h
    { name: 'bias', shape: [2 * hidden] }, // b_f | b_h
    { name: 'recurrentGate', shape: [hidden, hidden] }, // U_f
    { name: 'recurrentCandidate', shape: [hidden, hidden] }, // U_h
  ],
  step(w, { hidden }) {
    const [h] = w.state;
    const projected = w.add(w.product(w.input, 'input'), w.vector('bias'));
    const f = w.sigmoid(w.add(w.columns(projected, 0, hidden), w.product(h, 'recurrentGate')));
    const candidate = w.tanh(w.add(w.columns(projected, hidden, hidden), w.product(w.multiply(f, h), 'recurrentCandidate')));
    return [w.add(h, w.multiply(f, w.subtract(candidate, h)))];
  },
};

export default mguPlan;
