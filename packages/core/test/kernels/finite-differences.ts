/**
 * Central finite differences, (f(x + h·e_i) − f(x − h·e_i)) / 2h per entry of one array (the definition of the
 * derivative; error O(h²) plus rounding of about 1e-16·|f|/h, so about 1e-9 here): the outside reference for the
 * step kernels' backward halves.
 */
export function numericGradient(objective: () => number, x: Float64Array, h = 1e-6): Float64Array {
  const gradient = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) {
    const kept = x[i];
    x[i] = kept + h;
    const up = objective();
    x[i] = kept - h;
    const down = objective();
    x[i] = kept;
    gradient[i] = (up - down) / (2 * h);
  }
  return gradient;
}

/** Σ weights ⊙ values: a scalar that every entry of `values` reaches with its own weight. */
export function weighted(values: Float64Array, weights: Float64Array): number {
  let s = 0;
  for (let i = 0; i < values.length; i++) s += values[i] * weights[i];
  return s;
}

/** Uniform values in [low, high) from a seeded generator's `between`. */
export function uniform(random: { between(low: number, high: number): number }, length: number, low = -1, high = 1): Float64Array {
  return Float64Array.from({ length }, () => random.between(low, high));
}
