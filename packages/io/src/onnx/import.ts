/**
 * ONNX to weft: a graph that is a recurrent stack — LSTM, GRU and RNN nodes (any direction,
 * `sequence_lens`, `initial_h`/`initial_c`, peepholes `P`, `layout` 0 and 1, `linear_before_reset` 0 and 1, the
 * default activations, or Relu for RNN), optionally a row gather from a constant table before it (an embedding) and a
 * readout after it (MatMul + Add, or Gemm on rows flattened by a Reshape) with Softmax or LogSoftmax — becomes a weft
 * model description and its tensors. The glue between nodes (Squeeze, Transpose, Reshape, Identity) is followed by
 * the axes it moves (time, batch, direction, hidden), so any arrangement that hands the next node [time, batch,
 * features] or [batch, time, features] is read. Anything else is refused with an error naming the node, its operator
 * and what is wrong, before any tensor is copied.
 *
 * What weft runs from the imported model's input: `input` [steps, batch, width] time-major (or token ids); ONNX's
 * layout, the names of the graph's inputs and outputs, and how the output's axes lie are kept in the metadata
 * (`onnx`), so a caller can feed the original tensors.
 *
 * Why one file of this length: the import is one walk along the chain from the graph's input to its output, and
 * what it carries from node to node (nodes used, the width so far, the value's axes, the binding) is read and
 * written at every step of it.
 */
import { fail } from '@weft/core';
import type { LayerDescription, ModelDescription } from '@weft/cells/description';
import type { NamedValues } from '../weight-file.js';
import { layerTensors, sumBiases } from './mapping.js';
import { attribute, moveAxes, nodeLabel } from './axes.js';
import { recurrentForm } from './recurrent.js';
import type { Axes } from './axes.js';
import type { OnnxModel, OnnxNode, OnnxTensor } from './model.js';
import { ONNX_FLOAT } from './model.js';

/** How `importOnnx` reads a model. */
export interface OnnxImportOptions {
  /**
   * Values for graph inputs that are weights rather than per-run data (W, R, B, P given as inputs, as in ONNX's
   * operator test models), by graph input name.
   */
  readonly values?: Readonly<Record<string, OnnxTensor>>;
}

/** A graph value by name, and what it holds. */
export interface OnnxBoundInput {
  /** The graph input's name. */
  readonly name: string;
  /** Numbers, or token ids. */
  readonly kind: 'values' | 'tokens';
}

/** The graph values holding a layer's state: h, and c for an LSTM (null where the graph has none). */
export interface OnnxStateNames {
  /** The hidden state's value. */
  readonly h: string | null;
  /** The LSTM cell state's value. */
  readonly c: string | null;
}

/** A graph output and the axes it has. */
export interface OnnxBoundOutput {
  /** The graph output's name ('' when the graph gives only final states). */
  readonly name: string;
  /** Its axes: t time, b batch, d direction, h hidden, f features, v readout values, n rows of time and batch. */
  readonly axes: readonly string[];
}

/** How the imported model meets the ONNX graph's inputs and outputs (kept in the weight file's metadata as `onnx`). */
export interface OnnxBinding {
  /** The graph input the model reads, and whether it holds numbers or token ids. */
  readonly input: OnnxBoundInput;
  /** ONNX `layout` of the first recurrent node: 0 is [steps, batch, …], 1 is [batch, steps, …]. */
  readonly layout: 0 | 1;
  /** The graph input holding each row's length (`sequence_lens`), or null. */
  readonly lengths: string | null;
  /** Per layer, the graph inputs holding its initial h and c ([directions, batch, hidden]), or null. */
  readonly initialState: readonly OnnxStateNames[];
  /** The graph output the model's outputs correspond to, and the axes it has. */
  readonly output: OnnxBoundOutput;
  /** Per layer, graph outputs that are its final states (Y_h, Y_c), when the graph gives them. */
  readonly states: readonly OnnxStateNames[];
  /** Softmax or LogSoftmax applied after the readout in the ONNX graph (weft models give the logits). */
  readonly outputFunction: 'none' | 'softmax' | 'logSoftmax';
  /** The operator set version the file imports. */
  readonly opset: number;
  /** The program that wrote the file. */
  readonly producer: string;
}

