/**
 * Working memory owned by the kernels themselves (packed panels for matmul). Each slot grows to the largest size
 * asked of it, doubling, and is then reused, so a program makes a handful of these arrays in its life. They are
 * made directly, not through a buffer pool: the JavaScript forward kernels of the inference runtime use this
 * module, and the pool would cost the runtime bundle about 0.4 KiB gzipped for these few arrays.
 * Scratch is always f64: packed operands are widened once, so the inner loops see one array type whichever dtype
 * the caller uses (f32 values widen to f64 exactly).
 */
const slots: Float64Array[] = [new Float64Array(0), new Float64Array(0)];

export const SCRATCH_LEFT = 0;
export const SCRATCH_RIGHT = 1;

export function scratch(slot: number, length: number): Float64Array {
  let buffer = slots[slot];
  if (buffer.length < length) {
    let grown = Math.max(64, buffer.length);
    while (grown < length) grown *= 2;
    buffer = new Float64Array(grown);
    slots[slot] = buffer;
  }
  return buffer;
}
