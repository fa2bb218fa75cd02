/**
 * What an LSTM, GRU or RNN node's attributes make of it, checked against what weft runs: the cell kind, its gate
 * count, one direction or both, the layout, the plain cell's activation and the GRU's reset form. Anything else
 * (clip, input_forget, activations other than the defaults, their alpha and beta, an unknown attribute) is refused naming the node and the attribute.
 */
import { fail } from '@weft/core';
import { attribute, nodeLabel } from './axes.js';
import type { OnnxNode } from './model.js';

/** A recurrent node as weft reads it. */
export interface RecurrentForm {
  readonly kind: 'lstm' | 'gru' | 'plain';
  readonly gates: number;
  readonly directions: 1 | 2;
  /** One direction, read backward in time (`direction` reverse). */
  readonly reverse: boolean;
  readonly layout: 0 | 1;
  readonly activation: 'tanh' | 'relu';
  readonly resetAfter: boolean;
}

/** Reads and checks a recurrent node's attributes (see above). */
export function recurrentForm(node: OnnxNode, index: number): RecurrentForm {
  const where = nodeLabel(node, index);
  const layout = attribute(node, 'layout')?.i ?? 0;
  if (layout !== 0 && layout !== 1) fail('invalid_option', `${where}.layout`, '0 or 1', String(layout));
  const kind: RecurrentForm['kind'] = node.opType === 'LSTM' ? 'lstm' : node.opType === 'GRU' ? 'gru' : 'plain';
  const gates = kind === 'lstm' ? 4 : kind === 'gru' ? 3 : 1;
  const direction = attribute(node, 'direction')?.s ?? 'forward';
  if (direction !== 'forward' && direction !== 'reverse' && direction !== 'bidirectional') {
    fail('invalid_option', `${where}.direction`, "'forward', 'reverse' or 'bidirectional'", JSON.stringify(direction));
  }
  const directions: 1 | 2 = direction === 'bidirectional' ? 2 : 1;
  for (const a of node.attributes) {
    if (a.name === 'clip') fail('invalid_option', `${where}.clip`, 'no clip (weft cells do not clip their activations)', String(a.f));
    if (a.name === 'input_forget' && (a.i ?? 0) !== 0)
      fail('invalid_option', `${where}.input_forget`, '0 (weft LSTMs have separate input and forget gates)', String(a.i));
    if (a.name === 'activation_alpha' || a.name === 'activation_beta')
      fail('invalid_option', `${where}.${a.name}`, 'none (only the default activations are run)', JSON.stringify(a.floats));
    if (!['hidden_size', 'direction', 'layout', 'linear_before_reset', 'activations', 'clip', 'input_forget'].includes(a.name)) {
      fail('invalid_option', `${where}.${a.name}`, `an attribute of ${node.opType}`, a.name);
    }
  }
  const activations = attribute(node, 'activations')?.strings;
  let activation: 'tanh' | 'relu' = 'tanh';
  if (activations !== undefined) {
    const defaults = kind === 'lstm' ? ['Sigmoid', 'Tanh', 'Tanh'] : kind === 'gru' ? ['Sigmoid', 'Tanh'] : null;
    const expected = defaults === null ? null : Array.from({ length: directions }, () => defaults).flat();
    if (
      kind === 'plain' &&
      activations.length === directions &&
      activations.every((x) => x === activations[0]) &&
      (activations[0] === 'Tanh' || activations[0] === 'Relu')
    ) {
      activation = activations[0] === 'Relu' ? 'relu' : 'tanh';
    } else if (expected === null || activations.join() !== expected.join()) {
      fail(
        'invalid_option',
        `${where}.activations`,
        kind === 'plain' ? `Tanh or Relu, ${directions} time(s)` : `the defaults ${JSON.stringify(expected)}`,
        JSON.stringify(activations),
      );
    }
  }
  const resetAfter = (attribute(node, 'linear_before_reset')?.i ?? 0) !== 0;
  return { kind, gates, directions, reverse: direction === 'reverse', layout, activation, resetAfter };
}
