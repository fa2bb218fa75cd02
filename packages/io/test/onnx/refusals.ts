/** A small valid ONNX model to damage in the refusal tests: one forward LSTM over X, its weights as initializers. */
import type { OnnxModel, OnnxNode, OnnxTensor } from '@weft/io/onnx';

const float = (name: string, dims: number[]): OnnxTensor => ({ name, dataType: 1, dims, values: new Float32Array(dims.reduce((n, d) => n * d, 1)).fill(0.1) });

export function smallModel(change: (node: OnnxNode) => OnnxNode = (n) => n, initializers?: OnnxTensor[]): OnnxModel {
  return {
    irVersion: 10,
    opsets: [{ domain: '', version: 22 }],
    producerName: 'a test',
    producerVersion: '',
    metadata: {},
    graph: {
      name: 'small',
      nodes: [
        change({
          name: 'lstm',
          opType: 'LSTM',
          domain: '',
          inputs: ['X', 'W', 'R'],
          outputs: ['Y', 'Y_h'],
          attributes: [{ name: 'hidden_size', type: 2, i: 3 }],
        }),
      ],
      initializers: initializers ?? [float('W', [1, 12, 2]), float('R', [1, 12, 3])],
      inputs: [{ name: 'X', elementType: 1, dims: [null, null, 2] }],
      outputs: [
        { name: 'Y', elementType: 1, dims: null },
        { name: 'Y_h', elementType: 1, dims: null },
      ],
    },
  };
}
