import { describe, expect, it } from 'vitest';
import { moveAxes, nodeLabel } from '../../src/onnx/axes.js';
import type { OnnxNode, OnnxTensor } from '@weft/io/onnx';

const node = (opType: string, inputs: string[], attributes: OnnxNode['attributes'] = []): OnnxNode => ({
  name: '',
  opType,
  domain: '',
  inputs,
  outputs: ['y'],
  attributes,
});
const ints = (name: string, values: number[]): OnnxTensor => ({ name, dataType: 7, dims: [values.length], values });

describe("following a value's axes through the glue", () => {
  const y = { labels: ['t', 'd', 'b', 'h'], sizes: { d: 2, h: 3, f: 6 } };
  const constants = new Map([
    ['joined', ints('joined', [0, 0, -1])],
    ['flat', ints('flat', [-1, 6])],
    ['one', ints('one', [1])],
  ]);

  it('turns a bidirectional Y [t, d, b, h] into [t, b, f] by Transpose (0, 2, 1, 3) and Reshape (0, 0, −1)', () => {
    const moved = moveAxes(node('Transpose', ['x'], [{ name: 'perm', type: 7, ints: [0, 2, 1, 3] }]), 1, y, constants);
    expect(moved.labels).toEqual(['t', 'b', 'd', 'h']);
    expect(moveAxes(node('Reshape', ['x', 'joined']), 2, moved, constants).labels).toEqual(['t', 'b', 'f']);
    expect(moveAxes(node('Reshape', ['x', 'flat']), 2, { labels: ['t', 'b', 'f'], sizes: y.sizes }, constants).labels).toEqual(['n', 'f']);
  });

  it('squeezes the direction axis of a one-direction layer only, and names the node that tries otherwise', () => {
    const single = { labels: ['t', 'd', 'b', 'h'], sizes: { d: 1, h: 3, f: 3 } };
    expect(moveAxes(node('Squeeze', ['x', 'one']), 1, single, constants).labels).toEqual(['t', 'b', 'f']);
    expect(() => moveAxes(node('Squeeze', ['x', 'one']), 1, y, constants)).toThrowError(
      'Invalid option at node 1 (Squeeze).axes: expected the direction axis of a one-direction layer, received axis 1 (d)',
    );
    expect(() => moveAxes(node('Reshape', ['x', 'joined']), 4, y, constants)).toThrowError(
      /^Invalid option at node 4 \(Reshape\)\.shape: expected the last axes as one of features/,
    );
    expect(nodeLabel({ ...node('LSTM', []), name: 'encoder' }, 0)).toBe('node 0 "encoder" (LSTM)');
  });
});
