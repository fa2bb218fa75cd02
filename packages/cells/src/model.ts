/**
 * A model built from a description (description.ts): an input stage (an embedding table for token ids, or
 * numbers as they are), a stack of recurrent layers (each one direction or both, with dropout between layers in
 * training), and an optional affine readout. Parameters have stable names:
 *
 *   embedding.table                        [vocabulary, width]
 *   layers[<i>].forward.<name>             the forward cell's parameters (`input`, `recurrent`, `bias`, …)
 *   layers[<i>].backward.<name>            the backward cell's, for a bidirectional layer
 *   readout.weights [features, width], readout.bias [width]
 *
 * Initialisation draws from one seeded generator in this order: embedding, layers (forward cell, then backward
 * cell), readout. Embedding entries are N(0, 1/width); readout weights Glorot-uniform, readout bias 0.
 */
import { Random, add, dropout, fail, formatShape, gatherRows, matmul, randomNormal, reshape, trainable } from '@weft/core';
import type { DType, Tape, Tensor } from '@weft/core';
import type { CellMode, NamedParameter, RecurrentCell } from './cell.js';
import type { ModelDescription } from './description.js';
import { checkDescription } from './description.js';
import { GruCell } from './gru.js';
import { fillUniform, glorotBound } from './init.js';
import { checkLengths, runBidirectional, runReversed, runSequence } from './layer.js';
import { LstmCell } from './lstm.js';
import { PlainCell } from './plain.js';
import { layerDirections, layerPath } from './layout.js';
import { createParameter } from './recurrence.js';
import { PlanCell } from './plan-cell.js';
import { checkPlans } from './plans/index.js';
import type { CellPlans } from './plans/index.js';
import { zeroBeyondLengths } from './sequence-ops.js';
import type { BuildOptions, CellMaker, CellRequest, ModelLayer, ModelRunOptions, ModelRunResult, ModelStateSlot, TokenBatch } from './model-types.js';

export type { BuildOptions, CellMaker, CellRequest, ModelLayer, ModelRunOptions, ModelRunResult, ModelStateSlot, TokenBatch } from './model-types.js';

/**
 * A stack of recurrent layers with an optional embedding before and readout after, built from a `ModelDescription` by
 * `buildModel`.
 */
export class SequenceModel {
  /** The checked description it was built from. */
  readonly description: ModelDescription;
  /** Element type of every parameter. */
  readonly dtype: DType;
  /** The embedding table [vocabulary, width] for token input; null for numeric input. */
  readonly embedding: Tensor | null;
  /** The recurrent layers, first to last. */
  readonly layers: readonly ModelLayer[];
  /** The readout matrix [last layer width, output width]; null without a readout. */
  readonly readoutWeights: Tensor | null;
  /** The readout bias [output width]; null without a readout. */
  readonly readoutBias: Tensor | null;
  /** Width of each step's output: the readout's, else the last layer's (hidden × directions). */
  readonly outputWidth: number;

