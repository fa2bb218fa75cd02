/**
 * The model over one training batch. A sequence model runs in two pieces when the batch has a lookback
 * (`carryAfter` < steps): the steps up to `carryAfter`, whose final state is what the next batch starts from, then
 * the rest from that state, on one tape, so the reverse sweep runs through all of them (truncated BPTT with
 * k2 > k1). An encoder-decoder reads the batch's sources and decodes its input by teacher forcing (`runOnBatch`).
 */
import { Tensor, fail } from '@weft/core';
import type { Random, Tape } from '@weft/core';
import { EncoderDecoderModel, joinSteps } from '@weft/cells';
import type { SequenceModel, TokenBatch } from '@weft/cells';
import type { Batch } from '../data.js';

/** What the trainer trains: a sequence model, or an encoder-decoder (on batches of pairs). */
export type TrainableModel = SequenceModel | EncoderDecoderModel;

/**
 * The model's outputs over one batch and its final state: an encoder-decoder's teacher-forced logits on a batch of
 * pairs (no state), or a sequence model's run from `initialState`.
 */
export function runOnBatch(
  model: TrainableModel,
  tape: Tape,
  batch: Batch,
  initialState: readonly Tensor[] | undefined,
  training: { training: boolean; random?: Random },
): { outputs: Tensor; state: readonly Tensor[] } {
  if (model instanceof EncoderDecoderModel) {
    const source = batch.source;
    if (source === undefined)
      fail('invalid_argument', 'trainer.batch.source', 'batches of pairs (pairBatches) for an encoder-decoder', 'a batch without sources');
    const run = model.run(tape, source.tokens, source.lengths, batch.input as TokenBatch, batch.lengths, training);
    return { outputs: run.outputs, state: [] };
  }
  if (batch.source !== undefined)
    fail('invalid_argument', 'trainer.batch.source', 'no sources (batches of pairs train an encoder-decoder)', 'a batch of pairs');
  return model.run(tape, batch.input, { lengths: batch.lengths, initialState, ...training });
}

/** The outputs over the whole batch and the state to carry into the next batch. */
export function forwardWithLookback(
  model: TrainableModel,
  tape: Tape,
  batch: Batch,
  initialState: readonly Tensor[] | undefined,
  random: Random,
): { outputs: Tensor; carry: readonly Tensor[] } {
  if (model instanceof EncoderDecoderModel) {
    const result = runOnBatch(model, tape, batch, undefined, { training: true, random });
    return { outputs: result.outputs, carry: result.state };
  }
  const split = batch.carryAfter;
  if (split === undefined || split >= batch.steps) {
    const result = runOnBatch(model, tape, batch, initialState, { training: true, random });
    return { outputs: result.outputs, carry: result.state };
  }
  const options = { lengths: batch.lengths, training: true, random };
  const [head, tail] = splitSteps(batch.input, split, batch.batch);
  let carry: readonly Tensor[];
  let headOutputs: Tensor | null = null;
  if (head === null) {
    carry =
      initialState ??
      model.stateSlots().map((slot) => {
        const fresh = tape.output([batch.batch, slot.width], model.dtype, false);
        fresh.data.fill(0);
        return fresh;
      });
  } else {
    const first = model.run(tape, head, { ...options, initialState });
    carry = first.state;
    headOutputs = first.outputs;
  }
  const second = model.run(tape, tail, { ...options, initialState: carry });
  return { outputs: headOutputs === null ? second.outputs : joinSteps(tape, headOutputs, second.outputs), carry };
}

/** A time-major batch input cut after `split` steps (views, no copies); the first part is null when `split` is 0. */
function splitSteps(input: Tensor | TokenBatch, split: number, rows: number): [Tensor | TokenBatch | null, Tensor | TokenBatch] {
  if (!(input instanceof Tensor)) {
    const { tokens, steps, batch } = input;
    const tail: TokenBatch = { tokens: tokens.subarray(split * rows), steps: steps - split, batch };
    return [split === 0 ? null : { tokens: tokens.subarray(0, split * rows), steps: split, batch }, tail];
  }
  const [steps, , width] = input.shape;
  const cut = split * rows * width;
  const tail = new Tensor(input.data.subarray(cut), [steps - split, rows, width]);
  return [split === 0 ? null : new Tensor(input.data.subarray(0, cut), [split, rows, width]), tail];
}
