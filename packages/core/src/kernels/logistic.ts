/** The logistic function in its overflow-safe form (see core's sigmoid kernel): no exponent is ever positive. */
export function logistic(x: number): number {
  if (x >= 0) return 1 / (1 + Math.exp(-x));
  const e = Math.exp(x);
  return e / (1 + e);
}
