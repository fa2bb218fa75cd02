import { describe, expect, it } from 'vitest';
import { PlainCell } from '@weft/cells';
import { describeAgainstOnnxEquations } from './onnx-seeded.js';

describe('the plain recurrent cell', () => {
  it('holds input [I, H], recurrent [H, H] and bias [H], carries h, and runs tanh unless told ReLU', () => {
    const cell = new PlainCell({ inputWidth: 2, hidden: 3 });
    expect(cell.parameters().map((p) => `${p.name} [${p.tensor.shape.join(', ')}]`)).toEqual(['input [2, 3]', 'recurrent [3, 3]', 'bias [3]']);
    expect(cell.state).toEqual([{ name: 'h', width: 3 }]);
    expect(cell.activation).toBe('tanh');
    expect(new PlainCell({ inputWidth: 2, hidden: 3, activation: 'relu' }).activation).toBe('relu');
  });

  it('refuses an activation other than tanh and ReLU, by name', () => {
    expect(() => new PlainCell({ inputWidth: 2, hidden: 3, activation: 'sigmoid' as 'tanh' })).toThrowError(
      /^Invalid option at plain\.activation: expected 'tanh' or 'relu'/,
    );
  });
});

describeAgainstOnnxEquations('rnn');
