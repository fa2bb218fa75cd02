/**
 * A layer of a cell with no ONNX operator of its own (a cell of your own, given as a plan) as an ONNX Scan
 * (operator set 22; Scan has had this form since set 21): the body is the plan's traced step, each operation one
 * node (MatMul, Add, Sub, Mul, Sigmoid, Tanh, Relu, Slice on the last axis) reading the layer's weights from the
 * outer graph, so the file needs no operator of ours. The state starts at zero, [batch, width] made from the
 * input's shape (Shape, Gather, Concat, ConstantOfShape); the scan output, each step's new h, is the layer's
 * output [steps, batch, hidden]. A Scan has no sequence lengths and runs forward, so the layer must be a forward
 * one and the export must not ask for lengths (checked by the caller).
 */
import type { StepProgram } from '@weft/cells/description';
import type { OnnxAttribute, OnnxGraph, OnnxNode, OnnxValueInfo } from './model.js';
import { ONNX_FLOAT } from './model.js';

/** What the Scan writer adds to the outer graph. */
export interface GraphWriter {
  /** Adds a FLOAT initializer, returns its name. */
  floats(name: string, dims: number[], values: Float32Array): string;
  /** Adds an INT64 initializer (1-D), returns its name. */
  int64s(name: string, values: number[]): string;
  /** Adds a node to the outer graph. */
  node(opType: string, name: string, inputs: string[], outputs: string[], attributes?: OnnxAttribute[]): void;
}

const operators: Record<string, string> = {
  product: 'MatMul',
  add: 'Add',
  subtract: 'Sub',
  multiply: 'Mul',
  sigmoid: 'Sigmoid',
  tanh: 'Tanh',
  relu: 'Relu',
  columns: 'Slice',
};

/**
 * Writes layer `name` (`layers[0]`) of a plan's cell reading `input` [steps, batch, inputWidth]; its parameters are
 * `parameters.<name>` of the weight file (via `take`). Returns the name of its output [steps, batch, hidden].
 */
export function writeScanLayer(
  program: StepProgram,
  name: string,
  parameters: string,
  input: string,
  take: (name: string) => Float32Array,
  graph: GraphWriter,
): string {
  for (const p of program.parameters) graph.floats(`${parameters}.${p.name}`, [...p.shape], take(`${parameters}.${p.name}`));
  const shape = `${name}.inputShape`;
  const batch = `${name}.batch`;
  graph.node('Shape', shape, [input], [shape]);
  graph.node('Gather', batch, [shape, graph.int64s(`${name}.batchAxis`, [1])], [batch], [{ name: 'axis', type: 2, i: 0 }]);
  const zeros = program.state.map((slot) => {
    const dims = `${name}.${slot.name}.dims`;
    graph.node('Concat', dims, [batch, graph.int64s(`${name}.${slot.name}.width`, [slot.width])], [dims], [{ name: 'axis', type: 2, i: 0 }]);
    const zero = `${name}.${slot.name}.zero`;
    graph.node(
      'ConstantOfShape',
      zero,
      [dims],
      [zero],
      [{ name: 'value', type: 4, t: { name: '', dataType: ONNX_FLOAT, dims: [1], values: Float32Array.of(0) } }],
    );
    return zero;
  });
  const body = stepGraph(program, name, parameters, graph);
  const finals = program.state.map((slot) => `${name}.final.${slot.name}`);
  graph.node(
    'Scan',
    name,
    [...zeros, input],
    [...finals, `${name}.output`],
    [
      { name: 'body', type: 5, g: body },
      { name: 'num_scan_inputs', type: 2, i: 1 },
    ],
  );
  return `${name}.output`;
}

/** The Scan's body: state and x_t in; the new state and the step's output out. */
function stepGraph(program: StepProgram, name: string, parameters: string, graph: GraphWriter): OnnxGraph {
  const values = program.values;
  const valueName = (id: number): string => {
    const v = values[id];
    if (v.source === 'input') return `${name}.x`;
    if (v.source === 'state') return `${name}.${program.state[v.slot].name}`;
    return v.source === 'vector' ? `${parameters}.${v.name}` : `${name}.v${id}`;
  };
  const nodes: OnnxNode[] = program.instructions.map((instruction) => {
    const inputs = [valueName(instruction.a)];
    if (instruction.operation === 'product') inputs.push(`${parameters}.${instruction.weights}`);
    else if (instruction.b >= 0) inputs.push(valueName(instruction.b));
    else if (instruction.operation === 'columns') {
      const at = `${name}.v${instruction.out}`;
      inputs.push(
        graph.int64s(`${at}.starts`, [instruction.start]),
        graph.int64s(`${at}.ends`, [instruction.start + values[instruction.out].width]),
        graph.int64s(`${at}.axes`, [-1]),
      );
    }
    return {
      name: `${name}.v${instruction.out}`,
      opType: operators[instruction.operation],
      domain: '',
      inputs,
      outputs: [valueName(instruction.out)],
      attributes: [],
    };
  });
  // Every body output its own value: the new state slots, then the step's output (the first slot's value again).
  const outputs = program.state.map((slot) => `${name}.next.${slot.name}`);
  program.results.forEach((id, s) =>
    nodes.push({ name: outputs[s], opType: 'Identity', domain: '', inputs: [valueName(id)], outputs: [outputs[s]], attributes: [] }),
  );
  nodes.push({ name: `${name}.y`, opType: 'Identity', domain: '', inputs: [valueName(program.results[0])], outputs: [`${name}.y`], attributes: [] });
  const info = (value: string, width: number): OnnxValueInfo => ({ name: value, elementType: ONNX_FLOAT, dims: ['batch', width] });
  return {
    name: `${name}.step`,
    nodes,
    initializers: [],
    inputs: [...program.state.map((slot) => info(`${name}.${slot.name}`, slot.width)), info(`${name}.x`, program.inputWidth)],
    outputs: [...program.state.map((slot, s) => info(outputs[s], slot.width)), info(`${name}.y`, program.hidden)],
  };
}
