/**
 * Nelder–Mead simplex minimisation (Nelder & Mead, "A simplex method for function minimization", The Computer
 * Journal 7, 1965), with the standard coefficients and ordering rules of Lagarias, Reeds, Wright & Wright,
 * "Convergence properties of the Nelder–Mead simplex method in low dimensions", SIAM J. Optim. 9, 1998:
 * reflection ρ = 1, expansion χ = 2, contraction γ = ½, shrink σ = ½. Used to choose smoothing parameters; the
 * function is free (the callers map bounded parameters through a logistic), and a non-finite value counts as +∞.
 */

/** Options of `minimise`. */
export interface MinimiseOptions {
  /** Largest number of function evaluations (default 200 × dimensions). */
  readonly evaluations?: number;
  /** Stop when the simplex's values differ by at most this, relative to the best (default 1e-10). */
  readonly tolerance?: number;
  /** Size of the first simplex's steps from the start point (default 0.5 on every axis). */
  readonly step?: number;
}

/** Where the minimum was found, its value and the evaluations spent. */
export interface MinimiseResult {
  /** The best point found. */
  readonly point: Float64Array;
  /** The function's value there. */
  readonly value: number;
  /** Evaluations spent. */
  readonly evaluations: number;
}

/** Minimises `f` from `start` by Nelder–Mead; `f` must not keep the array it is given. */
export function minimise(f: (point: Float64Array) => number, start: ArrayLike<number>, options: MinimiseOptions = {}): MinimiseResult {
  const n = start.length;
  const limit = options.evaluations ?? 200 * Math.max(1, n);
  const tolerance = options.tolerance ?? 1e-10;
  const step = options.step ?? 0.5;
  let evaluations = 0;
  const value = (p: Float64Array): number => {
    evaluations++;
    const v = f(p);
    return Number.isFinite(v) ? v : Infinity;
  };
  const points: Float64Array[] = [];
  const values: number[] = [];
  for (let i = 0; i <= n; i++) {
    const p = Float64Array.from(start);
    if (i > 0) p[i - 1] += step;
    points.push(p);
    values.push(value(p));
  }
  const order = Array.from({ length: n + 1 }, (_, i) => i);
  const centroid = new Float64Array(n);
  const trial = (from: Float64Array, towards: Float64Array, by: number): Float64Array => {
    const p = new Float64Array(n);
    for (let j = 0; j < n; j++) p[j] = from[j] + by * (towards[j] - from[j]);
    return p;
  };
  while (evaluations < limit) {
    order.sort((a, b) => values[a] - values[b] || a - b);
    const best = order[0];
    const worst = order[n];
    const second = order[n - 1];
    if (Math.abs(values[worst] - values[best]) <= tolerance * Math.max(1, Math.abs(values[best]))) break;
    centroid.fill(0);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) centroid[j] += points[order[i]][j] / n;
    const reflected = trial(centroid, points[worst], -1);
    const fr = value(reflected);
    if (fr < values[best]) {
      const expanded = trial(centroid, points[worst], -2);
      const fe = value(expanded);
      if (fe < fr) [points[worst], values[worst]] = [expanded, fe];
      else [points[worst], values[worst]] = [reflected, fr];
      continue;
    }
    if (fr < values[second]) {
      [points[worst], values[worst]] = [reflected, fr];
      continue;
    }
    // Contraction: outside when the reflection improved on the worst point, inside otherwise.
    const outside = fr < values[worst];
    const contracted = outside ? trial(centroid, reflected, 0.5) : trial(centroid, points[worst], 0.5);
    const fc = value(contracted);
    if (outside ? fc <= fr : fc < values[worst]) {
      [points[worst], values[worst]] = [contracted, fc];
      continue;
    }
    for (let i = 1; i <= n; i++) {
      const k = order[i];
      points[k] = trial(points[best], points[k], 0.5);
      values[k] = value(points[k]);
    }
  }
  let best = 0;
  for (let i = 1; i <= n; i++) if (values[i] < values[best]) best = i;
  return { point: points[best], value: values[best], evaluations };
}
