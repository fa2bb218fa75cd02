/**
 * Tape operations on time-major sequences [T, B, F] (see cell.ts), with per-row lengths for ragged batches.
 *
 * Our convention for a row b of length L < T (written down in the package README): its outputs at steps ≥ L are
 * zero, its state is held from step L − 1, its final state is the state after its last valid step, and a
 * reverse direction starts at step L − 1 of that row.
 */
import type { FloatArray, OperationKind, Tape, TapeNode, Tensor } from '@weft/core';

/** True when row `row` is still inside its sequence at `step`. */
export function isActive(lengths: Int32Array | null, row: number, step: number): boolean {
  return lengths === null || step < lengths[row];
}

/** True when every row is inside its sequence at `step`. */
export function allActive(lengths: Int32Array | null, step: number): boolean {
  if (lengths === null) return true;
  for (let b = 0; b < lengths.length; b++) if (step >= lengths[b]) return false;
  return true;
}

const timeStepKind: OperationKind = {
  name: 'timeStep',
  backward(node: TapeNode, tape: Tape): void {
    const sequence = node.first as Tensor;
    const g = (node.output as Tensor).gradient!;
    const gs = tape.gradientOf(sequence);
    const offset = node.number0;
    for (let i = 0; i < g.length; i++) gs[offset + i] += g[i];
  },
};

/** Step t of a [T, B, F] sequence, as a [B, F] tensor (a copy). */
export function timeStep(tape: Tape, sequence: Tensor, step: number): Tensor {
  const [, rows, width] = sequence.shape;
  const out = tape.output([rows, width], sequence.dtype, sequence.tracked);
  const offset = step * rows * width;
  out.data.set(sequence.data.subarray(offset, offset + rows * width));
  const node = tape.record(timeStepKind, out, sequence);
  if (node !== null) node.number0 = offset;
  return out;
}

const stackKind: OperationKind = {
  name: 'stackSteps',
  backward(node: TapeNode, tape: Tape): void {
    const parts = node.list as readonly Tensor[];
    const g = (node.output as Tensor).gradient!;
    const lengths = node.integers;
    for (let t = 0; t < parts.length; t++) {
      const part = parts[t];
      if (!part.tracked) continue;
      const [rows, width] = part.shape;
      const gp = tape.gradientOf(part);
      const base = t * rows * width;
      for (let b = 0; b < rows; b++) {
        if (!isActive(lengths, b, t)) continue;
        for (let j = 0; j < width; j++) gp[b * width + j] += g[base + b * width + j];
      }
    }
  },
};

/** Stacks T tensors [B, F] into [T, B, F], writing zeros at steps beyond each row's length. */
export function stackSteps(tape: Tape, parts: readonly Tensor[], lengths: Int32Array | null): Tensor {
  const [rows, width] = parts[0].shape;
  let tracked = false;
  for (const part of parts) tracked = tracked || part.tracked;
  const out = tape.output([parts.length, rows, width], parts[0].dtype, tracked);
  for (let t = 0; t < parts.length; t++) {
    const base = t * rows * width;
    const data = parts[t].data;
    for (let b = 0; b < rows; b++) {
      const active = isActive(lengths, b, t);
      for (let j = 0; j < width; j++) out.data[base + b * width + j] = active ? data[b * width + j] : 0;
    }
  }
  const node = tape.record(stackKind, out, null);
  if (node !== null) {
    node.list = parts.slice();
    node.integers = lengths;
  }
  return out;
}

const reverseKind: OperationKind = {
  name: 'reverseWithinLengths',
  backward(node: TapeNode, tape: Tape): void {
    const sequence = node.first as Tensor;
    const g = (node.output as Tensor).gradient!;
    reverseRows(tape.gradientOf(sequence), g, sequence.shape, node.integers, true);
  },
};

/**
 * Reverses each row within its own length: out[s, b] = in[L_b − 1 − s, b] for s < L_b, and 0 beyond. Applied
 * twice it gives back the valid part, so it serves both to feed a reverse direction and to put its outputs back
 * in time order.
 */
export function reverseWithinLengths(tape: Tape, sequence: Tensor, lengths: Int32Array | null): Tensor {
  const out = tape.output(sequence.shape, sequence.dtype, sequence.tracked);
  reverseRows(out.data, sequence.data, sequence.shape, lengths, false);
  const node = tape.record(reverseKind, out, sequence);
  if (node !== null) node.integers = lengths;
  return out;
}

/**
 * The permutation itself. Forward (`accumulate` false): target[s, b] = source[L_b−1−s, b], zero beyond. Backward
 * (`accumulate` true): target[L_b−1−s, b] += source[s, b].
 */
function reverseRows(
  target: Float32Array | Float64Array,
  source: Float32Array | Float64Array,
  shape: readonly number[],
  lengths: Int32Array | null,
  accumulate: boolean,
): void {
  const [steps, rows, width] = shape;
  for (let b = 0; b < rows; b++) {
    const length = lengths === null ? steps : lengths[b];
    for (let s = 0; s < steps; s++) {
      const at = (s * rows + b) * width;
      if (s >= length) {
        if (!accumulate) for (let j = 0; j < width; j++) target[at + j] = 0;
        continue;
      }
      const mirrored = ((length - 1 - s) * rows + b) * width;
      if (accumulate) for (let j = 0; j < width; j++) target[mirrored + j] += source[at + j];
      else for (let j = 0; j < width; j++) target[at + j] = source[mirrored + j];
    }
  }
}

