/**
 * Working memory owned by the kernels themselves (packed panels for matmul). Each slot grows to the largest size
 * asked of it and is then reused; growth goes through the shared pool so it is counted like every other buffer.
 * Scratch is always f64: packed operands are widened once, so the inner loops see one array type whichever dtype
 * the caller uses (f32 values widen to f64 exactly).
 */
import { sharedPool } from '../pool.js';

const slots: Float64Array[] = [new Float64Array(0), new Float64Array(0)];

export const SCRATCH_LEFT = 0;
export const SCRATCH_RIGHT = 1;

export function scratch(slot: number, length: number): Float64Array {
  let buffer = slots[slot];
  if (buffer.length < length) {
    let grown = Math.max(64, buffer.length);
    while (grown < length) grown *= 2;
    if (buffer.length > 0) sharedPool.give(buffer);
    buffer = sharedPool.take('f64', grown) as Float64Array;
    slots[slot] = buffer;
  }
  return buffer;
}
