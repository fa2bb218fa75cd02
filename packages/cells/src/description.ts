/**
 * The model description: a plain JSON object from which a model with fresh parameters is built, and which the
 * weight file carries. Checking collects every problem with its JSON path before throwing.
 *
 *   {
 *     "input":   { "kind": "embedding", "vocabulary": 64, "width": 32 }   (token ids in)
 *              | { "kind": "values", "width": 3 },                         (numbers in)
 *     "layers":  [ { "cell": "lstm", "hidden": 128, "bidirectional": false, "peepholes": false, "forgetBias": 1 },
 *                  { "cell": "gru", "hidden": 64, "resetAfterProduct": true },
 *                  { "cell": "plain", "hidden": 32, "activation": "relu" } ],
 *     "dropout": 0.1,                    (between layers, training only; default 0)
 *     "readout": { "width": 64 }         (an affine map of the last layer's outputs; absent or null for none)
 *   }
 */
import { WeftError, isRecord } from '@weft/core/base';
import type { Problem } from '@weft/core/base';
import { isNamespacedKind, planOf } from './plans/index.js';
import { plainPlan } from './plans/plain.js';

/** The cells weft builds itself, by their word in a description. */
export type BuiltInCellKind = 'lstm' | 'gru' | 'plain';

/** Inputs that are token ids, looked up in a trained embedding table. */
export interface EmbeddingInput {
  /** Marks token-id input. */
  readonly kind: 'embedding';
  /** How many distinct tokens there are (ids run from 0 to vocabulary − 1). */
  readonly vocabulary: number;
  /** Width of each token's embedding vector, the first layer's input width. */
  readonly width: number;
}

/** Inputs that are numbers: `width` values per step. */
export interface ValuesInput {
  /** Marks numeric input. */
  readonly kind: 'values';
  /** Values per step (features). */
  readonly width: number;
}

/** One recurrent layer of a model description. */
export interface LayerDescription {
  /** `lstm`, `gru`, `plain`, or the kind of a cell registered with the builder. */
  readonly cell: string;
  /** Hidden size of the layer's cell (per direction). */
  readonly hidden: number;
  /** Run a second cell backward in time and join both outputs (width 2 × hidden); default false. */
  readonly bidirectional?: boolean;
  /**
   * Run the layer's one cell backward in time only (each row from its last valid step to its first; outputs put back
   * in time order), its parameters named `backward`; default false. Not with `bidirectional`.
   */
  readonly reverse?: boolean;
  /** LSTM only. */
  readonly peepholes?: boolean;
  /** LSTM only. */
  readonly forgetBias?: number;
  /** GRU only. */
  readonly resetAfterProduct?: boolean;
  /** Plain only: `tanh` or `relu`. */
  readonly activation?: 'tanh' | 'relu';
}

/** The affine map from the last layer's output to the model's output at each step. */
export interface ReadoutDescription {
  /** Output width: classes (or tokens) for classification, values for forecasting. */
  readonly width: number;
}

/** A sequence model as plain data (JSON): what a weight file stores and `buildModel` builds. */
export interface ModelDescription {
  /** What the model reads at each step. */
  readonly input: EmbeddingInput | ValuesInput;
  /** The recurrent layers, first to last (stacked: each reads the one before). */
  readonly layers: readonly LayerDescription[];
  /** Dropout rate between layers and before the readout while training, in [0, 1); default 0. */
  readonly dropout?: number;
  /** The readout; absent or null to output the last layer's states. */
  readonly readout?: ReadoutDescription | null;
}

const everyLayer = ['cell', 'hidden', 'bidirectional', 'reverse'];
const layerKeys: Record<string, readonly string[]> = {
  lstm: [...everyLayer, 'peepholes', 'forgetBias'],
  gru: [...everyLayer, 'resetAfterProduct'],
  plain: [...everyLayer, 'activation'],
};

/**
 * The largest hidden size of a layer. The one bound on a hidden size, checked by `hiddenProblem` wherever one
 * enters: a model description (built, or read from a weight file), a cell's options, `weft train --hidden`.
 */
export const MAX_HIDDEN = 4096;

