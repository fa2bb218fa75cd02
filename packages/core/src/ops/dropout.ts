/**
 * Dropout (Srivastava et al. 2014, JMLR 15, "Dropout: a simple way to prevent neural networks from overfitting"),
 * in the inverted form (common practice): each element is kept with probability 1 − rate and scaled by
 * 1/(1 − rate), so nothing changes at inference time. The mask is drawn from the seeded generator in row-major
 * order and saved; backward multiplies the gradient by the same mask.
 */
import { fail } from '../errors.js';
import type { Random } from '../random.js';
import type { FloatArray } from '../dtype.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { requireBackend } from './checks.js';

/** What dropout saves: its input and the mask it multiplied by (0 or 1/(1 − rate) per element). */
interface DropoutSaved {
  input: Tensor;
  mask: FloatArray;
}

const kind: OperationKind<DropoutSaved> = {
  name: 'dropout',
  saves: () => ({ input: noTensor, mask: noTensor.data }),
  backward(node, tape): void {
    const { input, mask } = node.saved;
    tape.kernels.multiplyInto(tape.gradientOf(input), node.output.gradient!, mask, input.size);
  },
};

/** Inverted dropout of `a` at `rate`, the mask drawn from `random` (see above); rate 0 passes `a` through. */
export function dropout(tape: Tape, a: Tensor, rate: number, random: Random): Tensor {
  if (!(rate >= 0 && rate < 1)) fail('invalid_option', 'dropout.rate', 'a number in [0, 1)', String(rate));
  requireBackend(tape, 'dropout', 'a', a);
  const mask = tape.buffer(a.dtype, a.size);
  const keep = 1 - rate;
  const scaleKept = 1 / keep;
  for (let i = 0; i < a.size; i++) mask[i] = random.uniform() < keep ? scaleKept : 0;
  const out = tape.output(a.shape, a.dtype, a.tracked);
  tape.kernels.multiply(out.data, a.data, mask, a.size);
  const saved = tape.record(kind, out);
  if (saved !== null) {
    saved.input = a;
    saved.mask = mask;
  }
  return out;
}
