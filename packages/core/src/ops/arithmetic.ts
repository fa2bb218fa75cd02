/**
 * Elementwise arithmetic on the tape: add (with a bias row broadcast over the rows of `a`), subtract, multiply,
 * scale. Backward (common practice): ∂(a+b)/∂a = ∂(a+b)/∂b = 1, summed over the broadcast rows for a bias;
 * ∂(a−b)/∂b = −1; ∂(a⊙b)/∂a = b; ∂(s·a)/∂a = s.
 */
import { fail, formatShape } from '../errors.js';
import type { OperationKind, Tape, TapeNode } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { sameShape } from '../tensor.js';
import { lastAxis, requireBackend, requireSameDType, requireShape } from './checks.js';

/** True when b is a row broadcast over a, false when the shapes are equal; throws otherwise. */
function rowBroadcast(operation: string, a: Tensor, b: Tensor): boolean {
  if (sameShape(a.shape, b.shape)) return false;
  const cols = lastAxis(a);
  const isRow = a.shape.length >= 1 && b.size === cols && (b.shape.length === 1 || (b.shape.length === 2 && b.shape[0] === 1));
  if (!isRow) fail('shape_mismatch', `${operation}.b`, `${formatShape(a.shape)} or a row [${cols}]`, formatShape(b.shape));
  return true;
}

const addKind: OperationKind = {
  name: 'add',
  backward(node: TapeNode, tape: Tape): void {
    const a = node.first as Tensor;
    const b = node.second as Tensor;
    const g = (node.output as Tensor).gradient!;
    if (a.tracked) tape.kernels.addInto(tape.gradientOf(a), g, a.size);
    if (b.tracked) {
      if (node.flag0) tape.kernels.sumRows(tape.gradientOf(b), g, a.size / b.size, b.size, true);
      else tape.kernels.addInto(tape.gradientOf(b), g, b.size);
    }
  },
};

/**
 * a + b. `b` has the shape of `a`, or is a row of `a`'s last-axis length (shape [n] or [1, n]) that is added to
 * every row of `a` (the bias add).
 */
export function add(tape: Tape, a: Tensor, b: Tensor): Tensor {
  requireSameDType('add', 'b', b, a.dtype);
  requireBackend(tape, 'add', 'a', a);
  requireBackend(tape, 'add', 'b', b);
  const broadcast = rowBroadcast('add', a, b);
  const out = tape.output(a.shape, a.dtype, a.tracked || b.tracked);
  if (broadcast) tape.kernels.addRow(out.data, a.data, b.data, a.size / b.size, b.size);
  else tape.kernels.add(out.data, a.data, b.data, a.size);
  const node = tape.record(addKind, out, a, b);
  if (node !== null) node.flag0 = broadcast;
  return out;
}

const subtractKind: OperationKind = {
  name: 'subtract',
  backward(node: TapeNode, tape: Tape): void {
    const a = node.first as Tensor;
    const b = node.second as Tensor;
    const g = (node.output as Tensor).gradient!;
    if (a.tracked) tape.kernels.addInto(tape.gradientOf(a), g, a.size);
    if (b.tracked) tape.kernels.addScaledInto(tape.gradientOf(b), g, -1, b.size);
  },
};

/** a − b, same shapes. */
export function subtract(tape: Tape, a: Tensor, b: Tensor): Tensor {
  requireSameDType('subtract', 'b', b, a.dtype);
  requireBackend(tape, 'subtract', 'a', a);
  requireBackend(tape, 'subtract', 'b', b);
  requireShape('subtract', 'b', b, a.shape);
  const out = tape.output(a.shape, a.dtype, a.tracked || b.tracked);
  tape.kernels.subtract(out.data, a.data, b.data, a.size);
  tape.record(subtractKind, out, a, b);
  return out;
}

const multiplyKind: OperationKind = {
  name: 'multiply',
  backward(node: TapeNode, tape: Tape): void {
    const a = node.first as Tensor;
    const b = node.second as Tensor;
    const g = (node.output as Tensor).gradient!;
    if (!node.flag0) {
      if (a.tracked) tape.kernels.multiplyInto(tape.gradientOf(a), g, b.data, a.size);
      if (b.tracked) tape.kernels.multiplyInto(tape.gradientOf(b), g, a.data, b.size);
      return;
    }
    // b is a row broadcast over the rows of a.
    const cols = b.size;
    const rows = a.size / cols;
    if (a.tracked) {
      const ga = tape.gradientOf(a);
      for (let r = 0; r < rows; r++) {
        const base = r * cols;
        for (let c = 0; c < cols; c++) ga[base + c] += g[base + c] * b.data[c];
      }
    }
    if (b.tracked) {
      const gb = tape.gradientOf(b);
      for (let r = 0; r < rows; r++) {
        const base = r * cols;
        for (let c = 0; c < cols; c++) gb[c] += g[base + c] * a.data[base + c];
      }
    }
  },
};

/**
 * a ⊙ b, the elementwise product. `b` has the shape of `a`, or is a row of `a`'s last-axis length (shape [n] or
 * [1, n]) that multiplies every row of `a` (a per-unit scale, such as a peephole weight).
 */
export function multiply(tape: Tape, a: Tensor, b: Tensor): Tensor {
  requireSameDType('multiply', 'b', b, a.dtype);
  requireBackend(tape, 'multiply', 'a', a);
  requireBackend(tape, 'multiply', 'b', b);
  const broadcast = rowBroadcast('multiply', a, b);
  const out = tape.output(a.shape, a.dtype, a.tracked || b.tracked);
  if (broadcast) {
    const cols = b.size;
    const rows = a.size / cols;
    for (let r = 0; r < rows; r++) {
      const base = r * cols;
      for (let c = 0; c < cols; c++) out.data[base + c] = a.data[base + c] * b.data[c];
    }
  } else {
    tape.kernels.multiply(out.data, a.data, b.data, a.size);
  }
  const node = tape.record(multiplyKind, out, a, b);
  if (node !== null) node.flag0 = broadcast;
  return out;
}

const scaleKind: OperationKind = {
  name: 'scale',
  backward(node: TapeNode, tape: Tape): void {
    const a = node.first as Tensor;
    tape.kernels.addScaledInto(tape.gradientOf(a), (node.output as Tensor).gradient!, node.number0, a.size);
  },
};

/** s · a for a number s. */
export function scale(tape: Tape, a: Tensor, s: number): Tensor {
  requireBackend(tape, 'scale', 'a', a);
  if (typeof s !== 'number' || Number.isNaN(s)) fail('invalid_argument', 'scale.s', 'a number', String(s));
  const out = tape.output(a.shape, a.dtype, a.tracked);
  tape.kernels.scale(out.data, a.data, s, a.size);
  const node = tape.record(scaleKind, out, a);
  if (node !== null) node.number0 = s;
  return out;
}
