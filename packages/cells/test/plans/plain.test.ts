import { describe, expect, it } from 'vitest';
import { builtInPlans, traceStep } from '@weft/cells/description';
import { checkPlanAgainstOnnx } from './against-onnx.js';

describe("the plain cell's plan", () => {
  it('gives input [I, H], recurrent [H, H], bias [H], and ends its step in tanh, or in relu when asked', () => {
    const program = (activation?: 'relu') => traceStep(builtInPlans.plain, { inputWidth: 3, hidden: 4, layer: { cell: 'plain', hidden: 4, activation } }, 'x');
    expect(program().parameters).toEqual([
      { name: 'input', shape: [3, 4] },
      { name: 'recurrent', shape: [4, 4] },
      { name: 'bias', shape: [4] },
    ]);
    expect(program().instructions.at(-1)!.operation).toBe('tanh');
    expect(program('relu').instructions.at(-1)!.operation).toBe('relu');
  });

  checkPlanAgainstOnnx('rnn', builtInPlans.plain, { cell: 'plain', hidden: 4 });
});
