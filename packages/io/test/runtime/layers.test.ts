import { describe, expect, it } from 'vitest';
import { Random, Tape, tensor } from '@weft/core';
import { LstmCell } from '@weft/cells';
import { javascriptForward } from '@weft/core/forward';
import { makeCell } from '../../src/runtime/layers.js';

describe('the runtime\'s layers', () => {
  it('step an LSTM layer from the weights by their names as the training cell does, holding a row past its length', () => {
    const cell = new LstmCell({ inputWidth: 3, hidden: 4, peepholes: true, random: 5, name: 'layers[0].forward' });
    for (const p of cell.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += 0.01 * i;
    const byName = new Map(cell.parameters().map((p) => [`layers[0].forward.${p.name}`, p.tensor.data]));
    const asked: string[] = [];
    const layer = makeCell({ cell: 'lstm', hidden: 4, peepholes: true }, 3, 'layers[0].forward', (name, shape, matrix) => {
      asked.push(`${name} [${shape.join(', ')}]${matrix === true ? ' matrix' : ''}`);
      return javascriptForward.matrix(byName.get(name)!, shape[0], shape[1] ?? 1);
    }, javascriptForward.kernels);
    expect(asked).toEqual(['layers[0].forward.input [3, 16] matrix', 'layers[0].forward.recurrent [4, 16] matrix', 'layers[0].forward.bias [16]', 'layers[0].forward.peephole [12]']);
    expect([layer.hidden, layer.inputWidth, layer.slots]).toEqual([4, 3, 2]);
    const buffers = layer.buffers(2, (n) => new Float32Array(n));
    const random = new Random('layer-input');
    const xs = Array.from({ length: 3 }, () => Float32Array.from({ length: 6 }, () => random.between(-1, 1)));
    const lengths = Int32Array.of(3, 2);
    xs.forEach((x, t) => layer.step(x, buffers, 2, lengths, t));
    // The training cell over the same three steps: time-major [T, B, I].
    const inputs = tensor(Float32Array.from(xs.flatMap((x) => Array.from(x))), [3, 2, 3]);
    const { state } = cell.runFused(new Tape({ recording: false }), inputs, [tensor(new Float32Array(8), [2, 4]), tensor(new Float32Array(8), [2, 4])], lengths);
    for (let i = 0; i < 8; i++) expect(Math.abs(buffers.state[0][i] - state[0].data[i])).toBeLessThan(1e-6);
  });
});
