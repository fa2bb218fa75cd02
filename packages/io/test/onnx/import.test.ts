/**
 * ONNX models in: the operator test models of the ONNX backend test data (onnx/backend/test/data/node, Apache 2.0,
 * copied to tests/fixtures/onnx with their stored inputs and outputs) import and, run by weft in f32 on the
 * stored inputs, reproduce the stored outputs within 1e-5. Their weights are graph inputs there, given here as values.
 */
import { existsSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { WeftError } from '@weft/core';
import { buildModel } from '@weft/cells';
import { loadModel, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { decodeOnnxModel, decodeOnnxTensor, exportOnnx, importOnnx } from '@weft/io/onnx';
import type { OnnxTensor } from '@weft/io/onnx';
import { runAsOnnx } from './run.js';
import { smallModel } from './refusals.js';

const folder = fileURLToPath(new URL('../../../../tests/fixtures/onnx/', import.meta.url));
const cases = existsSync(folder)
  ? readdirSync(folder)
      .filter((name) => name.startsWith('test_'))
      .sort()
  : [];

interface CaseFile {
  readonly inputs: Record<string, { graph_name: string; file: string }>;
  readonly outputs: Record<string, { graph_name: string; file: string }>;
}

describe('ONNX backend test models (ONNX backend test data, opset 22)', () => {
  it('are all present: 12 cases', () => {
    expect(cases).toHaveLength(12);
  });

  for (const name of cases) {
    it(`${name}: imports, and reproduces its stored outputs within 1e-5 from its stored inputs (f32)`, async () => {
      const base = join(folder, name);
      const described = JSON.parse(readFileSync(join(base, 'case.json'), 'utf8')) as CaseFile;
      const tensors: Record<string, OnnxTensor> = {};
      for (const v of Object.values(described.inputs)) tensors[v.graph_name] = decodeOnnxTensor(readFileSync(join(base, v.file)));
      const weights = Object.fromEntries(
        ['W', 'R', 'B', 'P']
          .filter((a) => described.inputs[a] !== undefined)
          .map((a) => [described.inputs[a].graph_name, tensors[described.inputs[a].graph_name]]),
      );
      const imported = importOnnx(decodeOnnxModel(readFileSync(join(base, 'model.onnx')), `${name}/model.onnx`), { values: weights });
      const file = await readWeightFile(await writeWeightFile(imported.description, imported.tensors, { metadata: { onnx: imported.binding } }));
      const produced = runAsOnnx(loadModel(file), imported.binding, tensors);
      const outputs = Object.values(described.outputs);
      expect(outputs.length).toBeGreaterThan(0);
      for (const v of outputs) {
        const stored = decodeOnnxTensor(readFileSync(join(base, v.file)));
        const mine = produced[v.graph_name];
        expect(mine, v.graph_name).toBeDefined();
        expect(mine).toHaveLength(stored.values.length);
        let worst = 0;
        for (let i = 0; i < mine.length; i++) worst = Math.max(worst, Math.abs(mine[i] - (stored.values as Float32Array)[i]));
        expect(worst, `${v.graph_name}: worst difference`).toBeLessThanOrEqual(1e-5);
      }
    });
  }
});

describe('ONNX models weft does not run', () => {
  const refused = (model: Parameters<typeof importOnnx>[0]) => () => importOnnx(model);

  it('are refused in one line naming the node, the operator and what is wrong: an operator weft does not run', () => {
    const model = smallModel();
    const extra = {
      ...model,
      graph: { ...model.graph, nodes: [...model.graph.nodes, { name: 'squash', opType: 'Tanh', domain: '', inputs: ['Y'], outputs: ['Z'], attributes: [] }] },
    };
    expect(refused(extra)).toThrowError(
      /^Invalid option at node 1 "squash" \(Tanh\): expected one of the operators weft runs \(LSTM, GRU, RNN, Identity, Squeeze, Transpose, Reshape, Gather, MatMul, Add, Gemm, Softmax, LogSoftmax\), received Tanh$/,
    );
  });

  it('an attribute or attribute value weft does not run: clip, input_forget, other activations, an unknown direction', () => {
    const withAttribute = (a: { name: string; type: number; f?: number; i?: number; s?: string; strings?: string[] }) =>
      smallModel((n) => ({ ...n, attributes: [...n.attributes, a] }));
    expect(refused(withAttribute({ name: 'clip', type: 1, f: 3 }))).toThrowError(
      'Invalid option at node 0 "lstm" (LSTM).clip: expected no clip (weft cells do not clip their activations), received 3',
    );
    expect(refused(withAttribute({ name: 'input_forget', type: 2, i: 1 }))).toThrowError(
      'Invalid option at node 0 "lstm" (LSTM).input_forget: expected 0 (weft LSTMs have separate input and forget gates), received 1',
    );
    expect(refused(withAttribute({ name: 'activations', type: 8, strings: ['HardSigmoid', 'Tanh', 'Tanh'] }))).toThrowError(
      'Invalid option at node 0 "lstm" (LSTM).activations: expected the defaults ["Sigmoid","Tanh","Tanh"], received ["HardSigmoid","Tanh","Tanh"]',
    );
    expect(refused(withAttribute({ name: 'direction', type: 3, s: 'sideways' }))).toThrowError(
      "Invalid option at node 0 \"lstm\" (LSTM).direction: expected 'forward', 'reverse' or 'bidirectional', received \"sideways\"",
    );
  });

  it('a node input that names no initializer, and weights whose shape disagrees with hidden_size', () => {
    const noWeights = smallModel(undefined, []);
    const asInput = { ...noWeights, graph: { ...noWeights.graph, inputs: [...noWeights.graph.inputs, { name: 'W', elementType: 1, dims: null }] } };
    expect(refused(asInput)).toThrowError(
      'Bad data at node 0 "lstm" (LSTM).input[1]: expected the input weights W: an initializer or given values, received graph input "W" with no initializer (give its values)',
    );
    const wrong = smallModel((n) => ({ ...n, attributes: [{ name: 'hidden_size', type: 2, i: 4 }] }));
    expect(refused(wrong)).toThrowError(
      'Bad data at node 0 "lstm" (LSTM).input[1] (W, "W"): expected dims [1, 16, input width] (1 direction(s), 4 gates × hidden_size 4), received [1,12,2]',
    );
  });

  it('a chain that branches, and a node off the chain', () => {
    const model = smallModel();
    const branch = {
      ...model,
      graph: {
        ...model.graph,
        nodes: [
          ...model.graph.nodes,
          { name: 'a', opType: 'Identity', domain: '', inputs: ['Y'], outputs: ['A'] },
          { name: 'b', opType: 'Identity', domain: '', inputs: ['Y'], outputs: ['B'] },
        ].map((n) => ({ attributes: [], ...n })),
      },
    };
    expect(refused(branch)).toThrowError(
      /^Invalid option at node 0 "lstm" \(LSTM\) output "Y": expected one node reading it \(weft reads a chain of layers\), received 2 nodes/,
    );
  });

  it('a cycle, refused at once instead of followed forever: an Identity fed its own output, a node renamed onto its input, two nodes in a ring', () => {
    const withNodes = (extra: { name: string; opType: string; inputs: string[]; outputs: string[] }[], yName = 'Y') => {
      const model = smallModel((n) => ({ ...n, outputs: [yName, 'Y_h'] }));
      return { ...model, graph: { ...model.graph, nodes: [...model.graph.nodes, ...extra.map((n) => ({ domain: '', attributes: [], ...n }))] } };
    };
    const cycles = [
      // Y → Identity → Y' where the Identity also reads what it writes.
      withNodes([
        { name: 'self', opType: 'Identity', inputs: ['Y'], outputs: ['Z'] },
        { name: 'loop', opType: 'Identity', inputs: ['Z'], outputs: ['Z'] },
      ]),
      // Two glue nodes that feed each other.
      withNodes([
        { name: 'a', opType: 'Identity', inputs: ['Y'], outputs: ['A'] },
        { name: 'b', opType: 'Identity', inputs: ['A'], outputs: ['Y2'] },
        { name: 'c', opType: 'Identity', inputs: ['Y2'], outputs: ['A2'] },
        { name: 'd', opType: 'Identity', inputs: ['A2'], outputs: ['Y2'] },
      ]),
    ];
    expect(refused(cycles[0])).toThrowError(
      /^Invalid option at node 0 "lstm" \(LSTM\) output "Z": expected a graph without cycles \(each node met once on the way from the input to the outputs\), received read again by node 2 "loop" \(Identity\), met before$/,
    );
    expect(refused(cycles[1])).toThrowError(/output "Y2": expected a graph without cycles .*, received read again by node 3 "c" \(Identity\), met before$/);
  });
});

describe('ONNX readouts', () => {
  it('read a Gemm on rows flattened by Reshape, with Softmax after it, as a readout and a recorded output function', () => {
    const model = smallModel();
    const weights = { name: 'G', dataType: 1, dims: [2, 3], values: Float32Array.of(1, 2, 3, 4, 5, 6) };
    const bias = { name: 'C', dataType: 1, dims: [2], values: Float32Array.of(-1, 1) };
    const axis = { name: 'axis', dataType: 7, dims: [1], values: [1] };
    const rows = { name: 'rows', dataType: 7, dims: [2], values: [-1, 3] };
    const graph = {
      ...model.graph,
      initializers: [...model.graph.initializers, weights, bias, axis, rows],
      nodes: [
        ...model.graph.nodes,
        { name: 'squeeze', opType: 'Squeeze', domain: '', inputs: ['Y', 'axis'], outputs: ['S'], attributes: [] },
        { name: 'flatten', opType: 'Reshape', domain: '', inputs: ['S', 'rows'], outputs: ['F'], attributes: [] },
        { name: 'readout', opType: 'Gemm', domain: '', inputs: ['F', 'G', 'C'], outputs: ['L'], attributes: [{ name: 'transB', type: 2, i: 1 }] },
        { name: 'probabilities', opType: 'Softmax', domain: '', inputs: ['L'], outputs: ['P'], attributes: [{ name: 'axis', type: 2, i: -1 }] },
      ],
      outputs: [
        { name: 'P', elementType: 1, dims: null },
        { name: 'Y_h', elementType: 1, dims: null },
      ],
    };
    const imported = importOnnx({ ...model, graph });
    expect(imported.description.readout).toEqual({ width: 2 });
    expect(imported.binding.output).toEqual({ name: 'P', axes: ['n', 'v'] });
    expect(imported.binding.outputFunction).toBe('softmax');
    const readout = imported.tensors.find((t) => t.name === 'readout.weights')!;
    // Gemm with transB = 1 reads G [2, 3] as its transpose: our readout [3, 2].
    expect(Array.from(readout.values)).toEqual([1, 4, 2, 5, 3, 6]);
    expect(Array.from(imported.tensors.find((t) => t.name === 'readout.bias')!.values)).toEqual([-1, 1]);
  });
});

describe('ONNX graphs mutated at random (fast-check, 1,000 cases)', () => {
  it("import or give the library's one-line error, never hang or throw anything else: cycles, self-loops, duplicate outputs, stray nodes", async () => {
    const model = buildModel(
      {
        input: { kind: 'values', width: 3 },
        layers: [
          { cell: 'gru', hidden: 4 },
          { cell: 'lstm', hidden: 3 },
        ],
        readout: { width: 2 },
      },
      { seed: 9 },
    );
    const base = exportOnnx(await readWeightFile(await writeWeightFile(model.description, modelTensors(model))));
    expect(() => importOnnx(base)).not.toThrow();
    const names = [...new Set(base.graph.nodes.flatMap((n) => [...n.inputs, ...n.outputs]).filter((n) => n !== ''))];
    const ops = ['Identity', 'Transpose', 'Squeeze', 'Reshape', 'MatMul', 'Add', 'LSTM', 'GRU'];
    const mutation = fc.oneof(
      // A new node reading and writing existing values (cycles, self-loops and duplicate outputs among them).
      fc.record({
        kind: fc.constant('add' as const),
        op: fc.constantFrom(...ops),
        inputs: fc.array(fc.constantFrom(...names, 'fresh'), { minLength: 1, maxLength: 3 }),
        output: fc.constantFrom(...names, 'fresh2'),
      }),
      // A node's input renamed onto one of the values (its own output included).
      fc.record({ kind: fc.constant('rewire' as const), node: fc.nat(), slot: fc.nat(), to: fc.constantFrom(...names) }),
      fc.record({ kind: fc.constant('duplicate' as const), node: fc.nat() }),
      fc.record({ kind: fc.constant('remove' as const), node: fc.nat() }),
    );
    let imported = 0;
    let refused = 0;
    fc.assert(
      fc.property(fc.array(mutation, { minLength: 1, maxLength: 4 }), (mutations) => {
        const nodes = base.graph.nodes.map((n) => ({ ...n, inputs: [...n.inputs], outputs: [...n.outputs] }));
        for (const m of mutations) {
          if (m.kind === 'add') nodes.push({ name: `x${nodes.length}`, opType: m.op, domain: '', inputs: m.inputs, outputs: [m.output], attributes: [] });
          else if (nodes.length === 0) continue;
          else if (m.kind === 'rewire') {
            const node = nodes[m.node % nodes.length];
            node.inputs[m.slot % node.inputs.length] = m.to;
          } else if (m.kind === 'duplicate') nodes.push({ ...nodes[m.node % nodes.length], name: `d${nodes.length}` });
          else nodes.splice(m.node % nodes.length, 1);
        }
        try {
          importOnnx({ ...base, graph: { ...base.graph, nodes } });
          imported++;
        } catch (error) {
          if (!(error instanceof WeftError)) throw new Error(`not the library's error: ${String(error)}`);
          expect(error.message.split('\n')).toHaveLength(1);
          refused++;
        }
      }),
      { numRuns: 1000, seed: 20261205 },
    );
    console.log(`mutated graphs: ${imported} imported, ${refused} refused in one line`);
    expect(refused).toBeGreaterThan(0);
  }, 60_000);
});
