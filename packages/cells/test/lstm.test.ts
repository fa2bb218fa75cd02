import { describe, expect, it } from 'vitest';
import { LstmCell } from '@weft/cells';
import { describeAgainstOnnxEquations } from './onnx-seeded.js';

describe('the LSTM cell', () => {
  it('holds input [I, 4H], recurrent [H, 4H], bias [4H] and, with peepholes, peephole [3H], and carries h and c', () => {
    const cell = new LstmCell({ inputWidth: 3, hidden: 5, peepholes: true });
    expect(cell.parameters().map((p) => `${p.name} [${p.tensor.shape.join(', ')}]`)).toEqual([
      'input [3, 20]',
      'recurrent [5, 20]',
      'bias [20]',
      'peephole [15]',
    ]);
    expect(cell.state).toEqual([
      { name: 'h', width: 5 },
      { name: 'c', width: 5 },
    ]);
    expect([cell.kind, cell.inputWidth, cell.hidden]).toEqual(['lstm', 3, 5]);
    expect(new LstmCell({ inputWidth: 3, hidden: 5 }).peephole).toBeNull();
  });

  it('starts the forget block of the bias at forgetBias (default 1; Jozefowicz et al. 2015) and the rest at 0', () => {
    const cell = new LstmCell({ inputWidth: 2, hidden: 2, forgetBias: 2.5 });
    expect(Array.from(cell.bias.data)).toEqual([0, 0, 2.5, 2.5, 0, 0, 0, 0]);
    expect(() => new LstmCell({ inputWidth: 2, hidden: 2, forgetBias: Number.NaN, name: 'layers[0].forward' })).toThrowError(
      'Invalid option at layers[0].forward.forgetBias: expected a finite number, received NaN',
    );
  });
});

describeAgainstOnnxEquations('lstm');
