/**
 * The layout of a described model: every parameter's name and shape, in the model's parameter order, and each
 * layer's input and output width, computed from the description alone (nothing is allocated). One function serves
 * model building (its parameters are checked against this in the cells tests), the weight-file loaders (a file is
 * checked against it before any model is built) and the inference runtime (which takes its tensors by it).
 *
 * Each cell's parameters come from its plan (plans/); for the built-in cells, with input width I and hidden size H:
 *   lstm   input [I, 4H], recurrent [H, 4H], bias [4H], peephole [3H] (with peepholes)
 *   gru    input [I, 3H], bias [3H], recurrent [H, 2H], recurrentCandidate [H, H],
 *          recurrentCandidateBias [H] (with resetAfterProduct)
 *   plain  input [I, H], recurrent [H, H], bias [H]
 * around them `embedding.table` [vocabulary, width] first and `readout.weights` [F, W], `readout.bias` [W] last,
 * where F is the last layer's output width (2H for a bidirectional layer). Names are `layers[<i>].<direction>.<name>`,
 * the same path that messages use.
 */
import type { AnyModelDescription, EncoderDecoderDescription, LayerDescription, ModelDescription } from './description.js';
import { isEncoderDecoder } from './description.js';
import type { CellPlans } from './plans/index.js';
import { planOf } from './plans/index.js';
import type { ParameterLayout } from './plans/plan.js';

export type { ParameterLayout } from './plans/plan.js';

/** The widths of one layer, as a description implies them. */
export interface LayerLayout {
  /** Width of the layer's input per step: the embedding or value width, or the previous layer's output width. */
  readonly inputWidth: number;
  /** hidden × directions. */
  readonly outputWidth: number;
}

/** Everything a model description implies about sizes, without building the model. */
export interface ModelLayout {
  /** Every parameter, in the order of `SequenceModel.parameters()` and of weight files. */
  readonly parameters: readonly ParameterLayout[];
  /** Each layer's widths, first to last. */
  readonly layers: readonly LayerLayout[];
  /** Width of what the model outputs: the readout's, else the last layer's. */
  readonly outputWidth: number;
  /** False when no plan knows a layer's cell (a maker's cell: its parameters are then the cell's own business). */
  readonly builtIn: boolean;
}

/** The cells a layer runs, by the direction each reads: forward, backward (a reverse layer), or both. */
export function layerDirections(layer: LayerDescription): readonly ('forward' | 'backward')[] {
  if (layer.bidirectional === true) return ['forward', 'backward'];
  return layer.reverse === true ? ['backward'] : ['forward'];
}

/** The path of one direction's cell of layer `index`, in parameter names and messages alike: `layers[0].forward`. */
export function layerPath(index: number, direction: 'forward' | 'backward'): string {
  return `layers[${index}].${direction}`;
}

/**
 * The parameters of one cell of `layer` with `inputWidth` inputs, by their names within the cell, from its plan
 * (built in, or one of `plans`); null when no plan knows the cell's kind (a cell made by a maker of your own).
 */
export function cellLayout(layer: LayerDescription, inputWidth: number, plans?: CellPlans): readonly ParameterLayout[] | null {
  const plan = planOf(layer.cell, plans);
  return plan === null ? null : plan.parameters({ inputWidth, hidden: layer.hidden, layer });
}

/** The layout of a checked sequence-model description (see checkDescription). */
export function modelLayout(description: ModelDescription, plans?: CellPlans): ModelLayout {
  const parameters: ParameterLayout[] = [];
  const layers: LayerLayout[] = [];
  let builtIn = true;
  const input = description.input;
  if (input.kind === 'embedding') parameters.push({ name: 'embedding.table', shape: [input.vocabulary, input.width] });
  let width = input.width;
  description.layers.forEach((layer, i) => {
    const directions = layerDirections(layer);
    for (const direction of directions) {
      const cell = cellLayout(layer, width, plans);
      if (cell === null) builtIn = false;
      else for (const p of cell) parameters.push({ name: `${layerPath(i, direction)}.${p.name}`, shape: p.shape });
    }
    const outputWidth = layer.hidden * directions.length;
    layers.push({ inputWidth: width, outputWidth });
    width = outputWidth;
  });
  const readout = description.readout;
  if (readout !== undefined && readout !== null) {
    parameters.push({ name: 'readout.weights', shape: [width, readout.width] }, { name: 'readout.bias', shape: [readout.width] });
    width = readout.width;
  }
  return { parameters, layers, outputWidth: width, builtIn };
}

/**
 * The attention parameters of a checked encoder-decoder description (none without attention), with E the encoder's
 * output width and D the decoder's hidden size: `attention.keys` [E, D] (W of the general form, U of the additive
 * form), `attention.query` [D, D] and `attention.vector` [D] (the additive form's W and v), and
 * `attention.combine` [E + D, D] (W_c of h̃ = tanh(W_c [c; h]), every form).
 */
export function attentionLayout(description: EncoderDecoderDescription): ParameterLayout[] {
  const form = description.attention;
  if (form === undefined || form === null) return [];
  const top = description.encoder.layers[description.encoder.layers.length - 1];
  const e = top.hidden * layerDirections(top).length;
  const d = description.decoder.layers[description.decoder.layers.length - 1].hidden;
  const list: ParameterLayout[] = [];
  if (form !== 'dot') list.push({ name: 'attention.keys', shape: [e, d] });
  if (form === 'additive') list.push({ name: 'attention.query', shape: [d, d] }, { name: 'attention.vector', shape: [d] });
  list.push({ name: 'attention.combine', shape: [e + d, d] });
  return list;
}

/**
 * The parameters of either kind of checked description (an encoder-decoder's are `encoder.…`, `decoder.…`, then
 * `attention.…`).
 */
export function parameterLayout(description: AnyModelDescription, plans?: CellPlans): Pick<ModelLayout, 'parameters' | 'builtIn'> {
  if (!isEncoderDecoder(description)) return modelLayout(description, plans);
  const encoder = modelLayout(description.encoder, plans);
  const decoder = modelLayout(description.decoder, plans);
  return {
    parameters: [
      ...encoder.parameters.map((p) => ({ name: `encoder.${p.name}`, shape: p.shape })),
      ...decoder.parameters.map((p) => ({ name: `decoder.${p.name}`, shape: p.shape })),
      ...attentionLayout(description),
    ],
    builtIn: encoder.builtIn && decoder.builtIn,
  };
}
