/**
 * What the three built-in cells share: parameter creation, the checks at a cell's boundary, and the fused
 * whole-sequence path. The fused path projects every step's input at once (one [T·B, I] × [I, G·H] product plus
 * the bias, common practice for recurrent layers), then runs one fused tape node per step, each reading its
 * step's rows of the projection.
 */
import { Random, add, fail, formatShape, matmul, reshape, trainable, zeros } from '@weft/core';
import type { DType, Tape, Tensor } from '@weft/core';
import type { CellMode, SequenceResult } from './cell.js';
import { hiddenProblem } from './description.js';
import { stackSteps } from './sequence-ops.js';

/** The options every built-in cell takes. */
export interface CommonCellOptions {
  /** Features per batch row at each step. */
  readonly inputWidth: number;
  /** Width of the hidden state (and of the output) per batch row. */
  readonly hidden: number;
  /** Element type of the parameters: `f32` (default) or `f64` (for gradient checks). */
  readonly dtype?: DType;
  /** Seed or generator for the initial weights. Default seed 0. */
  readonly random?: Random | number | string;
  /** `fused` (default) or `composed` (the reference, built from core operations). */
  readonly mode?: CellMode;
  /** Name used in messages (`layers[0].forward`). */
  readonly name?: string;
}

export interface ResolvedCellOptions {
  readonly name: string;
  readonly inputWidth: number;
  readonly hidden: number;
  readonly dtype: DType;
  readonly random: Random;
  readonly mode: CellMode;
}

/** Checks and fills in the common options, naming the cell in any message. */
export function resolveCellOptions(options: CommonCellOptions, kind: string): ResolvedCellOptions {
  const name = options.name ?? kind;
  // Options of earlier versions, refused by name so that a program written for them learns the new word.
  if ('hiddenSize' in options)
    fail(
      'invalid_option',
      `${name}.hiddenSize`,
      'the option hidden (hiddenSize was renamed)',
      JSON.stringify((options as { hiddenSize?: unknown }).hiddenSize),
    );
  if ('inputSize' in options)
    fail(
      'invalid_option',
      `${name}.inputSize`,
      'the option inputWidth (inputSize was renamed)',
      JSON.stringify((options as { inputSize?: unknown }).inputSize),
    );
  return {
    name,
    inputWidth: requirePositiveWhole(options.inputWidth, `${name}.inputWidth`),
    hidden: requireHidden(options.hidden, `${name}.hidden`),
    dtype: options.dtype ?? 'f32',
    random: options.random instanceof Random ? options.random : new Random(options.random ?? 0),
    mode: options.mode ?? 'fused',
  };
}

export function createParameter(name: string, shape: readonly number[], dtype: DType): Tensor {
  return trainable(zeros(shape, dtype), name);
}

/** `value` as a hidden size, or a WeftError at `path` (the one bound: `hiddenProblem`). */
export function requireHidden(value: unknown, path: string): number {
  const problem = hiddenProblem(value);
  if (problem !== null) fail('invalid_option', path, problem, JSON.stringify(value));
  return value as number;
}

export function requirePositiveWhole(value: unknown, path: string): number {
  if (typeof value !== 'number' || !Number.isInteger(value) || value < 1) {
    fail('invalid_option', path, 'a whole number ≥ 1', JSON.stringify(value));
  }
  return value;
}

/** Checks a step's input [B, inputWidth] and state tensors [B, width] at the cell's boundary. */
export function checkStepArguments(
  where: string,
  input: Tensor,
  inputWidth: number,
  state: readonly Tensor[],
  slots: readonly { name: string; width: number }[],
  dtype: DType,
): void {
  if (input.shape.length !== 2 || input.shape[1] !== inputWidth) {
    fail('shape_mismatch', `${where}.input`, `[batch, ${inputWidth}]`, formatShape(input.shape));
  }
  if (input.dtype !== dtype) fail('dtype_mismatch', `${where}.input`, dtype, input.dtype);
  const rows = input.shape[0];
  if (state.length !== slots.length) {
    fail('invalid_argument', `${where}.state`, `${slots.length} tensors (${slots.map((s) => s.name).join(', ')})`, `${state.length}`);
  }
  slots.forEach((slot, i) => {
    const t = state[i];
    if (t.shape.length !== 2 || t.shape[0] !== rows || t.shape[1] !== slot.width) {
      fail('shape_mismatch', `${where}.state.${slot.name}`, formatShape([rows, slot.width]), formatShape(t.shape));
    }
    if (t.dtype !== dtype) fail('dtype_mismatch', `${where}.state.${slot.name}`, dtype, t.dtype);
  });
}

/** The input projection of a whole sequence: [T, B, I] → [T·B, G] = x·W + b. */
export function projectInputs(tape: Tape, inputs: Tensor, weights: Tensor, bias: Tensor): Tensor {
  const [steps, rows, width] = inputs.shape;
  return add(tape, matmul(tape, reshape(tape, inputs, [steps * rows, width]), weights), bias);
}

/**
 * Runs `step` for every time step and stacks the outputs (state slot 0 is the output); `step` returns the new
 * state.
 */
export function runSteps(
  tape: Tape,
  steps: number,
  state: readonly Tensor[],
  lengths: Int32Array | null,
  step: (t: number, state: readonly Tensor[]) => readonly Tensor[],
): SequenceResult {
  const outputs: Tensor[] = [];
  let current = state;
  for (let t = 0; t < steps; t++) {
    current = step(t, current);
    outputs.push(current[0]);
  }
  return { outputs: stackSteps(tape, outputs, lengths), state: current };
}
