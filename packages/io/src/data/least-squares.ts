/**
 * Least squares by Householder QR with scaled columns (Golub & Van Loan, "Matrix Computations", 4th ed., §5.2 and
 * §5.3.3; common practice): each column of X is divided by its largest magnitude before the factorisation, so that
 * columns of very different size (prices ~1e3 beside volumes ~1e9) do not make small pivots look negligible, and
 * the weights are scaled back after. The normal equations are never formed (their condition number is the square
 * of X's). A column whose pivot falls below `rank tolerance × the largest pivot` (a constant or repeated column)
 * gets weight 0, as a rank-deficient basic solution does.
 */

/** Relative size below which a pivot of R counts as zero (the column adds nothing the others do not). */
const RANK_TOLERANCE = 1e-10;

/**
 * The weights w minimising ‖X w − y‖₂, X given row-major as `rows × columns` numbers in `x`. Columns that are all
 * zero or a combination of earlier ones get weight 0. Allocates its own workspace; `x` and `y` are not changed.
 */
export function leastSquares(x: ArrayLike<number>, y: ArrayLike<number>, rows: number, columns: number): Float64Array {
  const a = Float64Array.from({ length: rows * columns }, (_, i) => x[i]);
  const b = Float64Array.from({ length: rows }, (_, i) => y[i]);
  const scale = new Float64Array(columns);
  for (let c = 0; c < columns; c++) {
    let most = 0;
    for (let r = 0; r < rows; r++) most = Math.max(most, Math.abs(a[r * columns + c]));
    scale[c] = most > 0 ? most : 1;
    for (let r = 0; r < rows; r++) a[r * columns + c] /= scale[c];
  }
  const steps = Math.min(rows, columns);
  const diagonal = new Float64Array(columns);
  // Householder reflections H_k = I − 2 v vᵀ / vᵀv zero column k below the diagonal; each is applied to the later
  // columns and to b at once, so Q is never formed.
  for (let k = 0; k < steps; k++) {
    let norm = 0;
    for (let r = k; r < rows; r++) norm += a[r * columns + k] ** 2;
    norm = Math.sqrt(norm);
    if (norm === 0) {
      diagonal[k] = 0;
      continue;
    }
    const alpha = a[k * columns + k] > 0 ? -norm : norm;
    a[k * columns + k] -= alpha; // v = x − α e₁, stored in place of column k
    let vv = 0;
    for (let r = k; r < rows; r++) vv += a[r * columns + k] ** 2;
    for (let c = k + 1; c < columns; c++) {
      let dot = 0;
      for (let r = k; r < rows; r++) dot += a[r * columns + k] * a[r * columns + c];
      const f = (2 * dot) / vv;
      for (let r = k; r < rows; r++) a[r * columns + c] -= f * a[r * columns + k];
    }
    let dot = 0;
    for (let r = k; r < rows; r++) dot += a[r * columns + k] * b[r];
    const f = (2 * dot) / vv;
    for (let r = k; r < rows; r++) b[r] -= f * a[r * columns + k];
    diagonal[k] = alpha;
  }
  // Back substitution R w = Qᵀb over the columns whose pivot is not negligible.
  let largest = 0;
  for (let k = 0; k < steps; k++) largest = Math.max(largest, Math.abs(diagonal[k]));
  const w = new Float64Array(columns);
  for (let k = steps - 1; k >= 0; k--) {
    if (!(Math.abs(diagonal[k]) > RANK_TOLERANCE * largest)) continue;
    let s = b[k];
    for (let c = k + 1; c < columns; c++) s -= a[k * columns + c] * w[c];
    w[k] = s / diagonal[k];
  }
  for (let c = 0; c < columns; c++) w[c] /= scale[c];
  return w;
}
