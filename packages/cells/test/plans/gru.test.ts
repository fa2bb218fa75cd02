import { describe, expect, it } from 'vitest';
import { builtInPlans, traceStep } from '@weft/cells/description';
import { checkPlanAgainstOnnx } from './against-onnx.js';

describe('the GRU plan', () => {
  it('gives input [I, 3H], bias [3H], recurrent [H, 2H], recurrentCandidate [H, H], and recurrentCandidateBias [H] with the reset after', () => {
    const shape = (resetAfterProduct: boolean) => ({ inputWidth: 3, hidden: 4, layer: { cell: 'gru', hidden: 4, resetAfterProduct } });
    expect(traceStep(builtInPlans.gru, shape(false), 'x').parameters).toEqual([
      { name: 'input', shape: [3, 12] },
      { name: 'bias', shape: [12] },
      { name: 'recurrent', shape: [4, 8] },
      { name: 'recurrentCandidate', shape: [4, 4] },
    ]);
    expect(traceStep(builtInPlans.gru, shape(true), 'x').parameters.at(-1)).toEqual({ name: 'recurrentCandidateBias', shape: [4] });
  });

  checkPlanAgainstOnnx('gru-before', builtInPlans.gru, { cell: 'gru', hidden: 4 });
  checkPlanAgainstOnnx('gru-after', builtInPlans.gru, { cell: 'gru', hidden: 4, resetAfterProduct: true });
});
