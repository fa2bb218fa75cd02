/**
 * Sequence layers: a cell run over a batch of sequences [T, B, I] (time-major, see cell.ts), one direction or
 * both, with an initial state in and the final state out, and per-row lengths for ragged batches under our
 * convention (sequence-ops.ts). The checks here are the boundary: shapes, lengths and states are validated once,
 * naming the layer and the argument.
 */
import { concat, fail, formatShape, sameShape } from '@weft/core';
import type { DType, Tape, Tensor } from '@weft/core';
import type { RecurrentCell, SequenceResult } from './cell.js';
import { hasFusedSequence, hasSequencePreparation } from './cell.js';
import { allActive, holdInactiveRows, reverseWithinLengths, stackSteps, timeStep } from './sequence-ops.js';

/** How a sequence layer runs a batch. */
export interface SequenceOptions {
  /** Per-row lengths (each in [0, T]); absent or null means every row has length T. */
  readonly lengths?: Int32Array | readonly number[] | null;
  /** One tensor [B, size] per state slot of the cell; absent means zeros. */
  readonly initialState?: readonly Tensor[];
}

/** Checks lengths against the batch and returns them as an Int32Array (or null when absent). */
export function checkLengths(where: string, lengths: Int32Array | readonly number[] | null | undefined, steps: number, rows: number): Int32Array | null {
  if (lengths === undefined || lengths === null) return null;
  if (lengths.length !== rows) fail('shape_mismatch', `${where}.lengths`, `${rows} lengths (one per batch row)`, `${lengths.length}`);
  for (let b = 0; b < rows; b++) {
    const length = lengths[b];
    if (!Number.isInteger(length) || length < 0 || length > steps) {
      fail('invalid_argument', `${where}.lengths[${b}]`, `a whole number in [0, ${steps}]`, String(length));
    }
  }
  return lengths instanceof Int32Array ? lengths : Int32Array.from(lengths);
}

function checkSequence(where: string, cell: RecurrentCell, inputs: Tensor): void {
  if (inputs.shape.length !== 3 || inputs.shape[2] !== cell.inputWidth) {
    fail('shape_mismatch', `${where}.inputs`, `[steps, batch, ${cell.inputWidth}]`, formatShape(inputs.shape));
  }
  if (inputs.dtype !== cell.dtype) fail('dtype_mismatch', `${where}.inputs`, cell.dtype, inputs.dtype);
}

function checkState(path: string, t: Tensor, shape: readonly number[], dtype: DType): void {
  if (!sameShape(t.shape, shape)) fail('shape_mismatch', path, formatShape(shape), formatShape(t.shape));
  if (t.dtype !== dtype) fail('dtype_mismatch', path, dtype, t.dtype);
}

function initialState(where: string, tape: Tape, cell: RecurrentCell, rows: number, given: readonly Tensor[] | undefined): readonly Tensor[] {
  if (given === undefined) {
    return cell.state.map((slot) => {
      const t = tape.output([rows, slot.width], cell.dtype, false);
      t.data.fill(0);
      return t;
    });
  }
  if (given.length !== cell.state.length) {
    fail('invalid_argument', `${where}.initialState`, `${cell.state.length} tensors (${cell.state.map((s) => s.name).join(', ')})`, `${given.length}`);
  }
  cell.state.forEach((slot, i) => checkState(`${where}.initialState.${slot.name}`, given[i], [rows, slot.width], cell.dtype));
  return given;
}

/** Runs one cell forward in time over the sequence. */
export function runSequence(tape: Tape, cell: RecurrentCell, inputs: Tensor, options: SequenceOptions = {}, where = 'layer'): SequenceResult {
  checkSequence(where, cell, inputs);
  const [steps, rows] = inputs.shape;
  const lengths = checkLengths(where, options.lengths, steps, rows);
  const state = initialState(where, tape, cell, rows, options.initialState);
  const mode = (cell as { mode?: string }).mode;
  if (hasFusedSequence(cell) && mode !== 'composed') return cell.runFused(tape, inputs, state, lengths);
  return runComposed(tape, cell, inputs, state, lengths);
}

/**
 * The general path, for any cell: one `cell.step` per time step, holding the state of finished rows (the input-only
 * part of a plan's step computed once for the whole sequence first: see `SequencePreparation`).
 */
function runComposed(tape: Tape, cell: RecurrentCell, inputs: Tensor, state: readonly Tensor[], lengths: Int32Array | null): SequenceResult {
  const steps = inputs.shape[0];
  const outputs: Tensor[] = [];
  const prepared = hasSequencePreparation(cell) ? cell.prepareSequence(tape, inputs) : null;
  let current = state;
  for (let t = 0; t < steps; t++) {
    const result = prepared !== null ? prepared.step(tape, t, current) : cell.step(tape, timeStep(tape, inputs, t), current);
    current = allActive(lengths, t) ? result.state : result.state.map((next, i) => holdInactiveRows(tape, next, current[i], lengths, t));
    outputs.push(result.output);
  }
  return { outputs: stackSteps(tape, outputs, lengths), state: current };
}

/**
 * Backward only: the cell reads each row reversed within its own length, and its outputs are put back in time order
 * (the backward half of a bidirectional layer, alone).
 */
export function runReversed(tape: Tape, cell: RecurrentCell, inputs: Tensor, options: SequenceOptions = {}, where = 'layer'): SequenceResult {
  checkSequence(where, cell, inputs);
  const [steps, rows] = inputs.shape;
  const lengths = checkLengths(where, options.lengths, steps, rows);
  const behind = runSequence(tape, cell, reverseWithinLengths(tape, inputs, lengths), { lengths, initialState: options.initialState }, `${where}.backward`);
  return { outputs: reverseWithinLengths(tape, behind.outputs, lengths), state: behind.state };
}

/**
 * Both directions: the forward cell reads the rows in time order, the backward cell reads each row reversed
 * within its own length; outputs are concatenated along the features [forward | backward], each at its own
 * time step. The state lists the forward cell's slots, then the backward cell's.
 */
export function runBidirectional(
  tape: Tape,
  forward: RecurrentCell,
  backward: RecurrentCell,
  inputs: Tensor,
  options: SequenceOptions = {},
  where = 'layer',
): SequenceResult {
  checkSequence(where, forward, inputs);
  const [steps, rows] = inputs.shape;
  const lengths = checkLengths(where, options.lengths, steps, rows);
  const slots = forward.state.length;
  const given = options.initialState;
  if (given !== undefined && given.length !== slots + backward.state.length) {
    fail('invalid_argument', `${where}.initialState`, `${slots + backward.state.length} tensors (forward then backward slots)`, `${given.length}`);
  }
  const ahead = runSequence(tape, forward, inputs, { lengths, initialState: given?.slice(0, slots) }, `${where}.forward`);
  const reversed = reverseWithinLengths(tape, inputs, lengths);
  const behind = runSequence(tape, backward, reversed, { lengths, initialState: given?.slice(slots) }, `${where}.backward`);
  const outputs = concat(tape, [ahead.outputs, reverseWithinLengths(tape, behind.outputs, lengths)]);
  return { outputs, state: [...ahead.state, ...behind.state] };
}