  constructor(description: unknown, options: BuildOptions = {}) {
    const custom = options.cells ?? {};
    const plans = checkPlans(options.plans, 'buildModel.plans');
    const checked = checkDescription(description, 'description', [...Object.keys(custom), ...Object.keys(plans)]);
    const dtype = options.dtype ?? 'f32';
    const random = new Random(options.seed ?? 0);
    const mode = options.mode ?? 'fused';
    this.description = JSON.parse(JSON.stringify(checked)) as ModelDescription;
    this.dtype = dtype;
    const input = checked.input;
    if (input.kind === 'embedding') {
      const table = randomNormal([input.vocabulary, input.width], random, 0, 1 / Math.sqrt(input.width), dtype);
      this.embedding = trainable(table, 'embedding.table');
    } else {
      this.embedding = null;
    }
    let width = input.width;
    const layers: ModelLayer[] = [];
    checked.layers.forEach((layer, i) => {
      const make = (direction: 'forward' | 'backward'): RecurrentCell => {
        const name = layerPath(i, direction);
        const request: CellRequest = { layer, inputWidth: width, hidden: layer.hidden, dtype, random, name };
        const cell = makeCell(request, custom, plans, mode);
        if (cell.inputWidth !== width || cell.dtype !== dtype) {
          fail('invalid_option', `${name}`, `a cell with inputWidth ${width} and dtype ${dtype}`, `inputWidth ${cell.inputWidth}, dtype ${cell.dtype}`);
        }
        for (const p of cell.parameters()) p.tensor.name = `${name}.${p.name}`;
        return cell;
      };
      const directions = layerDirections(layer);
      const forward = directions.includes('forward') ? make('forward') : null;
      const backward = directions.includes('backward') ? make('backward') : null;
      layers.push({ forward, backward });
      width = (forward?.hidden ?? 0) + (backward?.hidden ?? 0);
    });
    this.layers = layers;
    const readout = checked.readout;
    if (readout !== undefined && readout !== null) {
      this.readoutWeights = createParameter('readout.weights', [width, readout.width], dtype);
      fillUniform(this.readoutWeights.data, readout.width, width, 0, readout.width, glorotBound(width, readout.width), random);
      this.readoutBias = createParameter('readout.bias', [readout.width], dtype);
      this.outputWidth = readout.width;
    } else {
      this.readoutWeights = null;
      this.readoutBias = null;
      this.outputWidth = width;
    }
  }

  /** Every parameter by its stable name, in a fixed order. */
  parameters(): NamedParameter[] {
    const list: NamedParameter[] = [];
    if (this.embedding !== null) list.push({ name: 'embedding.table', tensor: this.embedding });
    this.layers.forEach((layer, i) => {
      for (const [direction, cell] of [
        ['forward', layer.forward],
        ['backward', layer.backward],
      ] as const) {
        if (cell === null) continue;
        for (const p of cell.parameters()) list.push({ name: `${layerPath(i, direction)}.${p.name}`, tensor: p.tensor });
      }
    });
    if (this.readoutWeights !== null && this.readoutBias !== null) {
      list.push({ name: 'readout.weights', tensor: this.readoutWeights }, { name: 'readout.bias', tensor: this.readoutBias });
    }
    return list;
  }

  /** The state slots of the whole model, in the order `run` takes and returns them. */
  stateSlots(): ModelStateSlot[] {
    const slots: ModelStateSlot[] = [];
    this.layers.forEach((layer, i) => {
      for (const [direction, cell] of [
        ['forward', layer.forward],
        ['backward', layer.backward],
      ] as const) {
        if (cell === null) continue;
        for (const slot of cell.state) slots.push({ ...slot, path: `${layerPath(i, direction)}.${slot.name}` });
      }
    });
    return slots;
  }

  /** Runs the model over a batch: numbers [T, B, width] for a values input, token ids for an embedding input. */
  run(tape: Tape, input: Tensor | TokenBatch, options: ModelRunOptions = {}): ModelRunResult {
    let features = this.inputFeatures(tape, input);
    const [steps, rows] = features.shape;
    const lengths = checkLengths('model', options.lengths, steps, rows);
    const slots = this.stateSlots();
    const given = options.initialState;
    if (given !== undefined && given.length !== slots.length) {
      fail('invalid_argument', 'model.initialState', `${slots.length} tensors (${slots.map((s) => s.path).join(', ')})`, `${given.length}`);
    }
    const training = options.training === true;
    const rate = this.description.dropout ?? 0;
    if (training && rate > 0 && options.random === undefined) {
      fail('invalid_option', 'model.run.random', 'a seeded Random when training with dropout', 'nothing');
    }
    const state: Tensor[] = [];
    let offset = 0;
    this.layers.forEach((layer, i) => {
      if (i > 0 && training && rate > 0) features = dropout(tape, features, rate, options.random as Random);
      const count = (layer.forward?.state.length ?? 0) + (layer.backward?.state.length ?? 0);
      const initialState = given?.slice(offset, offset + count);
      offset += count;
      const where = `layers[${i}]`;
      const result =
        layer.forward === null
          ? runReversed(tape, layer.backward as RecurrentCell, features, { lengths, initialState }, where)
          : layer.backward === null
            ? runSequence(tape, layer.forward, features, { lengths, initialState }, where)
            : runBidirectional(tape, layer.forward, layer.backward, features, { lengths, initialState }, where);
      features = result.outputs;
      state.push(...result.state);
    });
    if (this.readoutWeights === null || this.readoutBias === null || options.readout === false) return { outputs: features, state };
    const width = features.shape[2];
    const flat = reshape(tape, features, [steps * rows, width]);
    const mapped = add(tape, matmul(tape, flat, this.readoutWeights), this.readoutBias);
    const outputs = reshape(tape, mapped, [steps, rows, this.outputWidth]);
    // Keep the ragged convention past the readout too: positions beyond a row's length are zero.
    return { outputs: lengths === null ? outputs : zeroBeyondLengths(tape, outputs, lengths), state };
  }

