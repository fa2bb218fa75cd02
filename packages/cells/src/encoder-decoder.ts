/**
 * An encoder-decoder model for training (see EncoderDecoderDescription): two SequenceModels, the encoder's final
 * state passed as the decoder's initial state, and optionally global attention (Luong, Pham & Manning 2015, §3.1):
 *
 *   score(h_t, h̄_s)   dot: h_tᵀ h̄_s,  general: h_tᵀ W_a h̄_s,  additive: v_aᵀ tanh(W h_t + U h̄_s)     (eq. 8;
 *                      the additive score is Bahdanau, Cho & Bengio 2015's, appendix A.1.2, which Luong et al. list
 *                      as "concat")
 *   a_t(s) = softmax over the source's own positions of score(h_t, h̄_s)                                (eq. 7)
 *   c_t = Σ_s a_t(s) h̄_s,  h̃_t = tanh(W_c [c_t; h_t]),  p(y_t | …) = softmax(W_s h̃_t + b)             (eqs. 5–6)
 *
 * h_t is the decoder's top-layer state, h̄_s the encoder's top-layer outputs (both directions of a bidirectional
 * layer). The context is not fed back into the decoder's input (Luong et al.'s "input feeding", §3.3, is not done),
 * so the decoder's states of every step come first and attention then reads all steps in one operation.
 * Parameters are named `encoder.<name>`, `decoder.<name>` and `attention.keys|query|vector|combine` (layout.ts);
 * the decoder's readout is W_s, b.
 */
import { Random, WeftError, add, concat, fail, matmul, reshape, tanh } from '@weft/core';
import type { DType, Tape, Tensor } from '@weft/core';
import { attend } from './attention.js';
import type { NamedParameter } from './cell.js';
import type { EncoderDecoderDescription } from './description.js';
import { describeAnyProblems, isEncoderDecoder } from './description.js';
import { fillUniform, glorotBound } from './init.js';
import { attentionLayout } from './layout.js';
import { checkPlans } from './plans/index.js';
import { createParameter } from './recurrence.js';
import type { BuildOptions, TokenBatch } from './model.js';
import { SequenceModel } from './model.js';
import { reverseWithinLengths, zeroBeyondLengths } from './sequence-ops.js';

/** What an encoder-decoder's teacher-forced run gives. */
export interface EncoderDecoderRun {
  /** Logits [T_target, B, V]. */
  readonly outputs: Tensor;
  /** The decoder's initial state, taken from the encoder (decoder `stateSlots()` order). */
  readonly encoded: readonly Tensor[];
  /**
   * The attention weights [T_target, B, S] (row (t, b) sums to 1 over the first L_b source positions, in the
   * source's own order even with `reverseSource`); null without attention.
   */
  readonly attentionWeights: Float64Array | null;
}

/** How an encoder-decoder runs a batch. */
export interface EncoderDecoderRunOptions {
  /** Training applies the descriptions' dropout, drawing masks from `random`. Default false. */
  readonly training?: boolean;
  /** The generator dropout masks come from when `training` is true. */
  readonly random?: Random;
}

/**
 * An encoder and a decoder, built from an `EncoderDecoderDescription`: the encoder's final state starts the decoder,
 * and with attention every decoding step reads the encoder's outputs.
 */
export class EncoderDecoderModel {
  /** The checked description it was built from. */
  readonly description: EncoderDecoderDescription;
  /** The model that reads the source. */
  readonly encoder: SequenceModel;
  /** The model that writes the target, one token per step. */
  readonly decoder: SequenceModel;
  /** The attention parameters by their names (`attention.keys`, …); empty without attention. */
  readonly attention: ReadonlyMap<string, Tensor>;
  /** Element type of every parameter. */
  readonly dtype: DType;

  constructor(description: unknown, options: BuildOptions = {}) {
    const problems = describeAnyProblems(description, 'description', [
      ...Object.keys(options.cells ?? {}),
      ...Object.keys(checkPlans(options.plans, 'EncoderDecoderModel.plans')),
    ]);
    if (!isEncoderDecoder(description))
      problems.unshift({
        code: 'invalid_option',
        path: 'description.kind',
        expected: "'encoder-decoder'",
        received: JSON.stringify((description as { kind?: unknown })?.kind) ?? 'nothing',
      });
    if (problems.length > 0) throw new WeftError(problems);
    const checked = description as EncoderDecoderDescription;
    this.description = JSON.parse(JSON.stringify(checked)) as EncoderDecoderDescription;
    const seed = options.seed ?? 0;
    this.encoder = new SequenceModel(checked.encoder, { ...options, seed: `${String(seed)}:encoder` });
    this.decoder = new SequenceModel(checked.decoder, { ...options, seed: `${String(seed)}:decoder` });
    this.dtype = this.encoder.dtype;
    for (const p of this.encoder.parameters()) p.tensor.name = `encoder.${p.name}`;
    for (const p of this.decoder.parameters()) p.tensor.name = `decoder.${p.name}`;
    // Attention matrices Glorot-uniform, v uniform in ±1/√D (common practice), from a generator of their own.
    const random = new Random(`${String(seed)}:attention`);
    const attention = new Map<string, Tensor>();
    for (const { name, shape } of attentionLayout(checked)) {
      const tensor = createParameter(name, shape, options.dtype ?? 'f32');
      const [rows, cols] = shape.length === 2 ? shape : [1, shape[0]];
      fillUniform(tensor.data, cols, rows, 0, cols, shape.length === 2 ? glorotBound(rows, cols) : 1 / Math.sqrt(cols), random);
      attention.set(name, tensor);
    }
    this.attention = attention;
  }

