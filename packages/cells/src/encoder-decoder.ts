/**
 * An encoder-decoder model for training (see EncoderDecoderDescription): two SequenceModels, the encoder's final
 * state passed as the decoder's initial state. Parameters are named `encoder.<name>` and `decoder.<name>`.
 */
import { WeftError, fail } from '@weft/core';
import type { Tape, Tensor } from '@weft/core';
import type { NamedParameter } from './cell.js';
import type { EncoderDecoderDescription } from './description.js';
import { describeAnyProblems, isEncoderDecoder } from './description.js';
import type { BuildOptions, TokenBatch } from './model.js';
import { SequenceModel } from './model.js';

/** What an encoder-decoder's teacher-forced run gives. */
export interface EncoderDecoderRun {
  /** Logits [T_target, B, V]. */
  readonly outputs: Tensor;
  /** The encoder's final state (the decoder's initial state). */
  readonly encoded: readonly Tensor[];
}

/**
 * An encoder and a decoder, built from an `EncoderDecoderDescription`: the encoder's final state starts the decoder.
 */
export class EncoderDecoderModel {
  /** The checked description it was built from. */
  readonly description: EncoderDecoderDescription;
  /** The model that reads the source. */
  readonly encoder: SequenceModel;
  /** The model that writes the target, one token per step. */
  readonly decoder: SequenceModel;

  constructor(description: unknown, options: BuildOptions = {}) {
    const problems = describeAnyProblems(description, 'description', Object.keys(options.cells ?? {}));
    if (!isEncoderDecoder(description)) problems.unshift({ code: 'invalid_option', path: 'description.kind', expected: "'encoder-decoder'", received: JSON.stringify((description as { kind?: unknown })?.kind) ?? 'nothing' });
    if (problems.length > 0) throw new WeftError(problems);
    const checked = description as EncoderDecoderDescription;
    this.description = JSON.parse(JSON.stringify(checked)) as EncoderDecoderDescription;
    const seed = options.seed ?? 0;
    this.encoder = new SequenceModel(checked.encoder, { ...options, seed: `${String(seed)}:encoder` });
    this.decoder = new SequenceModel(checked.decoder, { ...options, seed: `${String(seed)}:decoder` });
    for (const p of this.encoder.parameters()) p.tensor.name = `encoder.${p.name}`;
    for (const p of this.decoder.parameters()) p.tensor.name = `decoder.${p.name}`;
  }

  /** Every parameter, the encoder's (`encoder.…`) then the decoder's (`decoder.…`). */
  parameters(): NamedParameter[] {
    return [
      ...this.encoder.parameters().map((p) => ({ name: `encoder.${p.name}`, tensor: p.tensor })),
      ...this.decoder.parameters().map((p) => ({ name: `decoder.${p.name}`, tensor: p.tensor })),
    ];
  }

  /**
   * Encodes the source batch (token ids, time-major, ragged by `sourceLengths`) and decodes the target input
   * batch (the targets shifted right behind a start token) from the encoder's final state.
   */
  run(tape: Tape, source: TokenBatch, sourceLengths: Int32Array | readonly number[] | null, targetInput: TokenBatch, targetLengths: Int32Array | readonly number[] | null = null): EncoderDecoderRun {
    if (source.batch !== targetInput.batch) {
      fail('shape_mismatch', 'encoderDecoder.targetInput.batch', `${source.batch} (the source batch)`, `${targetInput.batch}`);
    }
    const fed = this.description.reverseSource === true ? reverseTokens(source, sourceLengths) : source;
    const encoded = this.encoder.run(tape, fed, { lengths: sourceLengths }).state;
    const decoded = this.decoder.run(tape, targetInput, { lengths: targetLengths, initialState: encoded });
    return { outputs: decoded.outputs, encoded };
  }
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