  private inputFeatures(tape: Tape, input: Tensor | TokenBatch): Tensor {
    const described = this.description.input;
    if (described.kind === 'embedding') {
      if (!('tokens' in input))
        fail(
          'invalid_argument',
          'model.input',
          'token ids ({ tokens, steps, batch }) for an embedding input',
          `a tensor ${formatShape((input as Tensor).shape)}`,
        );
      const { tokens, steps, batch } = input;
      if (!Number.isInteger(steps) || !Number.isInteger(batch) || steps < 1 || batch < 1 || tokens.length !== steps * batch) {
        fail('shape_mismatch', 'model.input.tokens', `steps × batch = ${steps} × ${batch} ids`, `${tokens.length}`);
      }
      for (let i = 0; i < tokens.length; i++) {
        if (tokens[i] < 0 || tokens[i] >= described.vocabulary) {
          fail('invalid_argument', `model.input.tokens[${i}]`, `an id in [0, ${described.vocabulary})`, String(tokens[i]));
        }
      }
      const rows = gatherRows(tape, this.embedding as Tensor, tokens);
      return reshape(tape, rows, [steps, batch, described.width]);
    }
    if ('tokens' in input) fail('invalid_argument', 'model.input', `numbers [steps, batch, ${described.width}] for a values input`, 'token ids');
    if (input.shape.length !== 3 || input.shape[2] !== described.width) {
      fail('shape_mismatch', 'model.input', `[steps, batch, ${described.width}]`, formatShape(input.shape));
    }
    if (input.dtype !== this.dtype) fail('dtype_mismatch', 'model.input', this.dtype, input.dtype);
    return input;
  }
}

function makeCell(request: CellRequest, custom: Readonly<Record<string, CellMaker>>, plans: CellPlans, mode: CellMode): RecurrentCell {
  const { layer, inputWidth, hidden, dtype, random, name } = request;
  switch (layer.cell) {
    case 'lstm':
      return new LstmCell({ inputWidth, hidden, dtype, random, name, mode, peepholes: layer.peepholes, forgetBias: layer.forgetBias });
    case 'gru':
      return new GruCell({ inputWidth, hidden, dtype, random, name, mode, resetAfterProduct: layer.resetAfterProduct });
    case 'plain':
      return new PlainCell({ inputWidth, hidden, dtype, random, name, mode, activation: layer.activation });
    default: {
      if (Object.hasOwn(plans, layer.cell)) return new PlanCell({ plan: plans[layer.cell], layer, inputWidth, hidden, dtype, random, name });
      const maker = custom[layer.cell];
      if (maker === undefined) fail('invalid_option', `${name}.cell`, 'a known cell kind', layer.cell);
      return maker(request);
    }
  }
}

/** Builds a model with freshly initialised parameters from a description. */
export function buildModel(description: unknown, options: BuildOptions = {}): SequenceModel {
  return new SequenceModel(description, options);
}