/** What `importOnnx` gives: a weft model description, its tensors by weft names, and how it binds to the graph. */
export interface OnnxImport {
  /** The model description. */
  readonly description: ModelDescription;
  /** Every tensor, in the description's parameter order. */
  readonly tensors: NamedValues[];
  /** How the model meets the ONNX graph. */
  readonly binding: OnnxBinding;
  /** weft metadata the file carries (`weft.metadata` in `metadata_props`, written by weft's export), else {}. */
  readonly metadata: Record<string, unknown>;
}

const RECURRENT = new Set(['LSTM', 'GRU', 'RNN']);
const GLUE = new Set(['Identity', 'Squeeze', 'Transpose', 'Reshape']);
const SUPPORTED = new Set([...RECURRENT, ...GLUE, 'Gather', 'MatMul', 'Add', 'Gemm', 'Softmax', 'LogSoftmax']);

/** Reads an ONNX model (see above); throws a WeftError naming the node, operator and attribute of anything weft does not run. */
export function importOnnx(model: OnnxModel, options: OnnxImportOptions = {}): OnnxImport {
  const walk = new ChainWalk(model, options);
  walk.readInput();
  walk.recurrent.forEach(([node, index], layerIndex) => walk.readLayer(node, index, layerIndex));
  walk.readTail();
  return walk.result();
}

/** A layer's weights as the graph gives them, checked against each other and the layer before. */
interface LayerWeights {
  readonly w: OnnxTensor;
  readonly r: OnnxTensor;
  readonly b: OnnxTensor | null;
  readonly p: OnnxTensor | null;
  readonly hidden: number;
  readonly inputWidth: number;
}

/** The readout found after the last layer: weights [features, width] and bias. */
interface Readout {
  weights: Float32Array;
  bias: Float32Array;
  width: number;
}

/**
 * The walk along the chain from the graph's input to its output: what the graph holds (constants, inputs, outputs,
 * which node makes and reads each value), the nodes met so far, and the model read so far.
 */
class ChainWalk {
  /** The recurrent nodes, in graph order (the layers). */
  readonly recurrent: readonly (readonly [OnnxNode, number])[];
  private readonly model: OnnxModel;
  private readonly graph: OnnxModel['graph'];
  private readonly constants = new Map<string, OnnxTensor>();
  private readonly graphInputs: Set<string>;
  private readonly graphOutputs: Set<string>;
  private readonly producer = new Map<string, number>();
  private readonly consumers = new Map<string, number[]>();
  private readonly used = new Set<number>();
  private readonly layers: LayerDescription[] = [];
  private readonly tensors: NamedValues[] = [];
  private readonly initialState: { h: string | null; c: string | null }[] = [];
  private readonly states: { h: string | null; c: string | null }[] = [];
  private inputKind: 'values' | 'tokens' = 'values';
  private inputName = '';
  private embedding: OnnxTensor | null = null;
  private lengths: string | null = null;
  private layout: 0 | 1 = 0;
  private width = -1;
  private current: Axes | null = null;
  private currentValue = '';
  private readout: Readout | null = null;
  private outputFunction: OnnxBinding['outputFunction'] = 'none';

