/**
 * weft models out to ONNX and back: export → encode → decode → import gives the same tensors bit for bit and the same
 * outputs (ragged lengths included), and the file decodes with an independent route (protobufjs and ONNX's published
 * schema) into the operators, attributes and tensors we wrote, with every field the IR requires.
 */
import { describe, expect, it } from 'vitest';
import { Random, Tape, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';
import type { ModelDescription, SequenceModel } from '@weft/cells';
import { loadModel, modelTensors, readWeightFile, writeWeightFile } from '@weft/io';
import { ONNX_IR_VERSION, ONNX_OPSET, decodeOnnxModel, encodeOnnxModel, exportOnnx, importOnnx, onnxFromWeightFile, weightFileFromOnnx } from '@weft/io/onnx';
import { decodeIndependently, floatsOfIndependent } from './independent.js';
import { evaluateGraph } from './evaluate.js';
import { mguPlan } from '../../../cells/test/plans/mgu.js';

const values = (width: number): ModelDescription['input'] => ({ kind: 'values', width });
const tokens = { kind: 'embedding' as const, vocabulary: 7, width: 4 };
const models: Record<string, ModelDescription> = {
  'an LSTM with peepholes': { input: values(3), layers: [{ cell: 'lstm', hidden: 5, peepholes: true }] },
  'a GRU with the reset before the product': { input: values(3), layers: [{ cell: 'gru', hidden: 4 }], readout: { width: 2 } },
  'a GRU with the reset after the product': { input: values(3), layers: [{ cell: 'gru', hidden: 4, resetAfterProduct: true }], readout: { width: 2 } },
  'a plain tanh cell': { input: values(2), layers: [{ cell: 'plain', hidden: 3 }] },
  'a plain ReLU cell': { input: values(2), layers: [{ cell: 'plain', hidden: 3, activation: 'relu' }], readout: { width: 1 } },
  'a 2-layer stack with embedding and readout': {
    input: tokens,
    layers: [
      { cell: 'lstm', hidden: 4 },
      { cell: 'gru', hidden: 3 },
    ],
    readout: { width: 7 },
  },
  'bidirectional layers': {
    input: values(3),
    layers: [
      { cell: 'gru', hidden: 3, bidirectional: true, resetAfterProduct: true },
      { cell: 'lstm', hidden: 2, bidirectional: true, peepholes: true },
    ],
    readout: { width: 2 },
  },
  'bidirectional layers with embedding, no readout': { input: tokens, layers: [{ cell: 'plain', hidden: 3, bidirectional: true }] },
  'a reverse layer under a forward one': {
    input: values(3),
    layers: [
      { cell: 'lstm', hidden: 3, reverse: true, peepholes: true },
      { cell: 'gru', hidden: 2 },
    ],
    readout: { width: 1 },
  },
};

/** A model whose every parameter is nonzero (biases and peepholes start at 0 or 1, which would hide a mix-up). */
function shaken(description: ModelDescription, seed: number): SequenceModel {
  const model = buildModel(description, { seed });
  const random = new Random(`shake-${seed}`);
  for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
  return model;
}

function outputsOf(model: SequenceModel, description: ModelDescription, lengths: number[]): Float32Array {
  const random = new Random('inputs');
  const [steps, batch] = [5, lengths.length];
  const input =
    description.input.kind === 'embedding'
      ? { tokens: Int32Array.from({ length: steps * batch }, () => random.integer(7)), steps, batch }
      : tensor(
          Float32Array.from({ length: steps * batch * description.input.width }, () => random.between(-1, 1)),
          [steps, batch, description.input.width],
        );
  return Float32Array.from(model.run(new Tape({ recording: false }), input, { lengths }).outputs.data);
}

describe('exporting to ONNX and importing back', () => {
  Object.entries(models).forEach(([label, description], n) => {
    it(`keeps ${label} bit for bit: tensors, description and outputs over ragged lengths`, async () => {
      const model = shaken(description, n + 1);
      const text = await writeWeightFile(model.description, modelTensors(model), { metadata: { task: 'test', note: label } });
      const bytes = await onnxFromWeightFile(text);
      const back = await readWeightFile(await weightFileFromOnnx(bytes));
      expect(back.model).toEqual(model.description);
      expect(back.tensors.map((t) => t.name)).toEqual(model.parameters().map((p) => p.name));
      back.tensors.forEach((t, i) => expect(Array.from(t.values), t.name).toEqual(Array.from(model.parameters()[i].tensor.data)));
      expect(back.metadata.note).toBe(label);
      expect(outputsOf(loadModel(back), description, [5, 3, 1])).toEqual(outputsOf(model, description, [5, 3, 1]));
    });
  });

  it("writes a file that protobufjs decodes, with ONNX's schema, into the operators, attributes and tensors written", async () => {
    const model = shaken(models['bidirectional layers'], 9);
    const file = await readWeightFile(await writeWeightFile(model.description, modelTensors(model)));
    const onnx = exportOnnx(file, { lengths: true, producerVersion: '0.1.0' });
    const decoded = decodeIndependently(encodeOnnxModel(onnx)) as {
      irVersion: number;
      opsetImport: { domain?: string; version: number }[];
      producerName: string;
      producerVersion: string;
      graph: {
        name: string;
        node: {
          opType: string;
          input: string[];
          output: string[];
          attribute?: { name: string; type: number; i?: number; s?: number[]; ints?: number[]; strings?: number[][] }[];
        }[];
        initializer: Record<string, unknown>[];
        input: { name: string; type: { tensorType: { elemType: number; shape: { dim: unknown[] } } } }[];
        output: { name: string; type: { tensorType: { elemType: number } } }[];
      };
      metadataProps: { key: string; value: string }[];
    };
    // What the IR requires of a model (IR.md): its IR version, the operator sets it imports, a graph with a name,
    // each node's operator, each initializer's name, type and dims, each graph input and output with a type.
    expect([decoded.irVersion, ONNX_IR_VERSION]).toEqual([10, 10]);
    expect(decoded.opsetImport).toEqual([{ domain: '', version: ONNX_OPSET }]);
    expect([decoded.producerName, decoded.producerVersion]).toEqual(['weft', '0.1.0']);
    expect(decoded.graph.name).toBe('weft');
    expect(decoded.graph.node.map((n) => n.opType)).toEqual(['GRU', 'Transpose', 'Reshape', 'LSTM', 'Transpose', 'Reshape', 'MatMul', 'Add']);
    const gru = decoded.graph.node[0];
    expect(gru.input).toEqual(['input', 'layers[0].W', 'layers[0].R', 'layers[0].B', 'lengths']);
    expect(gru.attribute?.map((a) => [a.name, a.type])).toEqual([
      ['hidden_size', 2],
      ['direction', 3],
      ['linear_before_reset', 2],
    ]);
    expect(new TextDecoder().decode(Uint8Array.from(gru.attribute![1].s!))).toBe('bidirectional');
    expect(decoded.graph.node[3].input).toEqual(['layers[0].output', 'layers[1].W', 'layers[1].R', 'layers[1].B', 'lengths', '', '', 'layers[1].P']);
    for (const t of onnx.graph.initializers) {
      const theirs = decoded.graph.initializer.find((x) => x.name === t.name)!;
      expect(theirs.dims, t.name).toEqual(t.dims);
      expect(theirs.dataType, t.name).toBe(t.dataType);
      if (t.dataType === 1) expect(floatsOfIndependent(theirs), t.name).toEqual(Array.from(t.values as Float32Array));
    }
    expect(decoded.graph.input.map((i) => [i.name, i.type.tensorType.elemType, i.type.tensorType.shape.dim.length])).toEqual([
      ['input', 1, 3],
      ['lengths', 6, 1],
    ]);
    expect(decoded.graph.output.map((o) => [o.name, o.type.tensorType.elemType])).toEqual([['output', 1]]);
    expect(decoded.metadataProps.map((p) => p.key)).toEqual(['weft.model', 'weft.metadata']);
    // And our decoder reads what protobufjs read.
    const ours = decodeOnnxModel(encodeOnnxModel(onnx));
    expect(ours.graph.nodes.map((n) => n.opType)).toEqual(decoded.graph.node.map((n) => n.opType));
    expect(importOnnx(ours).binding.lengths).toBe('lengths');
  });
});

describe('exporting a cell of your own to ONNX', () => {
  const plans = { 'test.mgu': mguPlan };
  const description: ModelDescription = {
    input: values(3),
    layers: [
      { cell: 'test.mgu', hidden: 5 },
      { cell: 'test.mgu', hidden: 4 },
    ],
    readout: { width: 2 },
  };

  it("writes each of its layers as a Scan of its plan's step, which an evaluator of the ONNX operators runs to the model's outputs", async () => {
    const model = buildModel(description, { seed: 5, plans });
    const random = new Random('own-cell-onnx');
    for (const p of model.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
    const bytes = await onnxFromWeightFile(await writeWeightFile(model.description, modelTensors(model)), { plans });
    // Decoded by protobufjs with ONNX's schema, run by evaluate.ts: nothing of weft's reader or runtime takes part.
    const graph = (decodeIndependently(bytes) as { graph: Record<string, unknown> }).graph;
    const nodes = graph.node as { opType: string; attribute?: { name: string; g?: { node: { opType: string }[] } }[] }[];
    expect(nodes.filter((n) => n.opType === 'Scan')).toHaveLength(2);
    const body = nodes.find((n) => n.opType === 'Scan')!.attribute!.find((a) => a.name === 'body')!.g!;
    expect([...new Set(body.node.map((n) => n.opType))].sort()).toEqual(['Add', 'Identity', 'MatMul', 'Mul', 'Sigmoid', 'Slice', 'Sub', 'Tanh']);
    const [steps, batch] = [6, 2];
    const input = Float32Array.from({ length: steps * batch * 3 }, () => random.between(-1, 1));
    const evaluated = evaluateGraph(graph, new Map([['input', { dims: [steps, batch, 3], data: Array.from(input) }]])).get('output')!;
    const expected = model.run(new Tape({ recording: false }), tensor(input, [steps, batch, 3])).outputs.data;
    expect(evaluated.dims).toEqual([steps, batch, 2]);
    let worst = 0;
    evaluated.data.forEach((v, i) => (worst = Math.max(worst, Math.abs(v - expected[i]))));
    // f32 weights and model against the evaluator's f64.
    expect(worst).toBeLessThan(1e-5);
    // Our own decoder reads the Scan's body back as written.
    const ours = decodeOnnxModel(bytes).graph.nodes.find((n) => n.opType === 'Scan')!;
    expect(ours.attributes.find((a) => a.name === 'body')!.g!.nodes.map((n) => n.opType)).toEqual(body.node.map((n) => n.opType));
  });

  it('refuses, in one line naming the place, a layer with no plan, a bidirectional one, and a lengths input', async () => {
    const text = async (layers: ModelDescription['layers']): Promise<string> =>
      writeWeightFile({ input: values(3), layers }, modelTensors(buildModel({ input: values(3), layers }, { plans })));
    const message = (promise: Promise<unknown>): Promise<string> =>
      promise.then(
        () => 'written',
        (error: Error) => error.message,
      );
    const plain = await text([{ cell: 'test.mgu', hidden: 3 }]);
    expect(await message(onnxFromWeightFile(plain, { plans, lengths: true }))).toMatch(
      /exportOnnx\.lengths: expected no lengths input \(layer 0's cell of your own is written as an ONNX Scan/,
    );
    const file = await readWeightFile(plain, { plans });
    expect(() => exportOnnx(file)).toThrowError(/model\.layers\[0\]\.cell: expected a built-in cell .* or one whose plan is given/);
    const both = await text([{ cell: 'test.mgu', hidden: 3, bidirectional: true }]);
    expect(await message(onnxFromWeightFile(both, { plans }))).toMatch(/model\.layers\[0\]: expected a forward layer .*received bidirectional/);
  });
});
