/**
 * weft to ONNX: a sequence model (built-in cells, stacked, bidirectional or reverse, embedding, readout) as an ONNX model of the
 * operators LSTM, GRU, RNN, Gather, Transpose, Reshape, Squeeze, MatMul and Add (a forward layer of a cell of your own:
 * a Scan of its plan's step, plan-scan.ts) at operator set 22 (the newest that
 * defines them as used here, all at this form since set 22 or earlier) and IR version 10, the version that goes
 * with set 22. Inputs and outputs are named: `input` [steps, batch, width] (FLOAT) or `tokens` [steps, batch]
 * (INT64), optionally `lengths` [batch] (INT32) for ragged batches, and `output` [steps, batch, width]. The weight
 * file's description and metadata travel in `metadata_props` (`weft.model`, `weft.metadata`), so importing the file
 * again gives the same model and metadata.
 *
 * Mapping in mapping.ts; our bias goes to Wb with Rb zero (GRU with the reset after the product: the candidate's
 * recurrent bias goes to its Rb block), so every weight survives the round trip bit for bit.
 */
import { fail } from '@weft/core';
import { checkPlans, isEncoderDecoder, layerDirections, layerPath, planOf, traceStep } from '@weft/cells/description';
import type { CellPlans, LayerDescription, ModelDescription } from '@weft/cells/description';
import type { WeightFile } from '../weight-file.js';
import { gateBlocks, toOnnxBlocks } from './mapping.js';
import type { OnnxModel, OnnxNode, OnnxTensor } from './model.js';
import { ONNX_FLOAT, ONNX_INT32, ONNX_INT64 } from './model.js';
import type { GraphWriter } from './plan-scan.js';
import { writeScanLayer } from './plan-scan.js';

/** The operator set weft writes. */
export const ONNX_OPSET = 22;
/** The IR version weft writes: the one that goes with operator set 22. */
export const ONNX_IR_VERSION = 10;

/** How `exportOnnx` writes the model. */
export interface OnnxExportOptions {
  /** Add a `lengths` input [batch] (INT32) feeding every layer's `sequence_lens`, for ragged batches. Default false. */
  readonly lengths?: boolean;
  /** The version string written as `producer_version`. */
  readonly producerVersion?: string;
  /** Plans of the file's cells that are not built in, by kind: each such layer is written as a Scan (plan-scan.ts). */
  readonly plans?: CellPlans;
}

/** A layer of a cell of your own as a Scan, after the checks that it can be one; returns its output's name. */
function ownCellLayer(
  layer: LayerDescription,
  i: number,
  width: number,
  input: string,
  options: OnnxExportOptions,
  take: (name: string) => Float32Array,
  graph: GraphWriter,
): string {
  const where = `model.layers[${i}]`;
  const plan = planOf(layer.cell, checkPlans(options.plans, 'exportOnnx.plans'));
  if (plan === null)
    fail(
      'invalid_option',
      `${where}.cell`,
      `a built-in cell ('lstm', 'gru', 'plain') or one whose plan is given (exportOnnx plans: { '${layer.cell}': … })`,
      JSON.stringify(layer.cell),
    );
  if (layer.bidirectional === true || layer.reverse === true)
    fail(
      'invalid_option',
      where,
      `a forward layer (a cell of your own is written as an ONNX Scan, which runs forward only)`,
      layer.bidirectional === true ? 'bidirectional' : 'reverse',
    );
  if (options.lengths === true)
    fail(
      'invalid_option',
      'exportOnnx.lengths',
      `no lengths input (layer ${i}'s cell of your own is written as an ONNX Scan, which has no sequence lengths)`,
      'true',
    );
  const program = traceStep(plan, { inputWidth: width, hidden: layer.hidden, layer }, layerPath(i, 'forward'));
  return writeScanLayer(program, `layers[${i}]`, layerPath(i, 'forward'), input, take, graph);
}

/**
 * A built-in layer as the ONNX operator of its cell (LSTM, GRU or RNN), its weights turned into ONNX's gate order,
 * and its output as [steps, batch, directions·hidden]; returns the output's name.
 */
