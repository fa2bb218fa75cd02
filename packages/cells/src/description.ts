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
import type { AttentionForm, EncoderDecoderDescription, ModelDescription } from './description-types.js';

export type {
  AnyModelDescription,
  AttentionForm,
  BuiltInCellKind,
  EmbeddingInput,
  EncoderDecoderDescription,
  LayerDescription,
  ModelDescription,
  ReadoutDescription,
  ValuesInput,
} from './description-types.js';

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
      const known = typeof kind === 'string' && (Object.hasOwn(layerKeys, kind) || customKinds.includes(kind));
      if (!known) {
        const own = typeof kind === 'string' && isNamespacedKind(kind) ? ` (${kind} is a cell of your own: give its plan, plans: { '${kind}': … })` : '';
        add(`${where}.cell`, `one of ${[...Object.keys(layerKeys), ...customKinds].map((k) => `'${k}'`).join(', ')}${own}`, kind);
      }
      const hidden = hiddenProblem(layer.hidden);
      if (hidden !== null) add(`${where}.hidden`, hidden, layer.hidden);
      if (layer.bidirectional !== undefined && typeof layer.bidirectional !== 'boolean') add(`${where}.bidirectional`, 'true or false', layer.bidirectional);
      if (layer.reverse !== undefined && typeof layer.reverse !== 'boolean') add(`${where}.reverse`, 'true or false', layer.reverse);
      if (layer.reverse === true && layer.bidirectional === true) add(`${where}.reverse`, 'not with bidirectional', true);
      if (typeof kind === 'string' && Object.hasOwn(layerKeys, kind)) {
        for (const key of Object.keys(layer)) {
          if (!layerKeys[kind].includes(key)) add(`${where}.${key}`, `no such field for a ${kind} layer (${layerKeys[kind].join(', ')})`, layer[key]);
        }
      }
      if (layer.peepholes !== undefined && typeof layer.peepholes !== 'boolean') add(`${where}.peepholes`, 'true or false', layer.peepholes);
      if (layer.forgetBias !== undefined && (typeof layer.forgetBias !== 'number' || !Number.isFinite(layer.forgetBias))) {
        add(`${where}.forgetBias`, 'a finite number', layer.forgetBias);
      }
      if (layer.resetAfterProduct !== undefined && typeof layer.resetAfterProduct !== 'boolean')
        add(`${where}.resetAfterProduct`, 'true or false', layer.resetAfterProduct);
      if (layer.activation !== undefined && layer.activation !== 'tanh' && layer.activation !== 'relu')
        add(`${where}.activation`, "'tanh' or 'relu'", layer.activation);
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

/** The attention forms, as a description spells them. */
export const ATTENTION_FORMS: readonly AttentionForm[] = ['dot', 'general', 'additive'];

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
  if (attention !== undefined && attention !== null && !ATTENTION_FORMS.includes(attention as AttentionForm))
    add('.attention', `${ATTENTION_FORMS.map((f) => `'${f}'`).join(', ')} or null`, attention);
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
    if (layer.cell !== other.cell || layer.hidden !== other.hidden)
      problems.push({
        code: 'invalid_option',
        path: `${path}.decoder.layers[${i}]`,
        expected: `a ${layer.cell} layer of ${layer.hidden} (as the encoder's)`,
        received: `${other.cell} of ${other.hidden}`,
      });
    if (other.bidirectional === true || other.reverse === true)
      add(`.decoder.layers[${i}]`, 'a layer that reads forward (it decodes one step at a time)', other);
  });
  const top = e.layers[e.layers.length - 1];
  const width = top.hidden * (top.bidirectional === true ? 2 : 1);
  const hidden = d.layers[d.layers.length - 1].hidden;
  if (attention === 'dot' && width !== hidden)
    add('.attention', `'general' or 'additive' (dot needs the encoder's output width ${width} to equal the decoder's hidden size ${hidden})`, attention);
  return problems;
}
