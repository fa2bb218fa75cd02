/**
 * The cell contract. A recurrent cell declares
 *   - its parameters, by stable names (`input`, `recurrent`, `bias`, …), each a trainable tensor;
 *   - its state: one or more vectors per batch row, each with a name and a width (`h`, or `h` and `c`);
 *   - a step: (input batch [B, inputWidth], state) → (output [B, hidden], new state), written with core
 *     operations on the tape it is given, so that its gradients come from the tape.
 * Nothing else is needed to run a cell of your own in every sequence layer (stacked, bidirectional, ragged).
 *
 * Built-in cells may also offer a fused path over a whole sequence (`FusedSequence`), which the layers use when
 * present; it must give the same numbers as `step`.
 *
 * Layout of a batch of sequences, everywhere in weft: time-major, [T, B, F] (step, batch row, feature), stored
 * row-major, so the features of row b at step t start at (t·B + b)·F.
 */
import type { DType, Tape, Tensor } from '@weft/core';

export interface StateSlot {
  /** The slot's name (`h`, `c`). */
  readonly name: string;
  /** Its width per batch row. */
  readonly width: number;
}

export interface NamedParameter {
  /** Stable name within the cell (`recurrent`); layers prefix it (`layers[0].forward.recurrent`). */
  readonly name: string;
  /** The trainable tensor itself; its `gradient` holds ∂loss after a reverse sweep. */
  readonly tensor: Tensor;
}

export interface CellStep {
  /** The step's output, [B, hidden]. */
  readonly output: Tensor;
  /** The new state, one tensor [B, width] per slot, in slot order. */
  readonly state: readonly Tensor[];
}

export interface RecurrentCell {
  /** What kind of cell this is (`lstm`, `gru`, `plain`, or your own word). */
  readonly kind: string;
  /** Features per batch row at each step (the width of `input` in `step`). */
  readonly inputWidth: number;
  /** The hidden size: the width of the step's output per batch row (a model's layer of this cell is `hidden` wide per direction). */
  readonly hidden: number;
  /** The element type of the cell's parameters and of every tensor it computes. */
  readonly dtype: DType;
  /** The state slots carried from step to step, in order (`h`; or `h` then `c` for an LSTM). */
  readonly state: readonly StateSlot[];
  /** Every trainable tensor of the cell, with its stable name, in a fixed order. */
  parameters(): readonly NamedParameter[];
  /**
   * One time step for a batch: `input` [B, inputWidth] and the state (one [B, width] per slot) in, the output and the new
   * state out, recorded on `tape`.
   */
  step(tape: Tape, input: Tensor, state: readonly Tensor[]): CellStep;
}

export interface SequenceResult {
  /** Outputs [T, B, hidden]; zero at steps beyond a row's length. */
  readonly outputs: Tensor;
  /** The state after each row's last valid step, one tensor [B, width] per slot. */
  readonly state: readonly Tensor[];
}

/** A faster whole-sequence path a cell may offer; layers use it when the cell's mode asks for it. */
export interface FusedSequence {
  /**
   * Runs the whole sequence `inputs` [T, B, inputWidth] from `state`; rows stop at `lengths` (null: all run T steps).
   * Must equal stepping with `step`.
   */
  runFused(tape: Tape, inputs: Tensor, state: readonly Tensor[], lengths: Int32Array | null): SequenceResult;
}

/** True when the cell offers the whole-sequence path (`runFused`). */
export function hasFusedSequence(cell: RecurrentCell): cell is RecurrentCell & FusedSequence {
  return typeof (cell as Partial<FusedSequence>).runFused === 'function';
}

/**
 * A cell that computes, once per sequence, the parts of its step that read only the input and its vectors (the input
 * projection, a bias added to it): one product over every step's rows instead of one per step, and one gradient
 * product for its weights. `runComposed` (layer.ts) asks for it before stepping; each step must give the same numbers
 * as `step` on that step's input, up to the order of the sums in the larger product.
 */
export interface SequencePreparation {
  /**
   * Runs the input-only part over `inputs` [T, B, inputWidth]; the returned step t takes the state and gives step t's
   * result. Null when stepping as usual is faster for this shape (the caller then calls `step`).
   */
  prepareSequence(tape: Tape, inputs: Tensor): PreparedSequence | null;
}

/** A sequence whose input-only part is computed: its steps, in time order. */
export interface PreparedSequence {
  /** Step `t` from `state` (one [B, width] per slot), recorded on `tape`. */
  step(tape: Tape, t: number, state: readonly Tensor[]): CellStep;
}

/** True when the cell computes its input-only part once per sequence (`prepareSequence`). */
export function hasSequencePreparation(cell: RecurrentCell): cell is RecurrentCell & SequencePreparation {
  return typeof (cell as Partial<SequencePreparation>).prepareSequence === 'function';
}

/** How a built-in cell runs: `fused` (one node per step, hand-written backward) or `composed` (core operations). */
export type CellMode = 'fused' | 'composed';