/** What is wrong with `value` as a hidden size (the words of the expected value), or null when it is one. */
export function hiddenProblem(value: unknown): string | null {
  return typeof value === 'number' && Number.isInteger(value) && value >= 1 && value <= MAX_HIDDEN ? null : `a whole number from 1 to ${MAX_HIDDEN}`;
}

/** Most layers a description may have, and most parameters its model may hold. */
export const MAX_LAYERS = 256;
export const MAX_PARAMETERS = 100_000_000;

function describe(value: unknown): string {
  if (value === undefined) return 'nothing';
  if (Array.isArray(value)) return `an array of ${value.length}`;
  const text = JSON.stringify(value) ?? String(value);
  // A value from a file can be huge; the message shows its start and its length.
  return text.length > 120 ? `${text.slice(0, 120)}… (${text.length} characters)` : text;
}

/**
 * Every problem with a description, each with its path (`description.layers[1].cell`). `customKinds` are the
 * cell kinds registered with the builder besides the built-in ones.
 */
export function describeProblems(value: unknown, path = 'description', customKinds: readonly string[] = []): Problem[] {
  const problems: Problem[] = [];
  const add = (where: string, expected: string, received: unknown): void => {
    problems.push({ code: 'invalid_option', path: where, expected, received: describe(received) });
  };
  const whole = (where: string, v: unknown): void => {
    if (typeof v !== 'number' || !Number.isInteger(v) || v < 1 || v > 1_000_000) add(where, 'a whole number from 1 to 1000000', v);
  };
  if (!isRecord(value)) {
    add(path, 'an object with input and layers', value);
    return problems;
  }
  for (const key of Object.keys(value)) {
    const fields = ['input', 'layers', 'dropout', 'readout'];
    if (!fields.includes(key)) add(`${path}.${key}`, `no such field (${fields.join(', ')})`, value[key]);
  }
  const input = value.input;
  if (!isRecord(input)) {
    add(`${path}.input`, "an object with kind 'embedding' or 'values'", input);
  } else if (input.kind === 'embedding') {
    whole(`${path}.input.vocabulary`, input.vocabulary);
    whole(`${path}.input.width`, input.width);
  } else if (input.kind === 'values') {
    whole(`${path}.input.width`, input.width);
  } else {
    add(`${path}.input.kind`, "'embedding' or 'values'", input.kind);
  }
  const layers = value.layers;
  if (!Array.isArray(layers) || layers.length === 0) {
    add(`${path}.layers`, 'a non-empty array of layers', layers);
  } else if (layers.length > MAX_LAYERS) {
    add(`${path}.layers`, `at most ${MAX_LAYERS} layers`, layers);
  } else {
    layers.forEach((layer: unknown, i: number) => {
      const where = `${path}.layers[${i}]`;
      if (!isRecord(layer)) {
        add(where, 'an object with cell and hidden', layer);
        return;
      }
      const kind = layer.cell;
      const known = typeof kind === 'string' && (Object.prototype.hasOwnProperty.call(layerKeys, kind) || customKinds.includes(kind));
      if (!known) {
        const own = typeof kind === 'string' && isNamespacedKind(kind) ? ` (${kind} is a cell of your own: give its plan, plans: { '${kind}': … })` : '';
        add(`${where}.cell`, `one of ${[...Object.keys(layerKeys), ...customKinds].map((k) => `'${k}'`).join(', ')}${own}`, kind);
      }
      const hidden = hiddenProblem(layer.hidden);
      if (hidden !== null) add(`${where}.hidden`, hidden, layer.hidden);
      if (layer.bidirectional !== undefined && typeof layer.bidirectional !== 'boolean') add(`${where}.bidirectional`, 'true or false', layer.bidirectional);
      if (layer.reverse !== undefined && typeof layer.reverse !== 'boolean') add(`${where}.reverse`, 'true or false', layer.reverse);
      if (layer.reverse === true && layer.bidirectional === true) add(`${where}.reverse`, 'not with bidirectional', true);
      if (typeof kind === 'string' && Object.prototype.hasOwnProperty.call(layerKeys, kind)) {
        for (const key of Object.keys(layer)) {
          if (!layerKeys[kind].includes(key)) add(`${where}.${key}`, `no such field for a ${kind} layer (${layerKeys[kind].join(', ')})`, layer[key]);
        }
      }
      if (layer.peepholes !== undefined && typeof layer.peepholes !== 'boolean') add(`${where}.peepholes`, 'true or false', layer.peepholes);
      if (layer.forgetBias !== undefined && (typeof layer.forgetBias !== 'number' || !Number.isFinite(layer.forgetBias))) {
        add(`${where}.forgetBias`, 'a finite number', layer.forgetBias);
      }
      if (layer.resetAfterProduct !== undefined && typeof layer.resetAfterProduct !== 'boolean') add(`${where}.resetAfterProduct`, 'true or false', layer.resetAfterProduct);
      if (layer.activation !== undefined && layer.activation !== 'tanh' && layer.activation !== 'relu') add(`${where}.activation`, "'tanh' or 'relu'", layer.activation);
    });
  }
  if (value.dropout !== undefined && !(typeof value.dropout === 'number' && value.dropout >= 0 && value.dropout < 1)) {
    add(`${path}.dropout`, 'a number in [0, 1)', value.dropout);
  }
  const readout = value.readout;
  if (readout !== undefined && readout !== null) {
    if (!isRecord(readout)) add(`${path}.readout`, 'an object with width, or null', readout);
    else whole(`${path}.readout.width`, readout.width);
  }
  if (problems.length === 0) {
    // Sizes that are each fine can still multiply into a model no machine holds: count before anything is made.
    const count = parameterCount(value as unknown as ModelDescription);
    if (count > MAX_PARAMETERS) add(path, `a model of at most ${MAX_PARAMETERS} parameters`, `${count} parameters`);
  }
  return problems;
}

