import { describe, expect, it } from 'vitest';
import { Random, Tape, tensor } from '@weft/core';
import { buildModel, builtInPlans, traceStep } from '@weft/cells';
import { modelTensors, writeWeightFile } from '@weft/io';
import { onnxFromWeightFile } from '@weft/io/onnx';
import type { OnnxAttribute } from '@weft/io/onnx';
import { writeScanLayer } from '../../src/onnx/plan-scan.js';
import { evaluateGraph } from './evaluate.js';
import { decodeIndependently } from './independent.js';

describe("a plan's layer as an ONNX Scan", () => {
  it("starts every slot at zeros of [batch, width] from the input's shape, and scans the step with the weights read from outside", () => {
    const program = traceStep(
      { ...builtInPlans.lstm, kind: 'test.lstm' },
      { inputWidth: 3, hidden: 4, layer: { cell: 'test.lstm', hidden: 4 } },
      'layers[0].forward',
    );
    const nodes: { opType: string; outputs: string[]; attributes: OnnxAttribute[] }[] = [];
    const initializers: string[] = [];
    const output = writeScanLayer(program, 'layers[0]', 'layers[0].forward', 'input', (name) => new Float32Array(name.endsWith('bias') ? 16 : 64), {
      floats: (name) => {
        initializers.push(name);
        return name;
      },
      int64s: (name) => {
        initializers.push(name);
        return name;
      },
      node: (opType, _name, _inputs, outputs, attributes = []) => nodes.push({ opType, outputs, attributes }),
    });
    expect(output).toBe('layers[0].output');
    expect(nodes.map((n) => n.opType)).toEqual(['Shape', 'Gather', 'Concat', 'ConstantOfShape', 'Concat', 'ConstantOfShape', 'Scan']);
    expect(nodes.at(-1)!.outputs).toEqual(['layers[0].final.h', 'layers[0].final.c', 'layers[0].output']);
    expect(initializers.slice(0, 3)).toEqual(['layers[0].forward.input', 'layers[0].forward.recurrent', 'layers[0].forward.bias']);
    const body = nodes.at(-1)!.attributes.find((a) => a.name === 'body')!.g!;
    expect(body.inputs.map((i) => i.name)).toEqual(['layers[0].h', 'layers[0].c', 'layers[0].x']);
    expect(body.outputs.map((o) => o.name)).toEqual(['layers[0].next.h', 'layers[0].next.c', 'layers[0].y']);
    expect(body.initializers).toEqual([]);
  });

  it('gives, for the LSTM plan filed as a cell of its own, the outputs of the built-in LSTM (itself held to the ONNX LSTM equations)', async () => {
    const plans = { 'test.lstm': { ...builtInPlans.lstm, kind: 'test.lstm' } };
    const layers = [{ cell: 'test.lstm', hidden: 4, peepholes: true }];
    const own = buildModel({ input: { kind: 'values', width: 3 }, layers, readout: { width: 2 } }, { seed: 3, plans });
    const random = new Random('scan-lstm');
    for (const p of own.parameters()) for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.3, 0.3);
    const builtIn = buildModel({ input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 4, peepholes: true }], readout: { width: 2 } });
    builtIn.parameters().forEach((p, i) => p.tensor.data.set(own.parameters()[i].tensor.data));
    const bytes = await onnxFromWeightFile(await writeWeightFile(own.description, modelTensors(own)), { plans });
    const input = Float32Array.from({ length: 5 * 2 * 3 }, () => random.between(-1, 1));
    const graph = (decodeIndependently(bytes) as { graph: Record<string, unknown> }).graph;
    const got = evaluateGraph(graph, new Map([['input', { dims: [5, 2, 3], data: Array.from(input) }]])).get('output')!.data;
    const expected = builtIn.run(new Tape({ recording: false }), tensor(input, [5, 2, 3])).outputs.data;
    let worst = 0;
    got.forEach((v, i) => (worst = Math.max(worst, Math.abs(v - expected[i]))));
    expect(worst).toBeLessThan(1e-5);
  });
});
