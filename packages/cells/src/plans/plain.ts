/**
 * The plain recurrent cell's plan, h = φ(x·W + h₋·R + b) (Elman 1990, "Finding structure in time"), with
 * φ = tanh (default) or ReLU (`activation: 'relu'`), as the ONNX RNN operator.
 *
 * Parameters: input [I, H], recurrent [H, H], bias [H].
 * The runtime's whole-layer step and the fused training step compute the same equation on the kernels
 * (core/src/kernels/plain-step.ts and its WebAssembly twin).
 */
import type { CellPlan } from './plan.js';

export const plainPlan: CellPlan = {
  kind: 'plain',
  state: ({ hidden }) => [{ name: 'h', width: hidden }],
  parameters: ({ inputWidth, hidden }) => [
    { name: 'input', shape: [inputWidth, hidden] },
    { name: 'recurrent', shape: [hidden, hidden] },
    { name: 'bias', shape: [hidden] },
  ],
  step(w, { layer }) {
    const pre = w.add(w.add(w.product(w.input, 'input'), w.product(w.state[0], 'recurrent')), w.vector('bias'));
    return [layer.activation === 'relu' ? w.relu(pre) : w.tanh(pre)];
  },
};
