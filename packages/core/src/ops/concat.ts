/**
 * Joining and cutting along the last axis. A tensor of shape [..., n] is handled as rows × n, rows being the
 * product of the leading axes. Backward (common practice): each input's gradient is its own column range of the
 * output's gradient; a slice's input gradient receives the output gradient in its column range.
 */
import { fail, formatShape } from '../errors.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { lastAxis, requireBackend, requireSameDType } from './checks.js';

const concatKind: OperationKind<{ parts: readonly Tensor[] }> = {
  name: 'concat',
  saves: () => ({ parts: [] }),
  backward(node, tape): void {
    const parts = node.saved.parts;
    const out = node.output;
    const g = out.gradient!;
    const width = lastAxis(out);
    const rows = out.size / Math.max(1, width);
    let offset = 0;
    for (const part of parts) {
      const w = lastAxis(part);
      if (part.tracked) tape.kernels.addFromColumns(tape.gradientOf(part), g, { rows, cols: w, width, first: offset });
      offset += w;
    }
  },
};

/** Joins tensors along the last axis; all leading axes must agree. */
export function concat(tape: Tape, parts: readonly Tensor[]): Tensor {
  if (parts === undefined || parts === null || parts.length === 0) {
    fail('invalid_argument', 'concat.parts', 'a list of at least one tensor', String(parts?.length ?? parts));
  }
  const first = parts[0];
  const lead = first.shape.slice(0, -1);
  let width = 0;
  let tracked = false;
  for (let i = 0; i < parts.length; i++) {
    const part = parts[i];
    requireSameDType('concat', `parts[${i}]`, part, first.dtype);
    requireBackend(tape, 'concat', `parts[${i}]`, part);
    const partLead = part.shape.slice(0, -1);
    if (part.shape.length !== first.shape.length || partLead.some((n, axis) => n !== lead[axis])) {
      fail('shape_mismatch', `concat.parts[${i}]`, `[${[...lead, 'any'].join(', ')}]`, formatShape(part.shape));
    }
    width += lastAxis(part);
    tracked = tracked || part.tracked;
  }
  const out = tape.output([...lead, width], first.dtype, tracked);
  const rows = out.size / Math.max(1, width);
  let offset = 0;
  for (const part of parts) {
    const w = lastAxis(part);
    tape.kernels.copyToColumns(out.data, part.data, { rows, cols: w, width, first: offset });
    offset += w;
  }
  const saved = tape.record(concatKind, out);
  if (saved !== null) saved.parts = parts.slice();
  return out;
}

/** What a slice saves: its input and the first column it took. */
interface SliceSaved {
  input: Tensor;
  start: number;
}

const sliceKind: OperationKind<SliceSaved> = {
  name: 'slice',
  saves: () => ({ input: noTensor, start: 0 }),
  backward(node, tape): void {
    const a = node.saved.input;
    const out = node.output;
    const g = out.gradient!;
    const ga = tape.gradientOf(a);
    const width = lastAxis(a);
    const w = lastAxis(out);
    const rows = out.size / Math.max(1, w);
    tape.kernels.addToColumns(ga, g, { rows, cols: w, width, first: node.saved.start });
  },
};

/** Columns [start, end) of the last axis. */
export function slice(tape: Tape, a: Tensor, start: number, end: number): Tensor {
  const width = lastAxis(a);
  if (a.shape.length === 0) fail('shape_mismatch', 'slice.a', 'a tensor of rank ≥ 1', '[]');
  requireBackend(tape, 'slice', 'a', a);
  if (!Number.isInteger(start) || !Number.isInteger(end) || start < 0 || end > width || start > end) {
    fail('invalid_argument', 'slice.range', `0 ≤ start ≤ end ≤ ${width}`, `start ${start}, end ${end}`);
  }
  const w = end - start;
  const out = tape.output([...a.shape.slice(0, -1), w], a.dtype, a.tracked);
  const rows = a.size / Math.max(1, width);
  tape.kernels.copyFromColumns(out.data, a.data, { rows, cols: w, width, first: start });
  const saved = tape.record(sliceKind, out);
  if (saved !== null) {
    saved.input = a;
    saved.start = start;
  }
  return out;
}
