/**
 * The one tolerance rule of weft's tests: |a − b| ≤ tol · max(1, |a|, |b|), i.e. absolute near zero and relative
 * for large values. Returns the index of the first element that breaks it, or −1.
 */
export function firstFar(actual: ArrayLike<number>, expected: ArrayLike<number>, tol: number): number {
  if (actual.length !== expected.length) return Math.min(actual.length, expected.length);
  for (let i = 0; i < actual.length; i++) {
    const a = actual[i];
    const b = expected[i];
    if (!(Math.abs(a - b) <= tol * Math.max(1, Math.abs(a), Math.abs(b)))) return i;
  }
  return -1;
}

/** The largest |a − b| / max(1, |a|, |b|) over two arrays of one length. */
export function worstGap(actual: ArrayLike<number>, expected: ArrayLike<number>): number {
  let worst = 0;
  for (let i = 0; i < actual.length; i++) {
    const gap = Math.abs(actual[i] - expected[i]) / Math.max(1, Math.abs(actual[i]), Math.abs(expected[i]));
    if (!(gap <= worst)) worst = gap;
  }
  return worst;
}
