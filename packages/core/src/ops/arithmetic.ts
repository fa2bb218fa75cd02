/**
 * Elementwise arithmetic on the tape: add (with a bias row broadcast over the rows of `a`), subtract, multiply,
 * scale. Backward (common practice): ∂(a+b)/∂a = ∂(a+b)/∂b = 1, summed over the broadcast rows for a bias;
 * ∂(a−b)/∂b = −1; ∂(a⊙b)/∂a = b; ∂(s·a)/∂a = s.
 */
import { fail, formatShape } from '../errors.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
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

/** What a two-operand elementwise operation saves: its operands, and whether b is a row broadcast over a. */
interface PairSaved {
  a: Tensor;
  b: Tensor;
  broadcast: boolean;
}

const savesPair = (): PairSaved => ({ a: noTensor, b: noTensor, broadcast: false });

function recordPair(tape: Tape, kind: OperationKind<PairSaved>, out: Tensor, a: Tensor, b: Tensor, broadcast: boolean): void {
  const saved = tape.record(kind, out);
  if (saved === null) return;
  saved.a = a;
  saved.b = b;
  saved.broadcast = broadcast;
}

const addKind: OperationKind<PairSaved> = {
  name: 'add',
  saves: savesPair,
  backward(node, tape): void {
    const { a, b, broadcast } = node.saved;
    const g = node.output.gradient!;
    if (a.tracked) tape.kernels.addInto(tape.gradientOf(a), g, a.size);
    if (b.tracked) {
      if (broadcast) tape.kernels.sumRowsInto(tape.gradientOf(b), g, a.size / b.size, b.size);
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
  recordPair(tape, addKind, out, a, b, broadcast);
  return out;
}

const subtractKind: OperationKind<PairSaved> = {
  name: 'subtract',
  saves: savesPair,
  backward(node, tape): void {
    const { a, b } = node.saved;
    const g = node.output.gradient!;
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
  recordPair(tape, subtractKind, out, a, b, false);
  return out;
}

const multiplyKind: OperationKind<PairSaved> = {
  name: 'multiply',
  saves: savesPair,
  backward(node, tape): void {
    const { a, b, broadcast } = node.saved;
    const g = node.output.gradient!;
    if (!broadcast) {
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
  recordPair(tape, multiplyKind, out, a, b, broadcast);
  return out;
}

/** What `scale` saves: its operand and the factor. */
interface ScaleSaved {
  a: Tensor;
  factor: number;
}

const scaleKind: OperationKind<ScaleSaved> = {
  name: 'scale',
  saves: () => ({ a: noTensor, factor: 0 }),
  backward(node, tape): void {
    const { a, factor } = node.saved;
    tape.kernels.addScaledInto(tape.gradientOf(a), node.output.gradient!, factor, a.size);
  },
};

/** s · a for a number s. */
export function scale(tape: Tape, a: Tensor, s: number): Tensor {
  requireBackend(tape, 'scale', 'a', a);
  if (typeof s !== 'number' || Number.isNaN(s)) fail('invalid_argument', 'scale.s', 'a number', String(s));
  const out = tape.output(a.shape, a.dtype, a.tracked);
  tape.kernels.scale(out.data, a.data, s, a.size);
  const saved = tape.record(scaleKind, out);
  if (saved !== null) {
    saved.a = a;
    saved.factor = s;
  }
  return out;
}
