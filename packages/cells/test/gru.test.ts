import { describe, expect, it } from 'vitest';
import { GruCell } from '@weft/cells';
import { describeAgainstOnnxEquations } from './onnx-seeded.js';

describe('the GRU cell', () => {
  it('holds input [I, 3H], bias [3H], recurrent [H, 2H], recurrentCandidate [H, H] and carries h', () => {
    const cell = new GruCell({ inputWidth: 3, hidden: 4 });
    expect(cell.parameters().map((p) => `${p.name} [${p.tensor.shape.join(', ')}]`)).toEqual([
      'input [3, 12]',
      'bias [12]',
      'recurrent [4, 8]',
      'recurrentCandidate [4, 4]',
    ]);
    expect(cell.state).toEqual([{ name: 'h', width: 4 }]);
    expect(cell.recurrentCandidateBias).toBeNull();
  });

  it('adds recurrentCandidateBias [H] when the reset applies after the product', () => {
    const cell = new GruCell({ inputWidth: 3, hidden: 4, resetAfterProduct: true });
    expect(cell.parameters().map((p) => p.name)).toEqual(['input', 'bias', 'recurrent', 'recurrentCandidate', 'recurrentCandidateBias']);
    expect(cell.resetAfterProduct).toBe(true);
  });
});

describeAgainstOnnxEquations('gru-before');
describeAgainstOnnxEquations('gru-after');
