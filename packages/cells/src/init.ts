/**
 * Initialisers, each drawing from the seeded generator and writing into a region of a tensor's buffer.
 *
 * - Glorot-uniform (Glorot & Bengio 2010, "Understanding the difficulty of training deep feedforward neural
 *   networks", eq. 16): U(−b, b) with b = √(6 / (fanIn + fanOut)). For a gate-stacked input matrix [I, gates·H]
 *   each gate block is its own layer: fanIn = I, fanOut = H.
 * - Orthogonal (Saxe, McClelland & Ganguli 2014, "Exact solutions to the nonlinear dynamics of learning in deep
 *   linear neural networks"): each H×H block is an orthogonal matrix, the Q of a QR factorisation (with a
 *   positive diagonal in R) of a matrix of standard normal draws (common practice). QR by modified Gram–Schmidt
 *   in f64.
 * - Identity (Le, Jaitly & Hinton 2015, "A simple way to initialize recurrent networks of rectified linear
 *   units"): the recurrent matrix of a ReLU cell starts as I.
 */
import type { FloatArray, Random } from '@weft/core';

/**
 * Fills columns [column0, column0 + cols) of a row-major [rows, stride] buffer with U(−bound, bound) draws,
 * row by row.
 */
export function fillUniform(data: FloatArray, stride: number, rows: number, column0: number, cols: number, bound: number, random: Random): void {
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) data[r * stride + column0 + c] = random.between(-bound, bound);
  }
}

/** The bound √(6 / (fanIn + fanOut)) of Glorot-uniform initialisation (Glorot & Bengio 2010, eq. 16). */
export function glorotBound(fanIn: number, fanOut: number): number {
  return Math.sqrt(6 / (fanIn + fanOut));
}

/** A random n×n orthogonal matrix, row-major, in f64. */
export function orthogonalMatrix(n: number, random: Random): Float64Array {
  // Columns of a normal matrix, orthonormalised left to right (modified Gram–Schmidt).
  const q = new Float64Array(n * n);
  for (let i = 0; i < n * n; i++) q[i] = random.normal();
  for (let j = 0; j < n; j++) {
    for (let k = 0; k < j; k++) {
      let projection = 0;
      for (let i = 0; i < n; i++) projection += q[i * n + k] * q[i * n + j];
      for (let i = 0; i < n; i++) q[i * n + j] -= projection * q[i * n + k];
    }
    let norm = 0;
    for (let i = 0; i < n; i++) norm += q[i * n + j] * q[i * n + j];
    norm = Math.sqrt(norm);
    // Gram–Schmidt makes R's diagonal positive, which is the sign convention that makes Q uniformly
    // distributed. A zero column has probability 0 for normal draws; guard against it all the same.
    const inverse = norm > 0 ? 1 / norm : 0;
    for (let i = 0; i < n; i++) q[i * n + j] *= inverse;
  }
  return q;
}

/** Writes an orthogonal n×n block at columns [column0, column0 + n) of a row-major [n, stride] buffer. */
export function fillOrthogonal(data: FloatArray, stride: number, n: number, column0: number, random: Random): void {
  const q = orthogonalMatrix(n, random);
  for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) data[r * stride + column0 + c] = q[r * n + c];
}

/** Writes the n×n identity at columns [column0, column0 + n) of a row-major [n, stride] buffer. */
export function fillIdentity(data: FloatArray, stride: number, n: number, column0: number): void {
  for (let r = 0; r < n; r++) for (let c = 0; c < n; c++) data[r * stride + column0 + c] = r === c ? 1 : 0;
}