  constructor(model: OnnxModel, options: OnnxImportOptions) {
    this.model = model;
    const graph = model.graph;
    this.graph = graph;
    for (const t of graph.initializers) this.constants.set(t.name, t);
    for (const [name, t] of Object.entries(options.values ?? {})) this.constants.set(name, { ...t, name });
    this.graphInputs = new Set(graph.inputs.map((i) => i.name).filter((n) => !this.constants.has(n)));
    this.graphOutputs = new Set(graph.outputs.map((o) => o.name));
    graph.nodes.forEach((node, index) => {
      const where = nodeLabel(node, index);
      if (node.domain !== '' && node.domain !== 'ai.onnx')
        fail('invalid_option', `${where}.domain`, "the default ONNX domain ('')", JSON.stringify(node.domain));
      if (!SUPPORTED.has(node.opType)) {
        fail('invalid_option', `${where}`, `one of the operators weft runs (${[...SUPPORTED].join(', ')})`, node.opType);
      }
      for (const output of node.outputs) if (output !== '') this.producer.set(output, index);
      for (const input of node.inputs) {
        if (input === '') continue;
        const list = this.consumers.get(input);
        if (list === undefined) this.consumers.set(input, [index]);
        else list.push(index);
      }
    });
    this.recurrent = graph.nodes.map((n, i) => [n, i] as const).filter(([n]) => RECURRENT.has(n.opType));
    if (this.recurrent.length === 0) fail('invalid_option', 'graph', 'at least one LSTM, GRU or RNN node', 'none');
  }

  /** Input `slot` of a node as a FLOAT constant (an initializer or given values), or a one-line error saying what it is. */
  private readonly constant = (node: OnnxNode, index: number, slot: number, what: string): OnnxTensor => {
    const name = node.inputs[slot];
    const t = name === undefined || name === '' ? undefined : this.constants.get(name);
    if (t === undefined) {
      const why =
        name === undefined || name === ''
          ? 'none'
          : this.graphInputs.has(name)
            ? `graph input "${name}" with no initializer (give its values)`
            : `"${name}", computed by another node`;
      fail('bad_data', `${nodeLabel(node, index)}.input[${slot}]`, `${what}: an initializer or given values`, why);
    }
    if (t.dataType !== ONNX_FLOAT) fail('bad_data', `${nodeLabel(node, index)}.input[${slot}] ("${name}")`, 'FLOAT data', `data type ${t.dataType}`);
    return t;
  };

  /** The one node reading `value` (null for none); more than one, or a node met before (a cycle), is refused. */
  private consumedOnce(value: string, from: string): [OnnxNode, number] | null {
    const list = this.consumers.get(value) ?? [];
    if (list.length === 0) return null;
    if (list.length > 1)
      fail(
        'invalid_option',
        `${from} output "${value}"`,
        'one node reading it (weft reads a chain of layers)',
        `${list.length} nodes: ${list.map((i) => nodeLabel(this.graph.nodes[i], i)).join(', ')}`,
      );
    // A node met twice on the walk closes a cycle (an output fed back into the chain): refused, never followed.
    if (this.used.has(list[0]))
      fail(
        'invalid_option',
        `${from} output "${value}"`,
        'a graph without cycles (each node met once on the way from the input to the outputs)',
        `read again by ${nodeLabel(this.graph.nodes[list[0]], list[0])}, met before`,
      );
    return [this.graph.nodes[list[0]], list[0]];
  }

  /** The model's input: a graph input straight into the first recurrent node, or a row gather of a constant table. */
  readInput(): void {
    const [first, firstIndex] = this.recurrent[0];
    this.inputName = first.inputs[0];
    const firstX = this.producer.get(first.inputs[0]);
    if (firstX !== undefined) {
      const gather = this.graph.nodes[firstX];
      const where = nodeLabel(gather, firstX);
      if (gather.opType !== 'Gather')
        fail('invalid_option', where, 'a Gather of token ids from a constant table, or nothing, before the first recurrent node', gather.opType);
      const axis = attribute(gather, 'axis')?.i ?? 0;
      if (axis !== 0) fail('invalid_option', `${where}.axis`, '0 (rows of the table)', String(axis));
      const embedding = this.constant(gather, firstX, 0, 'an embedding table');
      if (embedding.dims.length !== 2) fail('bad_data', `${where}.input[0]`, 'a table [vocabulary, width]', JSON.stringify(embedding.dims));
      this.inputName = gather.inputs[1];
      if (!this.graphInputs.has(this.inputName)) fail('invalid_option', `${where}.input[1]`, 'a graph input of token ids', `"${this.inputName}"`);
      this.inputKind = 'tokens';
      this.used.add(firstX);
      this.embedding = embedding;
      this.width = embedding.dims[1];
      this.tensors.push({ name: 'embedding.table', shape: [...embedding.dims], values: Float32Array.from(embedding.values as Float32Array) });
    } else if (!this.graphInputs.has(this.inputName)) {
      fail('invalid_option', `${nodeLabel(first, firstIndex)}.input[0]`, 'a graph input', `"${this.inputName}"`);
    }
  }

