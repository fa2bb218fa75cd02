import { describe, expect, it } from 'vitest';
import { recurrentForm } from '../../src/onnx/recurrent.js';
import type { OnnxNode } from '@weft/io/onnx';

const node = (opType: string, attributes: OnnxNode['attributes']): OnnxNode => ({ name: 'cell', opType, domain: '', inputs: [], outputs: [], attributes });

describe("reading a recurrent node's attributes", () => {
  it('gives the cell kind, gates, directions, layout, activation and GRU reset form (defaults as ONNX states them)', () => {
    expect(recurrentForm(node('LSTM', []), 0)).toEqual({
      kind: 'lstm',
      gates: 4,
      directions: 1,
      reverse: false,
      layout: 0,
      activation: 'tanh',
      resetAfter: false,
    });
    expect(recurrentForm(node('LSTM', [{ name: 'direction', type: 3, s: 'reverse' }]), 0)).toMatchObject({ directions: 1, reverse: true });
    expect(
      recurrentForm(
        node('GRU', [
          { name: 'linear_before_reset', type: 2, i: 1 },
          { name: 'direction', type: 3, s: 'bidirectional' },
          { name: 'layout', type: 2, i: 1 },
        ]),
        0,
      ),
    ).toEqual({ kind: 'gru', gates: 3, directions: 2, reverse: false, layout: 1, activation: 'tanh', resetAfter: true });
    expect(recurrentForm(node('RNN', [{ name: 'activations', type: 8, strings: ['Relu'] }]), 0).activation).toBe('relu');
  });

  it('refuses activations other than the defaults, their parameters and an unknown attribute, naming the node', () => {
    expect(() => recurrentForm(node('RNN', [{ name: 'activations', type: 8, strings: ['Sigmoid'] }]), 2)).toThrowError(
      'Invalid option at node 2 "cell" (RNN).activations: expected Tanh or Relu, 1 time(s), received ["Sigmoid"]',
    );
    expect(() => recurrentForm(node('GRU', [{ name: 'activation_alpha', type: 6, floats: [0.5] }]), 0)).toThrowError(
      'Invalid option at node 0 "cell" (GRU).activation_alpha: expected none (only the default activations are run), received [0.5]',
    );
    expect(() => recurrentForm(node('LSTM', [{ name: 'shape', type: 2, i: 1 }]), 0)).toThrowError(
      'Invalid option at node 0 "cell" (LSTM).shape: expected an attribute of LSTM, received shape',
    );
  });
});
