/**
 * Tape operations on time-major sequences [T, B, F] (see cell.ts), with per-row lengths for ragged batches (their
 * arithmetic, where the runtime needs it too, is in sequence-rows.ts).
 *
 * Our convention for a row b of length L < T (written down in the package README): its outputs at steps ≥ L are
 * zero, its state is held from step L − 1, its final state is the state after its last valid step, and a
 * reverse direction starts at step L − 1 of that row.
 *
 * Why one file of this length: every operation here applies that one convention, through `isActive` and the saved
 * record of a ragged sequence they share; apart they would each restate it.
 */
import { noTensor } from '@weft/core';
import type { FloatArray, OperationKind, Tape, Tensor } from '@weft/core';
import { reverseRows, zeroBeyond } from './sequence-rows.js';
import type { SequenceShape } from './sequence-rows.js';

/** What an operation on a ragged sequence saves: its input and the rows' lengths (null: every row is full). */
interface RaggedSaved {
  sequence: Tensor;
  lengths: Int32Array | null;
}

const savesRagged = (): RaggedSaved => ({ sequence: noTensor, lengths: null });

function recordRagged(tape: Tape, kind: OperationKind<RaggedSaved>, out: Tensor, sequence: Tensor, lengths: Int32Array | null): void {
  const saved = tape.record(kind, out);
  if (saved === null) return;
  saved.sequence = sequence;
  saved.lengths = lengths;
}

/** The sizes of a [T, B, F] tensor. */
function shapeOf(sequence: Tensor): SequenceShape {
  const [steps, rows, width] = sequence.shape;
  return { steps, rows, width };
}

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

/** What `timeStep` saves: the sequence and where the step's rows start in it. */
interface TimeStepSaved {
  sequence: Tensor;
  offset: number;
}

const timeStepKind: OperationKind<TimeStepSaved> = {
  name: 'timeStep',
  saves: () => ({ sequence: noTensor, offset: 0 }),
  backward(node, tape): void {
    const { sequence, offset } = node.saved;
    const g = node.output.gradient!;
    const gs = tape.gradientOf(sequence);
    for (let i = 0; i < g.length; i++) gs[offset + i] += g[i];
  },
};

/** Step t of a [T, B, F] sequence, as a [B, F] tensor (a copy). */
export function timeStep(tape: Tape, sequence: Tensor, step: number): Tensor {
  const [, rows, width] = sequence.shape;
  const out = tape.output([rows, width], sequence.dtype, sequence.tracked);
  const offset = step * rows * width;
  out.data.set(sequence.data.subarray(offset, offset + rows * width));
  const saved = tape.record(timeStepKind, out);
  if (saved !== null) {
    saved.sequence = sequence;
    saved.offset = offset;
  }
  return out;
}

/** What `stackSteps` saves: the steps stacked, first to last, and the rows' lengths. */
interface StackSaved {
  parts: readonly Tensor[];
  lengths: Int32Array | null;
}

const stackKind: OperationKind<StackSaved> = {
  name: 'stackSteps',
  saves: () => ({ parts: [], lengths: null }),
  backward(node, tape): void {
    const { parts, lengths } = node.saved;
    const g = node.output.gradient!;
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
  const saved = tape.record(stackKind, out);
  if (saved !== null) {
    saved.parts = parts.slice();
    saved.lengths = lengths;
  }
  return out;
}

const reverseKind: OperationKind<RaggedSaved> = {
  name: 'reverseWithinLengths',
  saves: savesRagged,
  backward(node, tape): void {
    const { sequence, lengths } = node.saved;
    reverseRows(tape.gradientOf(sequence), node.output.gradient!, shapeOf(sequence), lengths, true);
  },
};

/**
 * Reverses each row within its own length: out[s, b] = in[L_b − 1 − s, b] for s < L_b, and 0 beyond. Applied
 * twice it gives back the valid part, so it serves both to feed a reverse direction and to put its outputs back
 * in time order.
 */
export function reverseWithinLengths(tape: Tape, sequence: Tensor, lengths: Int32Array | null): Tensor {
  const out = tape.output(sequence.shape, sequence.dtype, sequence.tracked);
  reverseRows(out.data, sequence.data, shapeOf(sequence), lengths);
  recordRagged(tape, reverseKind, out, sequence, lengths);
  return out;
}

/** What `holdInactiveRows` saves: the new and the held state, the rows' lengths and the step. */
interface HoldSaved {
  next: Tensor;
  previous: Tensor;
  lengths: Int32Array | null;
  step: number;
}

const holdKind: OperationKind<HoldSaved> = {
  name: 'holdInactiveRows',
  saves: () => ({ next: noTensor, previous: noTensor, lengths: null, step: 0 }),
  backward(node, tape): void {
    const { next, previous, lengths, step } = node.saved;
    const g = node.output.gradient!;
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
  const saved = tape.record(holdKind, out);
  if (saved !== null) {
    saved.next = next;
    saved.previous = previous;
    saved.lengths = lengths;
    saved.step = step;
  }
  return out;
}

const lastKind: OperationKind<RaggedSaved> = {
  name: 'lastSteps',
  saves: savesRagged,
  backward(node, tape): void {
    const { sequence, lengths } = node.saved;
    const g = node.output.gradient!;
    const gs = tape.gradientOf(sequence);
    const [steps, rows, width] = sequence.shape;
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
export function copyLastSteps<T extends FloatArray>(
  out: T,
  data: ArrayLike<number>,
  lengths: Int32Array | null,
  steps: number,
  rows: number,
  width: number,
): T {
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
  recordRagged(tape, lastKind, out, sequence, lengths);
  return out;
}

const maskKind: OperationKind<RaggedSaved> = {
  name: 'zeroBeyondLengths',
  saves: savesRagged,
  backward(node, tape): void {
    const sequence = node.saved.sequence;
    zeroBeyond(tape.gradientOf(sequence), node.output.gradient!, shapeOf(sequence), node.saved.lengths as Int32Array, true);
  },
};

/** The sequence with every position beyond its row's length set to zero (and no gradient flowing there). */
export function zeroBeyondLengths(tape: Tape, sequence: Tensor, lengths: Int32Array): Tensor {
  const out = tape.output(sequence.shape, sequence.dtype, sequence.tracked);
  zeroBeyond(out.data, sequence.data, shapeOf(sequence), lengths);
  recordRagged(tape, maskKind, out, sequence, lengths);
  return out;
}

/** What `joinSteps` saves: the earlier and the later sequence. */
interface JoinSaved {
  first: Tensor;
  second: Tensor;
}

const joinKind: OperationKind<JoinSaved> = {
  name: 'joinSteps',
  saves: () => ({ first: noTensor, second: noTensor }),
  backward(node, tape): void {
    const { first, second } = node.saved;
    const g = node.output.gradient!;
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
  const saved = tape.record(joinKind, out);
  if (saved !== null) {
    saved.first = first;
    saved.second = second;
  }
  return out;
}