  /** Every parameter: the encoder's (`encoder.…`), the decoder's (`decoder.…`), then attention's. */
  parameters(): NamedParameter[] {
    return [
      ...this.encoder.parameters().map((p) => ({ name: `encoder.${p.name}`, tensor: p.tensor })),
      ...this.decoder.parameters().map((p) => ({ name: `decoder.${p.name}`, tensor: p.tensor })),
      ...[...this.attention].map(([name, tensor]) => ({ name, tensor })),
    ];
  }

  /**
   * Encodes the source batch (token ids, time-major, ragged by `sourceLengths`) and decodes the target input
   * batch (the targets shifted right behind a start token) from the encoder's final state, reading the encoder's
   * outputs through attention when the description has it.
   */
  run(
    tape: Tape,
    source: TokenBatch,
    sourceLengths: Int32Array | readonly number[] | null,
    targetInput: TokenBatch,
    targetLengths: Int32Array | readonly number[] | null = null,
    options: EncoderDecoderRunOptions = {},
  ): EncoderDecoderRun {
    if (source.batch !== targetInput.batch) {
      fail('shape_mismatch', 'encoderDecoder.targetInput.batch', `${source.batch} (the source batch)`, `${targetInput.batch}`);
    }
    const lengths = sourceLengths === null ? null : Int32Array.from(sourceLengths);
    const reversed = this.description.reverseSource === true;
    const fed = reversed ? reverseTokens(source, lengths) : source;
    const training = { training: options.training, random: options.random };
    const encoder = this.encoder.run(tape, fed, { lengths, ...training });
    const encoded = decoderStart(this.encoder, encoder.state);
    const form = this.description.attention;
    if (form === undefined || form === null) {
      const decoded = this.decoder.run(tape, targetInput, { lengths: targetLengths, initialState: encoded, ...training });
      return { outputs: decoded.outputs, encoded, attentionWeights: null };
    }
    const decoded = this.decoder.run(tape, targetInput, { lengths: targetLengths, initialState: encoded, readout: false, ...training });
    const states = decoded.outputs;
    const [steps, rows, hidden] = states.shape;
    // The encoder's outputs in the source's own order, so the weights line up with the source as given.
    const values = reversed ? reverseWithinLengths(tape, encoder.outputs, lengths) : encoder.outputs;
    const [sources, , width] = values.shape;
    const get = (name: string): Tensor => this.attention.get(name) as Tensor;
    const project = (x: Tensor, w: Tensor, leading: number): Tensor =>
      reshape(tape, matmul(tape, reshape(tape, x, [leading * rows, x.shape[2]]), w), [leading, rows, w.shape[1]]);
    const keys = form === 'dot' ? values : project(values, get('attention.keys'), sources);
    const query = form === 'additive' ? project(states, get('attention.query'), steps) : states;
    const { context, weights } = attend(tape, query, keys, values, form === 'additive' ? get('attention.vector') : null, lengths);
    const joined = reshape(tape, concat(tape, [context, states]), [steps * rows, width + hidden]);
    const attentional = tanh(tape, matmul(tape, joined, get('attention.combine')));
    const decoder = this.decoder;
    const logits = add(tape, matmul(tape, attentional, decoder.readoutWeights as Tensor), decoder.readoutBias as Tensor);
    const outputs = reshape(tape, logits, [steps, rows, decoder.outputWidth]);
    const target = targetLengths === null ? null : Int32Array.from(targetLengths);
    return { outputs: target === null ? outputs : zeroBeyondLengths(tape, outputs, target), encoded, attentionWeights: weights };
  }
}

/**
 * The decoder's initial state from the encoder's final state (encoder `stateSlots()` order): per layer, the slots of
 * its last cell (the backward one of a bidirectional or reverse layer).
 */
export function decoderStart(encoder: SequenceModel, state: readonly Tensor[]): Tensor[] {
  const picked: Tensor[] = [];
  let offset = 0;
  for (const layer of encoder.layers) {
    const ahead = layer.forward?.state.length ?? 0;
    const behind = layer.backward?.state.length ?? 0;
    picked.push(...(layer.backward === null ? state.slice(offset, offset + ahead) : state.slice(offset + ahead, offset + ahead + behind)));
    offset += ahead + behind;
  }
  return picked;
}

/** Each row's tokens reversed within its length (positions past the length unchanged). */
export function reverseTokens(batch: TokenBatch, lengths: Int32Array | readonly number[] | null): TokenBatch {
  const { tokens, steps, batch: rows } = batch;
  const out = Int32Array.from(tokens);
  for (let b = 0; b < rows; b++) {
    const length = lengths === null ? steps : lengths[b];
    for (let t = 0; t < length; t++) out[t * rows + b] = tokens[(length - 1 - t) * rows + b];
  }
  return { tokens: out, steps, batch: rows };
}
