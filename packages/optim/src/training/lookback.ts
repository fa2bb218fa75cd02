/**
 * The model over one training batch, in two pieces when the batch has a lookback (`carryAfter` < steps): the steps
 * up to `carryAfter`, whose final state is what the next batch starts from, then the rest from that state, on one
 * tape, so the reverse sweep runs through all of them (truncated BPTT with k2 > k1).
 */
import { Tensor } from '@weft/core';
import type { Random, Tape } from '@weft/core';
import { joinSteps } from '@weft/cells';
import type { SequenceModel, TokenBatch } from '@weft/cells';
import type { Batch } from '../data.js';

/** The outputs over the whole batch and the state to carry into the next batch. */
export function forwardWithLookback(model: SequenceModel, tape: Tape, batch: Batch, initialState: readonly Tensor[] | undefined, random: Random): { outputs: Tensor; carry: readonly Tensor[] } {
  const options = { lengths: batch.lengths, training: true, random };
  const split = batch.carryAfter;
  if (split === undefined || split >= batch.steps) {
    const result = model.run(tape, batch.input, { ...options, initialState });
    return { outputs: result.outputs, carry: result.state };
  }
  const [head, tail] = splitSteps(batch.input, split, batch.batch);
  let carry: readonly Tensor[];
  let headOutputs: Tensor | null = null;
  if (head === null) {
    carry = initialState ?? model.stateSlots().map((slot) => {
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