const holdKind: OperationKind = {
  name: 'holdInactiveRows',
  backward(node: TapeNode, tape: Tape): void {
    const next = node.first as Tensor;
    const previous = node.second as Tensor;
    const g = (node.output as Tensor).gradient!;
    const lengths = node.integers;
    const step = node.number0;
    const [rows, width] = next.shape;
    const gn = next.tracked ? tape.gradientOf(next) : null;
    const gp = previous.tracked ? tape.gradientOf(previous) : null;
    for (let b = 0; b < rows; b++) {
      const target = isActive(lengths, b, step) ? gn : gp;
      if (target === null) continue;
      for (let j = 0; j < width; j++) target[b * width + j] += g[b * width + j];
    }
  },
};

/** Row b of the result is `next`'s row where the row is active at `step`, else `previous`'s (its state is held). */
export function holdInactiveRows(tape: Tape, next: Tensor, previous: Tensor, lengths: Int32Array | null, step: number): Tensor {
  const [rows, width] = next.shape;
  const out = tape.output(next.shape, next.dtype, next.tracked || previous.tracked);
  for (let b = 0; b < rows; b++) {
    const source = isActive(lengths, b, step) ? next.data : previous.data;
    for (let j = 0; j < width; j++) out.data[b * width + j] = source[b * width + j];
  }
  const node = tape.record(holdKind, out, next, previous);
  if (node !== null) {
    node.integers = lengths;
    node.number0 = step;
  }
  return out;
}

const lastKind: OperationKind = {
  name: 'lastSteps',
  backward(node: TapeNode, tape: Tape): void {
    const sequence = node.first as Tensor;
    const g = (node.output as Tensor).gradient!;
    const gs = tape.gradientOf(sequence);
    const [steps, rows, width] = sequence.shape;
    const lengths = node.integers;
    for (let b = 0; b < rows; b++) {
      const length = lengths === null ? steps : lengths[b];
      if (length === 0) continue;
      const at = ((length - 1) * rows + b) * width;
      for (let j = 0; j < width; j++) gs[at + j] += g[b * width + j];
    }
  },
};

/**
 * Copies each row's features at its last valid step from time-major `data` [steps, rows, width] into `out`
 * [rows, width] (zeros for a row of length 0; `lengths` null means every row has `steps` steps); returns `out`. The
 * one home of the last-valid-step rule, for the tape's `lastSteps` and for code that reads outputs off the tape.
 */
export function copyLastSteps<T extends FloatArray>(out: T, data: ArrayLike<number>, lengths: Int32Array | null, steps: number, rows: number, width: number): T {
  for (let b = 0; b < rows; b++) {
    const length = lengths === null ? steps : lengths[b];
    const at = ((length - 1) * rows + b) * width;
    for (let j = 0; j < width; j++) out[b * width + j] = length === 0 ? 0 : data[at + j];
  }
  return out;
}

/** Each row's output at its last valid step, [B, F] from [T, B, F] (zeros for a row of length 0). */
export function lastSteps(tape: Tape, sequence: Tensor, lengths: Int32Array | null): Tensor {
  const [steps, rows, width] = sequence.shape;
  const out = tape.output([rows, width], sequence.dtype, sequence.tracked);
  copyLastSteps(out.data, sequence.data, lengths, steps, rows, width);
  const node = tape.record(lastKind, out, sequence);
  if (node !== null) node.integers = lengths;
  return out;
}

const maskKind: OperationKind = {
  name: 'zeroBeyondLengths',
  backward(node: TapeNode, tape: Tape): void {
    const sequence = node.first as Tensor;
    const g = (node.output as Tensor).gradient!;
    const gs = tape.gradientOf(sequence);
    const [, rows, width] = sequence.shape;
    const lengths = node.integers as Int32Array;
    for (let p = 0; p < sequence.size / width; p++) {
      if (Math.floor(p / rows) >= lengths[p % rows]) continue;
      for (let j = 0; j < width; j++) gs[p * width + j] += g[p * width + j];
    }
  },
};

/** The sequence with every position beyond its row's length set to zero (and no gradient flowing there). */
export function zeroBeyondLengths(tape: Tape, sequence: Tensor, lengths: Int32Array): Tensor {
  const [, rows, width] = sequence.shape;
  const out = tape.output(sequence.shape, sequence.dtype, sequence.tracked);
  for (let p = 0; p < sequence.size / width; p++) {
    const keep = Math.floor(p / rows) < lengths[p % rows];
    for (let j = 0; j < width; j++) out.data[p * width + j] = keep ? sequence.data[p * width + j] : 0;
  }
  const node = tape.record(maskKind, out, sequence);
  if (node !== null) node.integers = lengths;
  return out;
}

const joinKind: OperationKind = {
  name: 'joinSteps',
  backward(node: TapeNode, tape: Tape): void {
    const first = node.first as Tensor;
    const second = node.second as Tensor;
    const g = (node.output as Tensor).gradient!;
    if (first.tracked) {
      const gf = tape.gradientOf(first);
      for (let i = 0; i < first.size; i++) gf[i] += g[i];
    }
    if (second.tracked) {
      const gs = tape.gradientOf(second);
      for (let i = 0; i < second.size; i++) gs[i] += g[first.size + i];
    }
  },
};

/** Two sequences [T1, B, F] and [T2, B, F] one after the other in time: [T1 + T2, B, F]. */
export function joinSteps(tape: Tape, first: Tensor, second: Tensor): Tensor {
  const [t1, rows, width] = first.shape;
  const [t2] = second.shape;
  const out = tape.output([t1 + t2, rows, width], first.dtype, first.tracked || second.tracked);
  for (let i = 0; i < first.size; i++) out.data[i] = first.data[i];
  for (let i = 0; i < second.size; i++) out.data[first.size + i] = second.data[i];
  tape.record(joinKind, out, first, second);
  return out;
}
