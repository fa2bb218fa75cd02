/**
 * Reshape: the same elements in the same row-major order under another shape of equal size. The output shares
 * the input's buffer (no copy); backward adds the output's gradient into the input's, element for element.
 */
import { fail, formatShape } from '../errors.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
import { Tensor, sizeOfShape } from '../tensor.js';

const kind: OperationKind<{ input: Tensor }> = {
  name: 'reshape',
  saves: () => ({ input: noTensor }),
  backward(node, tape): void {
    const a = node.saved.input;
    tape.kernels.addInto(tape.gradientOf(a), node.output.gradient!, a.size);
  },
};

/** The same values under another shape of the same size (the data is shared, not copied). */
export function reshape(tape: Tape, a: Tensor, shape: readonly number[]): Tensor {
  const size = sizeOfShape(shape, 'reshape.shape');
  if (size !== a.size) {
    fail('shape_mismatch', 'reshape.shape', `a shape of ${a.size} elements (from ${formatShape(a.shape)})`, `${formatShape(shape)} of ${size}`);
  }
  const out = new Tensor(a.data, shape.slice());
  out.tracked = a.tracked && tape.recording;
  const saved = tape.record(kind, out);
  if (saved !== null) saved.input = a;
  return out;
}