  /** One recurrent node: its weights in weft's names and layout, its run inputs, and the glue to the next node. */
  readLayer(node: OnnxNode, index: number, layerIndex: number): void {
    const where = nodeLabel(node, index);
    this.used.add(index);
    const form = recurrentForm(node, index);
    const { kind, directions, reverse, layout: nodeLayout, activation, resetAfter } = form;
    if (layerIndex === 0) {
      this.layout = nodeLayout;
    } else {
      // The previous layer's output, through the glue, must be [time, batch, features] in this node's layout.
      const wanted = nodeLayout === 0 ? ['t', 'b', 'f'] : ['b', 't', 'f'];
      const current = this.current;
      if (node.inputs[0] !== this.currentValue || current === null || current.labels.join() !== wanted.join()) {
        fail(
          'invalid_option',
          `${where}.input[0]`,
          `the previous layer's output as [${wanted.join(', ')}] (t time, b batch, f features)`,
          current === null || node.inputs[0] !== this.currentValue ? `"${node.inputs[0]}"` : `[${current.labels.join(', ')}]`,
        );
      }
    }
    const { w, r, b, p, hidden, inputWidth } = this.layerWeights(node, index, form);
    this.readRunInputs(node, index, kind);
    // The tensors, direction by direction, in weft's names and layouts.
    this.tensors.push(
      ...layerTensors(
        kind,
        this.layers.length,
        reverse ? ['backward'] : directions === 2 ? ['forward', 'backward'] : ['forward'],
        inputWidth,
        hidden,
        resetAfter,
        w.values as Float32Array,
        r.values as Float32Array,
        b === null ? null : (b.values as Float32Array),
        p === null ? null : (p.values as Float32Array),
      ),
    );
    const layer: { -readonly [K in keyof LayerDescription]: LayerDescription[K] } = { cell: kind, hidden };
    if (directions === 2) layer.bidirectional = true;
    if (reverse) layer.reverse = true;
    if (kind === 'lstm' && p !== null) layer.peepholes = true;
    if (kind === 'gru' && resetAfter) layer.resetAfterProduct = true;
    if (kind === 'plain' && activation === 'relu') layer.activation = 'relu';
    this.layers.push(layer);
    this.width = directions * hidden;
    this.followGlue(node, where, layerIndex, {
      labels: nodeLayout === 0 ? ['t', 'd', 'b', 'h'] : ['b', 't', 'd', 'h'],
      sizes: { d: directions, h: hidden, f: directions * hidden },
    });
  }

