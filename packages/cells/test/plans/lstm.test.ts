import { describe, expect, it } from 'vitest';
import { builtInPlans, traceStep } from '@weft/cells/description';
import { checkPlanAgainstOnnx } from './against-onnx.js';

describe('the LSTM plan', () => {
  it('gives input [I, 4H], recurrent [H, 4H], bias [4H] and, with peepholes, peephole [3H], carrying h then c', () => {
    const layer = { cell: 'lstm', hidden: 4, peepholes: true };
    const program = traceStep(builtInPlans.lstm, { inputWidth: 3, hidden: 4, layer }, 'layers[0].forward');
    expect(program.parameters).toEqual([
      { name: 'input', shape: [3, 16] },
      { name: 'recurrent', shape: [4, 16] },
      { name: 'bias', shape: [16] },
      { name: 'peephole', shape: [12] },
    ]);
    expect(program.state.map((s) => `${s.name} ${s.width}`)).toEqual(['h 4', 'c 4']);
    expect(traceStep(builtInPlans.lstm, { inputWidth: 3, hidden: 4, layer: { cell: 'lstm', hidden: 4 } }, 'x').parameters.map((p) => p.name)).toEqual([
      'input',
      'recurrent',
      'bias',
    ]);
  });

  checkPlanAgainstOnnx('lstm', builtInPlans.lstm, { cell: 'lstm', hidden: 4, peepholes: true });
});