/** Parameters of a checked description (cells by their plans, an unknown kind as a plain cell); nothing is made. */
function parameterCount(description: ModelDescription): number {
  let total = description.input.kind === 'embedding' ? description.input.vocabulary * description.input.width : 0;
  let width = description.input.width;
  for (const layer of description.layers) {
    const h = layer.hidden;
    const directions = layer.bidirectional === true ? 2 : 1;
    const plan = planOf(layer.cell) ?? plainPlan;
    for (const p of plan.parameters({ inputWidth: width, hidden: h, layer })) total += directions * p.shape.reduce((a, b) => a * b, 1);
    width = h * directions;
  }
  if (description.readout !== undefined && description.readout !== null) total += (width + 1) * description.readout.width;
  return total;
}

/** Returns the description typed, or throws one WeftError listing every problem. */
export function checkDescription(value: unknown, path = 'description', customKinds: readonly string[] = []): ModelDescription {
  const problems = describeProblems(value, path, customKinds);
  if (problems.length > 0) throw new WeftError(problems);
  return value as ModelDescription;
}

/**
 * An encoder-decoder (Sutskever, Vinyals & Le 2014; Cho et al. 2014): the encoder reads the source tokens, and its
 * final state is the decoder's initial state; the decoder reads the target tokens shifted right (starting with a
 * start token) and predicts the next target token through its readout. Encoder and decoder layers match one to one
 * in cell kind and hidden size; decoder layer i starts from the final state of encoder layer i's last cell (its
 * backward cell when the layer is bidirectional or reverse: that cell ends on the first source token, as Bahdanau
 * et al. 2015 start the decoder from the backward state there). Decoder layers run forward in time only; both inputs
 * are embeddings. `reverseSource` feeds each source sequence reversed within its length (Sutskever et al. 2014, §3.3).
 * `attention` (Luong, Pham & Manning 2015, global attention) lets each decoding step look at every encoder output:
 * see `attend` and EncoderDecoderModel.
 *
 *   { "kind": "encoder-decoder", "reverseSource": true, "attention": "general",
 *     "encoder": { "input": {embedding}, "layers": [...] },
 *     "decoder": { "input": {embedding}, "layers": [...], "readout": { "width": V } } }
 */