function builtInLayer(
  kind: 'lstm' | 'gru' | 'plain',
  layer: LayerDescription,
  i: number,
  width: number,
  current: string,
  options: OnnxExportOptions,
  take: (name: string) => Float32Array,
  { floats, int64s, node }: GraphWriter,
): string {
  const hidden = layer.hidden;
  const gates = kind === 'lstm' ? 4 : kind === 'gru' ? 3 : 1;
  const directions = layer.bidirectional === true ? 2 : 1;
  const w = new Float32Array(directions * gates * hidden * width);
  const r = new Float32Array(directions * gates * hidden * hidden);
  const b = new Float32Array(directions * 2 * gates * hidden);
  const p = kind === 'lstm' && layer.peepholes === true ? new Float32Array(directions * 3 * hidden) : null;
  const blocks = gateBlocks[kind];
  const cells = layerDirections(layer);
  for (let d = 0; d < directions; d++) {
    const prefix = layerPath(i, cells[d]);
    toOnnxBlocks(w, d * gates * hidden * width, take(`${prefix}.input`), gates * hidden, width, hidden, blocks);
    const bias = take(`${prefix}.bias`);
    blocks.forEach((onnxBlock, block) => {
      for (let j = 0; j < hidden; j++) b[d * 2 * gates * hidden + onnxBlock * hidden + j] = bias[block * hidden + j];
    });
    if (kind === 'gru') {
      toOnnxBlocks(r, d * gates * hidden * hidden, take(`${prefix}.recurrent`), 2 * hidden, hidden, hidden, [0, 1]);
      toOnnxBlocks(r, d * gates * hidden * hidden, take(`${prefix}.recurrentCandidate`), hidden, hidden, hidden, [2]);
      if (layer.resetAfterProduct === true) b.set(take(`${prefix}.recurrentCandidateBias`), d * 2 * gates * hidden + 5 * hidden);
    } else {
      toOnnxBlocks(r, d * gates * hidden * hidden, take(`${prefix}.recurrent`), gates * hidden, hidden, hidden, blocks);
    }
    if (p !== null) {
      const peephole = take(`${prefix}.peephole`);
      // Ours [i, f, o] to ONNX [i, o, f].
      for (let j = 0; j < hidden; j++) {
        p[d * 3 * hidden + j] = peephole[j];
        p[d * 3 * hidden + hidden + j] = peephole[2 * hidden + j];
        p[d * 3 * hidden + 2 * hidden + j] = peephole[hidden + j];
      }
    }
  }
  const name = `layers[${i}]`;
  const args = [
    current,
    floats(`${name}.W`, [directions, gates * hidden, width], w),
    floats(`${name}.R`, [directions, gates * hidden, hidden], r),
    floats(`${name}.B`, [directions, 2 * gates * hidden], b),
  ];
  if (options.lengths === true || p !== null) args.push(options.lengths === true ? 'lengths' : '');
  if (p !== null) args.push('', '', floats(`${name}.P`, [directions, 3 * hidden], p));
  const attributes: OnnxNode['attributes'][number][] = [
    { name: 'hidden_size', type: 2, i: hidden },
    { name: 'direction', type: 3, s: directions === 2 ? 'bidirectional' : layer.reverse === true ? 'reverse' : 'forward' },
  ];
  if (kind === 'gru') attributes.push({ name: 'linear_before_reset', type: 2, i: layer.resetAfterProduct === true ? 1 : 0 });
  if (kind === 'plain')
    attributes.push({ name: 'activations', type: 8, strings: Array.from({ length: directions }, () => (layer.activation === 'relu' ? 'Relu' : 'Tanh')) });
  node(kind === 'lstm' ? 'LSTM' : kind === 'gru' ? 'GRU' : 'RNN', name, args, [`${name}.Y`], attributes);
  // Y [steps, directions, batch, hidden] → [steps, batch, directions·hidden]: ours is [forward | backward].
  if (directions === 1) {
    node('Squeeze', `${name}.squeeze`, [`${name}.Y`, int64s(`${name}.directionAxis`, [1])], [`${name}.output`]);
  } else {
    node('Transpose', `${name}.transpose`, [`${name}.Y`], [`${name}.byStep`], [{ name: 'perm', type: 7, ints: [0, 2, 1, 3] }]);
    node('Reshape', `${name}.join`, [`${name}.byStep`, int64s(`${name}.joinedShape`, [0, 0, -1])], [`${name}.output`]);
  }
  return `${name}.output`;
}