  /** W, R and the optional B and P of a recurrent node, their dims checked against each other and the layer before. */
  private layerWeights(node: OnnxNode, index: number, form: ReturnType<typeof recurrentForm>): LayerWeights {
    const { kind, gates, directions } = form;
    const where = nodeLabel(node, index);
    const w = this.constant(node, index, 1, 'the input weights W');
    const r = this.constant(node, index, 2, 'the recurrent weights R');
    const declared = attribute(node, 'hidden_size')?.i;
    const hidden = declared ?? r.dims[2];
    const inputWidth = w.dims[2];
    if (w.dims.length !== 3 || w.dims[0] !== directions || w.dims[1] !== gates * hidden) {
      fail(
        'bad_data',
        `${where}.input[1] (W, "${node.inputs[1]}")`,
        `dims [${directions}, ${gates * hidden}, input width] (${directions} direction(s), ${gates} gates × hidden_size ${hidden})`,
        JSON.stringify(w.dims),
      );
    }
    if (r.dims.length !== 3 || r.dims[0] !== directions || r.dims[1] !== gates * hidden || r.dims[2] !== hidden) {
      fail(
        'bad_data',
        `${where}.input[2] (R, "${node.inputs[2]}")`,
        `dims [${directions}, ${gates * hidden}, ${hidden}] (hidden_size ${hidden})`,
        JSON.stringify(r.dims),
      );
    }
    if (this.width !== -1 && inputWidth !== this.width)
      fail('bad_data', `${where}.input[1] (W, "${node.inputs[1]}")`, `an input width of ${this.width} (what the layer before gives)`, String(inputWidth));
    const optional = (slot: number): OnnxTensor | null =>
      node.inputs[slot] === undefined || node.inputs[slot] === ''
        ? null
        : this.constant(node, index, slot, ['', '', '', 'the biases B', '', '', '', 'the peepholes P'][slot]);
    const b = optional(3);
    if (b !== null && (b.dims.length !== 2 || b.dims[0] !== directions || b.dims[1] !== 2 * gates * hidden)) {
      fail('bad_data', `${where}.input[3] (B, "${node.inputs[3]}")`, `dims [${directions}, ${2 * gates * hidden}]`, JSON.stringify(b.dims));
    }
    const p = kind === 'lstm' ? optional(7) : null;
    if (p !== null && (p.dims.length !== 2 || p.dims[0] !== directions || p.dims[1] !== 3 * hidden)) {
      fail('bad_data', `${where}.input[7] (P, "${node.inputs[7]}")`, `dims [${directions}, ${3 * hidden}]`, JSON.stringify(p.dims));
    }
    return { w, r, b, p, hidden, inputWidth };
  }

  /**
   * Per-run inputs: lengths and initial states come from graph inputs, or are absent (constants must be zero states);
   * final states, where the graph gives them, are read by no other node.
   */
  private readRunInputs(node: OnnxNode, index: number, kind: string): void {
    const where = nodeLabel(node, index);
    const runInput = (slot: number, what: string): string | null => {
      const name = node.inputs[slot];
      if (name === undefined || name === '') return null;
      if (this.graphInputs.has(name)) return name;
      const t = this.constants.get(name);
      if (t !== undefined && slot >= 5 && Array.from(t.values as ArrayLike<number>).every((v) => v === 0)) return null;
      fail(
        'invalid_option',
        `${where}.input[${slot}] (${what}, "${name}")`,
        slot === 4 ? 'a graph input (lengths are given per run)' : 'a graph input, or zeros (weft states start at zero)',
        t === undefined ? 'a value computed by another node' : 'a constant that is not all zeros',
      );
    };
    const lengthsInput = runInput(4, 'sequence_lens');
    if (lengthsInput !== null) {
      if (this.lengths !== null && this.lengths !== lengthsInput)
        fail('invalid_option', `${where}.input[4]`, `the same lengths as the layers before ("${this.lengths}")`, `"${lengthsInput}"`);
      this.lengths = lengthsInput;
    }
    this.initialState.push({ h: runInput(5, 'initial_h'), c: kind === 'lstm' ? runInput(6, 'initial_c') : null });
    this.states.push({
      h: node.outputs[1] !== undefined && node.outputs[1] !== '' ? node.outputs[1] : null,
      c: node.outputs[2] !== undefined && node.outputs[2] !== '' ? node.outputs[2] : null,
    });
    for (const state of [node.outputs[1], node.outputs[2]]) {
      const readers = state === undefined || state === '' ? [] : (this.consumers.get(state) ?? []);
      if (readers.length > 0) {
        fail(
          'invalid_option',
          `${where} output "${state}"`,
          'final states read by no other node (weft passes only the sequence between layers)',
          `read by ${nodeLabel(this.graph.nodes[readers[0]], readers[0])}`,
        );
      }
    }
  }

  /** Follows a layer's Y (axes `axes`) through the layout glue to the next recurrent node, or to the readout. */
  private followGlue(node: OnnxNode, where: string, layerIndex: number, axes: Axes): void {
    this.currentValue = node.outputs[0] ?? '';
    this.current = axes;
    if (this.currentValue === '') {
      // Only the final states are asked for: fine for the last layer, whose states the model's run gives.
      if (layerIndex < this.recurrent.length - 1)
        fail('invalid_option', `${where}.output[0]`, 'the sequence output Y (weft layers pass the sequence on)', 'not asked for');
      return;
    }
    for (;;) {
      const next = this.consumedOnce(this.currentValue, where);
      if (next === null || RECURRENT.has(next[0].opType) || !GLUE.has(next[0].opType)) break;
      const [glue, glueIndex] = next;
      this.used.add(glueIndex);
      this.current = moveAxes(glue, glueIndex, this.current as Axes, this.constants);
      this.currentValue = glue.outputs[0];
    }
  }

