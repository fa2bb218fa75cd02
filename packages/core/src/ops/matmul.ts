/**
 * Matrix product on the tape: C = op(A) · op(B) with optional transposes of either operand.
 * Backward (common practice): for C = A·B, ∂A += ∂C · Bᵀ and ∂B += Aᵀ · ∂C; the transposed forms follow by
 * transposing those products, so every case is one accumulating matmul kernel call per operand, no temporaries.
 */
import { fail, formatShape } from '../errors.js';
import { noTensor } from '../tape.js';
import type { OperationKind, Tape } from '../tape.js';
import type { Tensor } from '../tensor.js';
import { requireBackend, requireRank, requireSameDType } from './checks.js';
import { productShape, transposedOf } from '../kernels/shapes.js';

/** Which operands of `matmul` are read transposed. */
export interface MatmulOptions {
  /** Use Aᵀ: A is stored [inner, rows]. */
  readonly transposeA?: boolean;
  /** Use Bᵀ: B is stored [cols, inner]. */
  readonly transposeB?: boolean;
}

/** What a matrix product saves for backward. */
interface MatmulSaved {
  a: Tensor;
  b: Tensor;
  transposeA: boolean;
  transposeB: boolean;
}

const kind: OperationKind<MatmulSaved> = {
  name: 'matmul',
  saves: () => ({ a: noTensor, b: noTensor, transposeA: false, transposeB: false }),
  backward(node, tape): void {
    const { a, b, transposeA, transposeB } = node.saved;
    const g = node.output.gradient!;
    const rows = transposeA ? a.shape[1] : a.shape[0];
    const inner = transposeA ? a.shape[0] : a.shape[1];
    const cols = transposeB ? b.shape[0] : b.shape[1];
    if (a.tracked) {
      const ga = tape.gradientOf(a);
      if (!transposeA) {
        // ∂A [rows, inner] += ∂C [rows, cols] · op(B)ᵀ [cols, inner]
        tape.kernels.matmulInto(ga, g, b.data, productShape(rows, cols, inner, transposedOf(false, !transposeB)));
      } else {
        // ∂A stored [inner, rows] += op(B) [inner, cols] · ∂Cᵀ [cols, rows]
        tape.kernels.matmulInto(ga, b.data, g, productShape(inner, cols, rows, transposedOf(transposeB, true)));
      }
    }
    if (b.tracked) {
      const gb = tape.gradientOf(b);
      if (!transposeB) {
        // ∂B [inner, cols] += op(A)ᵀ [inner, rows] · ∂C [rows, cols]
        tape.kernels.matmulInto(gb, a.data, g, productShape(inner, rows, cols, transposedOf(!transposeA, false)));
      } else {
        // ∂B stored [cols, inner] += ∂Cᵀ [cols, rows] · op(A) [rows, inner]
        tape.kernels.matmulInto(gb, g, a.data, productShape(cols, rows, inner, transposedOf(true, transposeA)));
      }
    }
  },
};

/**
 * The matrix product op(A) · op(B) of two 2-D tensors, recorded on the tape: [rows, inner] · [inner, cols] → [rows,
 * cols].
 */
export function matmul(tape: Tape, a: Tensor, b: Tensor, options: MatmulOptions = {}): Tensor {
  const transposeA = options.transposeA === true;
  const transposeB = options.transposeB === true;
  requireRank('matmul', 'a', a, 2);
  requireRank('matmul', 'b', b, 2);
  requireSameDType('matmul', 'b', b, a.dtype);
  requireBackend(tape, 'matmul', 'a', a);
  requireBackend(tape, 'matmul', 'b', b);
  const rows = transposeA ? a.shape[1] : a.shape[0];
  const inner = transposeA ? a.shape[0] : a.shape[1];
  const innerB = transposeB ? b.shape[1] : b.shape[0];
  const cols = transposeB ? b.shape[0] : b.shape[1];
  if (inner !== innerB) {
    const expected = transposeB ? `[${'cols'}, ${inner}]` : `[${inner}, ${'cols'}]`;
    fail(
      'shape_mismatch',
      'matmul.b',
      expected,
      formatShape(b.shape),
      `inner sizes differ: ${transposeA ? 'Aᵀ' : 'A'} is [${rows}, ${inner}], ${transposeB ? 'Bᵀ' : 'B'} is [${innerB}, ${cols}]`,
    );
  }
  const out = tape.output([rows, cols], a.dtype, a.tracked || b.tracked);
  tape.kernels.matmul(out.data, a.data, b.data, productShape(rows, inner, cols, transposedOf(transposeA, transposeB)));
  const saved = tape.record(kind, out);
  if (saved !== null) {
    saved.a = a;
    saved.b = b;
    saved.transposeA = transposeA;
    saved.transposeB = transposeB;
  }
  return out;
}