/** A weight file's model as an ONNX model (see above). */
export function exportOnnx(file: WeightFile, options: OnnxExportOptions = {}): OnnxModel {
  if (isEncoderDecoder(file.model)) fail('invalid_option', 'model.kind', 'a sequence model (encoder-decoders are not exported to ONNX)', '"encoder-decoder"');
  const description = file.model as ModelDescription;
  const byName = new Map(file.tensors.map((t) => [t.name, t]));
  const take = (name: string): Float32Array => {
    const t = byName.get(name);
    if (t === undefined) fail('bad_weight_file', `tensors (${name})`, `a tensor named ${name}`, 'none');
    return Float32Array.from(t.values);
  };
  const initializers: OnnxTensor[] = [];
  const nodes: OnnxNode[] = [];
  const floats = (name: string, dims: number[], values: Float32Array): string => {
    initializers.push({ name, dataType: ONNX_FLOAT, dims, values });
    return name;
  };
  const int64s = (name: string, values: number[]): string => {
    initializers.push({ name, dataType: ONNX_INT64, dims: [values.length], values });
    return name;
  };
  const node = (opType: string, name: string, inputs: string[], outputs: string[], attributes: OnnxNode['attributes'] = []): void => {
    nodes.push({ name, opType, domain: '', inputs, outputs, attributes });
  };
  const inputs = [];
  let current: string;
  let width = description.input.width;
  if (description.input.kind === 'embedding') {
    inputs.push({ name: 'tokens', elementType: ONNX_INT64, dims: ['steps', 'batch'] });
    const table = floats('embedding.table', [description.input.vocabulary, description.input.width], take('embedding.table'));
    node('Gather', 'embedding', [table, 'tokens'], ['embedding.output'], [{ name: 'axis', type: 2, i: 0 }]);
    current = 'embedding.output';
  } else {
    inputs.push({ name: 'input', elementType: ONNX_FLOAT, dims: ['steps', 'batch', width] });
    current = 'input';
  }
  if (options.lengths === true) inputs.push({ name: 'lengths', elementType: ONNX_INT32, dims: ['batch'] });
  const graph: GraphWriter = { floats, int64s, node };
  description.layers.forEach((layer, i) => {
    const kind = layer.cell;
    if (kind !== 'lstm' && kind !== 'gru' && kind !== 'plain') {
      current = ownCellLayer(layer, i, width, current, options, take, graph);
      width = layer.hidden;
      return;
    }
    current = builtInLayer(kind, layer, i, width, current, options, take, graph);
    width = (layer.bidirectional === true ? 2 : 1) * layer.hidden;
  });
  if (description.readout !== undefined && description.readout !== null) {
    const out = description.readout.width;
    node('MatMul', 'readout', [current, floats('readout.weights', [width, out], take('readout.weights'))], ['readout.product']);
    node('Add', 'readout.bias', ['readout.product', floats('readout.bias', [out], take('readout.bias'))], ['output']);
    width = out;
  } else {
    node('Identity', 'output', [current], ['output']);
  }
  return {
    irVersion: ONNX_IR_VERSION,
    opsets: [{ domain: '', version: ONNX_OPSET }],
    producerName: 'weft',
    producerVersion: options.producerVersion ?? '',
    graph: { name: 'weft', nodes, initializers, inputs, outputs: [{ name: 'output', elementType: ONNX_FLOAT, dims: ['steps', 'batch', width] }] },
    metadata: { 'weft.model': JSON.stringify(description), 'weft.metadata': JSON.stringify(file.metadata) },
  };
}