  /** After the last layer: a readout (MatMul (+ Add), or Gemm on flattened rows), then Softmax or LogSoftmax, and glue. */
  readTail(): void {
    for (;;) {
      if (this.currentValue === '') break;
      const next = this.consumedOnce(this.currentValue, 'the last layer');
      if (next === null) break;
      const [node, index] = next;
      const where = nodeLabel(node, index);
      this.used.add(index);
      const labels = (this.current as Axes).labels;
      const lastLabel = labels[labels.length - 1];
      if ((node.opType === 'MatMul' || node.opType === 'Gemm') && this.readout === null) {
        this.readReadout(node, index, labels);
      } else if (node.opType === 'Add' && this.readout !== null && lastLabel === 'v') {
        const readout = this.readout;
        const slot = node.inputs[0] === this.currentValue ? 1 : 0;
        const bias = biasOf(node, index, slot, readout.width, this.constant);
        readout.bias = readout.bias.map((v, j) => sumBiases(v, bias[j]));
      } else if ((node.opType === 'Softmax' || node.opType === 'LogSoftmax') && this.outputFunction === 'none') {
        const axis = attribute(node, 'axis')?.i ?? -1;
        if (axis !== -1 && axis !== labels.length - 1) fail('invalid_option', `${where}.axis`, `the last axis (-1 or ${labels.length - 1})`, String(axis));
        this.outputFunction = node.opType === 'Softmax' ? 'softmax' : 'logSoftmax';
      } else if (GLUE.has(node.opType)) {
        this.current = moveAxes(node, index, this.current as Axes, this.constants);
      } else {
        fail('invalid_option', where, 'a readout (MatMul + Add, or Gemm), Softmax, LogSoftmax or layout glue after the last layer', node.opType);
      }
      this.currentValue = node.outputs[0];
    }
  }

  /** The readout's weights from a MatMul or Gemm node (transposed back when Gemm's transB is set). */
  private readReadout(node: OnnxNode, index: number, labels: readonly string[]): void {
    const where = nodeLabel(node, index);
    const width = this.width;
    if (labels[labels.length - 1] !== 'f') fail('invalid_option', `${where}.input[0]`, 'features on the last axis', `[${labels.join(', ')}]`);
    const weights = this.constant(node, index, 1, 'the readout weights');
    let transB = 0;
    if (node.opType === 'Gemm') {
      if (labels.length !== 2)
        fail('invalid_option', `${where}.input[0]`, 'rows [steps·batch, features] (Gemm is 2-D; flatten with Reshape)', `[${labels.join(', ')}]`);
      const alpha = attribute(node, 'alpha')?.f ?? 1;
      const beta = attribute(node, 'beta')?.f ?? 1;
      if (alpha !== 1 || beta !== 1 || (attribute(node, 'transA')?.i ?? 0) !== 0)
        fail('invalid_option', `${where}`, 'alpha 1, beta 1, transA 0', `alpha ${alpha}, beta ${beta}, transA ${attribute(node, 'transA')?.i ?? 0}`);
      transB = attribute(node, 'transB')?.i ?? 0;
    }
    const [rows, cols] = transB === 0 ? weights.dims : [weights.dims[1], weights.dims[0]];
    if (weights.dims.length !== 2 || rows !== width)
      fail(
        'bad_data',
        `${where}.input[1] ("${node.inputs[1]}")`,
        `a matrix with ${width} ${transB === 0 ? 'rows' : 'columns'} (the features)`,
        JSON.stringify(weights.dims),
      );
    const values = new Float32Array(width * cols);
    const wv = weights.values as Float32Array;
    for (let i = 0; i < width; i++) for (let j = 0; j < cols; j++) values[i * cols + j] = transB === 0 ? wv[i * cols + j] : wv[j * width + i];
    let bias: Float32Array = new Float32Array(cols);
    if (node.opType === 'Gemm' && node.inputs[2] !== undefined && node.inputs[2] !== '') bias = biasOf(node, index, 2, cols, this.constant);
    this.readout = { weights: values, bias, width: cols };
    this.current = { labels: [...labels.slice(0, -1), 'v'], sizes: { ...(this.current as Axes).sizes, v: cols } };
  }