export interface EncoderDecoderDescription {
  /** Marks an encoder-decoder. */
  readonly kind: 'encoder-decoder';
  /** Reads the source sequence; its final state starts the decoder. */
  readonly encoder: ModelDescription;
  /** Generates the target sequence, one token per step, from the encoder's final state. */
  readonly decoder: ModelDescription;
  /** Feed the source to the encoder in reverse order (Sutskever, Vinyals & Le 2014); default false. */
  readonly reverseSource?: boolean;
  /**
   * How each decoding step scores the encoder's outputs: `dot` (h·h̄; the encoder's output width must equal the
   * decoder's hidden size), `general` (h·W h̄), `additive` (v·tanh(W h + U h̄)); absent or null for no attention.
   */
  readonly attention?: AttentionForm | null;
}

/** The score functions of attention (Luong et al. 2015, eq. 8; `additive` is Bahdanau et al. 2015's). */
export type AttentionForm = 'dot' | 'general' | 'additive';

/** The attention forms, as a description spells them. */
export const ATTENTION_FORMS: readonly AttentionForm[] = ['dot', 'general', 'additive'];

/** Either kind of model description. */
export type AnyModelDescription = ModelDescription | EncoderDecoderDescription;

/** True when `value` is (shaped like) an encoder-decoder description. */
export function isEncoderDecoder(value: unknown): value is EncoderDecoderDescription {
  return isRecord(value) && value.kind === 'encoder-decoder';
}

/** Problems with either kind of description (a sequence model, or an encoder-decoder). */
export function describeAnyProblems(value: unknown, path = 'description', customKinds: readonly string[] = []): Problem[] {
  if (!isEncoderDecoder(value)) return describeProblems(value, path, customKinds);
  const problems: Problem[] = [];
  const v = value as unknown as Record<string, unknown>;
  const add = (where: string, expected: string, received: unknown): void => {
    problems.push({ code: 'invalid_option', path: `${path}${where}`, expected, received: describe(received) });
  };
  const fields = ['kind', 'encoder', 'decoder', 'reverseSource', 'attention'];
  for (const key of Object.keys(v)) if (!fields.includes(key)) add(`.${key}`, `no such field (${fields.join(', ')})`, v[key]);
  if (v.reverseSource !== undefined && typeof v.reverseSource !== 'boolean') add('.reverseSource', 'true or false', v.reverseSource);
  const attention = v.attention;
  if (attention !== undefined && attention !== null && !ATTENTION_FORMS.includes(attention as AttentionForm)) add('.attention', `${ATTENTION_FORMS.map((f) => `'${f}'`).join(', ')} or null`, attention);
  const encoder = describeProblems(v.encoder, `${path}.encoder`, customKinds);
  const decoder = describeProblems(v.decoder, `${path}.decoder`, customKinds);
  problems.push(...encoder, ...decoder);
  if (encoder.length > 0 || decoder.length > 0) return problems;
  const e = v.encoder as ModelDescription;
  const d = v.decoder as ModelDescription;
  if (e.input.kind !== 'embedding') add('.encoder.input.kind', "'embedding'", e.input.kind);
  if (d.input.kind !== 'embedding') add('.decoder.input.kind', "'embedding'", d.input.kind);
  if (e.readout !== undefined && e.readout !== null) add('.encoder.readout', 'none (the decoder reads out)', e.readout);
  if (d.readout === undefined || d.readout === null) add('.decoder.readout', '{ "width": target vocabulary }', d.readout);
  if (e.layers.length !== d.layers.length) {
    add('.decoder.layers', `${e.layers.length} layers (one per encoder layer)`, d.layers);
    return problems;
  }
  e.layers.forEach((layer, i) => {
    const other = d.layers[i];
    if (layer.cell !== other.cell || layer.hidden !== other.hidden) problems.push({ code: 'invalid_option', path: `${path}.decoder.layers[${i}]`, expected: `a ${layer.cell} layer of ${layer.hidden} (as the encoder's)`, received: `${other.cell} of ${other.hidden}` });
    if (other.bidirectional === true || other.reverse === true) add(`.decoder.layers[${i}]`, 'a layer that reads forward (it decodes one step at a time)', other);
  });
  const top = e.layers[e.layers.length - 1];
  const width = top.hidden * (top.bidirectional === true ? 2 : 1);
  const hidden = d.layers[d.layers.length - 1].hidden;
  if (attention === 'dot' && width !== hidden) add('.attention', `'general' or 'additive' (dot needs the encoder's output width ${width} to equal the decoder's hidden size ${hidden})`, attention);
  return problems;
}
