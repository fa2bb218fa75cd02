/**
 * The seeded random-weight cases the cells check against the ONNX operators' equations (packages/cells/test/
 * onnx-seeded.ts, equations in onnx-equations.ts written from the ONNX specification), written out here as ONNX
 * models — weights as initializers; X, sequence_lens, initial_h and initial_c as graph inputs — then encoded,
 * decoded, imported and run by weft in f32: outputs and final states within 1e-5 of the equations.
 */
import { describe, expect, it } from 'vitest';
import { loadModel, readWeightFile, writeWeightFile } from '@weft/io';
import { decodeOnnxModel, encodeOnnxModel, importOnnx } from '@weft/io/onnx';
import type { OnnxModel, OnnxTensor } from '@weft/io/onnx';
import { setup } from '../../../cells/test/onnx-seeded.js';
import type { OnnxKind } from '../../../cells/test/onnx-seeded.js';
import { runAsOnnx } from './run.js';

const float = (name: string, dims: number[], values: number[]): OnnxTensor => ({ name, dataType: 1, dims, values: Float32Array.from(values) });
const lengths = [6, 3, 1, 0, 5];

type Direction = 'forward' | 'reverse' | 'bidirectional';

function modelOf(kind: OnnxKind, direction: Direction): { model: OnnxModel; feeds: Record<string, OnnxTensor>; expected: Record<string, number[]> } {
  const [steps, batch, width, hidden] = [6, 5, 3, 4];
  const directions = direction === 'bidirectional' ? 2 : 1;
  const reads = direction === 'bidirectional' ? ['ahead', 'behind'] : direction === 'reverse' ? ['behind'] : ['ahead'];
  const sides = reads.map((side) => setup(kind, `${kind}-${side}`, steps, batch, width, hidden));
  const x = setup(kind, `${kind}-ahead`, steps, batch, width, hidden).spec.x;
  const results = sides.map((s, d) => s.run({ ...s.spec, x, lengths, reverse: reads[d] === 'behind' }));
  const opType = kind === 'lstm' ? 'LSTM' : kind === 'rnn' ? 'RNN' : 'GRU';
  const initializers = [
    float(
      'W',
      [directions, sides[0].spec.w.length, width],
      sides.flatMap((s) => s.spec.w.flat()),
    ),
    float(
      'R',
      [directions, sides[0].spec.r.length, hidden],
      sides.flatMap((s) => s.spec.r.flat()),
    ),
    float(
      'B',
      [directions, sides[0].spec.b!.length],
      sides.flatMap((s) => s.spec.b!),
    ),
  ];
  if (kind === 'lstm')
    initializers.push(
      float(
        'P',
        [directions, 3 * hidden],
        sides.flatMap((s) => s.spec.p!),
      ),
    );
  const attributes = [
    { name: 'hidden_size', type: 2, i: hidden },
    { name: 'direction', type: 3, s: direction },
  ];
  if (kind === 'gru-after') attributes.push({ name: 'linear_before_reset', type: 2, i: 1 });
  const stateInputs = kind === 'lstm' ? ['initial_h', 'initial_c'] : ['initial_h'];
  const model: OnnxModel = {
    irVersion: 10,
    opsets: [{ domain: '', version: 22 }],
    producerName: 'a test',
    producerVersion: '',
    metadata: {},
    graph: {
      name: 'seeded',
      initializers,
      inputs: ['X', 'sequence_lens', ...stateInputs].map((name) => ({ name, elementType: name === 'sequence_lens' ? 6 : 1, dims: null })),
      outputs: (kind === 'lstm' ? ['Y', 'Y_h', 'Y_c'] : ['Y', 'Y_h']).map((name) => ({ name, elementType: 1, dims: null })),
      nodes: [
        {
          name: 'recurrent',
          opType,
          domain: '',
          attributes,
          inputs: kind === 'lstm' ? ['X', 'W', 'R', 'B', 'sequence_lens', 'initial_h', 'initial_c', 'P'] : ['X', 'W', 'R', 'B', 'sequence_lens', 'initial_h'],
          outputs: kind === 'lstm' ? ['Y', 'Y_h', 'Y_c'] : ['Y', 'Y_h'],
        },
      ],
    },
  };
  const feeds: Record<string, OnnxTensor> = {
    X: float('X', [steps, batch, width], x.flat(2)),
    sequence_lens: { name: 'sequence_lens', dataType: 6, dims: [batch], values: lengths },
    initial_h: float(
      'initial_h',
      [directions, batch, hidden],
      sides.flatMap((s) => s.spec.h0!.flat()),
    ),
  };
  if (kind === 'lstm')
    feeds.initial_c = float(
      'initial_c',
      [directions, batch, hidden],
      sides.flatMap((s) => s.spec.c0!.flat()),
    );
  // ONNX Y is [steps, directions, batch, hidden]; Y_h and Y_c [directions, batch, hidden].
  const expected: Record<string, number[]> = {
    Y: Array.from({ length: steps }, (_, t) => results.map((r) => r.y[t].flat())).flat(2),
    Y_h: results.flatMap((r) => r.yh.flat()),
  };
  if (kind === 'lstm') expected.Y_c = results.flatMap((r) => r.yc!.flat());
  return { model, feeds, expected };
}

describe('seeded random-weight ONNX models of every cell form', () => {
  for (const kind of ['lstm', 'gru-before', 'gru-after', 'rnn'] as const) {
    for (const direction of ['forward', 'reverse', 'bidirectional'] as const) {
      it(`${kind}, ${direction}, ragged lengths ${lengths.join(', ')}: import and match the equations within 1e-5`, async () => {
        const { model, feeds, expected } = modelOf(kind, direction);
        const imported = importOnnx(decodeOnnxModel(encodeOnnxModel(model)));
        const file = await readWeightFile(await writeWeightFile(imported.description, imported.tensors));
        const produced = runAsOnnx(loadModel(file), imported.binding, feeds);
        for (const [name, values] of Object.entries(expected)) {
          expect(produced[name], name).toHaveLength(values.length);
          let worst = 0;
          for (let i = 0; i < values.length; i++) worst = Math.max(worst, Math.abs(produced[name][i] - values[i]));
          expect(worst, `${name}: worst difference`).toBeLessThanOrEqual(1e-5);
        }
      });
    }
  }
});