  /** The import: every node on the chain, the chain ending at a graph output, and the model, tensors and binding. */
  result(): OnnxImport {
    this.graph.nodes.forEach((node, index) => {
      if (!this.used.has(index))
        fail(
          'invalid_option',
          nodeLabel(node, index),
          'a node on the chain from the input to the output',
          'a node off it (weft reads a single chain of layers)',
        );
    });
    const { currentValue, readout, tensors, layers } = this;
    if (currentValue !== '' && !this.graphOutputs.has(currentValue))
      fail('invalid_option', 'graph output', `"${currentValue}" (the end of the chain)`, `[${[...this.graphOutputs].join(', ')}]`);
    if (currentValue === '' && this.states[this.states.length - 1].h === null) fail('invalid_option', 'graph output', "the last layer's Y or Y_h", 'neither');
    if (readout !== null) {
      tensors.push(
        { name: 'readout.weights', shape: [this.width, readout.width], values: readout.weights },
        { name: 'readout.bias', shape: [readout.width], values: readout.bias },
      );
    }
    const embedding = this.embedding;
    const description: ModelDescription = {
      input:
        embedding !== null
          ? { kind: 'embedding', vocabulary: embedding.dims[0], width: embedding.dims[1] }
          : { kind: 'values', width: layers.length > 0 ? (tensors.find((t) => t.name.endsWith('.input'))?.shape[0] ?? 0) : 0 },
      layers,
      ...(readout !== null ? { readout: { width: readout.width } } : {}),
    };
    const model = this.model;
    return {
      description,
      tensors,
      binding: {
        input: { name: this.inputName, kind: this.inputKind },
        layout: this.layout,
        lengths: this.lengths,
        initialState: this.initialState,
        output: { name: currentValue, axes: currentValue === '' ? [] : (this.current as Axes).labels },
        states: this.states,
        outputFunction: this.outputFunction,
        opset: model.opsets.find((o) => o.domain === '' || o.domain === 'ai.onnx')?.version ?? 0,
        producer: model.producerName,
      },
      metadata: carriedMetadata(model),
    };
  }
}

/** The weft metadata an ONNX file carries (metadata_props `weft.metadata`), or an empty object. */
function carriedMetadata(model: OnnxModel): Record<string, unknown> {
  const carried = model.metadata['weft.metadata'];
  if (carried === undefined) return {};
  try {
    const parsed = JSON.parse(carried) as unknown;
    if (typeof parsed === 'object' && parsed !== null && !Array.isArray(parsed)) return parsed as Record<string, unknown>;
  } catch {
    fail('bad_data', 'metadata_props (weft.metadata)', 'JSON text of an object', carried.slice(0, 60));
  }
  return {};
}

/** The readout bias from input `slot` of a node: `width` numbers (a constant of that many, its last axis `width`). */
function biasOf(
  node: OnnxNode,
  index: number,
  slot: number,
  width: number,
  constant: (node: OnnxNode, index: number, slot: number, what: string) => OnnxTensor,
): Float32Array {
  const bias = constant(node, index, slot, 'the readout bias');
  const count = bias.dims.reduce((n, d) => n * d, 1);
  if (count !== width || bias.dims[bias.dims.length - 1] !== width)
    fail('bad_data', `${nodeLabel(node, index)}.input[${slot}] ("${node.inputs[slot]}")`, `a bias of ${width} values`, JSON.stringify(bias.dims));
  return Float32Array.from(bias.values as Float32Array);
}
