/**
 * The plain recurrent cell, h = φ(x·W + h₋·R + b) (Elman 1990), with φ = tanh (default) or ReLU. The ReLU form
 * starts its recurrent matrix at the identity and its bias at 0 (Le, Jaitly & Hinton 2015); the tanh form starts
 * it orthogonal (Saxe et al. 2014). Input weights are Glorot-uniform.
 *
 * Parameters: input [I, H], recurrent [H, H], bias [H].
 */
import { fail, noTensor } from '@weft/core';
import type { OperationKind, Tape, Tensor } from '@weft/core';
import type { CellMode, FusedSequence, SequenceResult } from './cell.js';
import { fillIdentity, fillOrthogonal, fillUniform, glorotBound } from './init.js';
import { PlanCell } from './plan-cell.js';
import { plainPlan } from './plans/plain.js';
import { projectInputs, runSteps } from './recurrence.js';
import { productShape, refill, refillStep } from '@weft/core/kernels';
import type { PlainStepGradients, StepActivation, StepAt } from '@weft/core/kernels';
import type { CommonCellOptions } from './recurrence.js';

/** The nonlinearity of a plain recurrent cell. */
export type PlainActivation = StepActivation;

export interface PlainOptions extends CommonCellOptions {
  /** `tanh` (default) or `relu`. */
  readonly activation?: PlainActivation;
}

export class PlainCell extends PlanCell implements FusedSequence {
  override readonly kind = 'plain';
  /** The cell's nonlinearity. */
  readonly activation: PlainActivation;
  /** Input weights [I, H]. */
  readonly input: Tensor;
  /** Recurrent weights [H, H]. */
  readonly recurrent: Tensor;
  /** Bias [H]. */
  readonly bias: Tensor;
  /** How the cell runs: `fused` or `composed` (the plan's step on the tape; may be changed between runs). */
  mode: CellMode;

  constructor(options: PlainOptions) {
    const activation = options.activation ?? 'tanh';
    if (activation !== 'tanh' && activation !== 'relu')
      fail('invalid_option', `${options.name ?? 'plain'}.activation`, "'tanh' or 'relu'", JSON.stringify(activation));
    super({
      ...options,
      plan: plainPlan,
      layer: { cell: 'plain', hidden: options.hidden, activation },
      initialise(value, { inputWidth, hidden }, random) {
        fillUniform(value('input'), hidden, inputWidth, 0, hidden, glorotBound(inputWidth, hidden), random);
        if (activation === 'relu') fillIdentity(value('recurrent'), hidden, hidden, 0);
        else fillOrthogonal(value('recurrent'), hidden, hidden, 0, random);
      },
    });
    this.mode = options.mode ?? 'fused';
    this.activation = activation;
    this.input = this.parameter('input');
    this.recurrent = this.parameter('recurrent');
    this.bias = this.parameter('bias');
  }

  runFused(tape: Tape, inputs: Tensor, state: readonly Tensor[], lengths: Int32Array | null): SequenceResult {
    const projected = projectInputs(tape, inputs, this.input, this.bias);
    return runSteps(tape, inputs.shape[0], state, lengths, (t, current) => [this.fusedStep(tape, projected, t, current[0], lengths)]);
  }

  private fusedStep(tape: Tape, projected: Tensor, step: number, hPrevious: Tensor, lengths: Int32Array | null): Tensor {
    const rows = hPrevious.shape[0];
    const hidden = this.hidden;
    const tracked = projected.tracked || hPrevious.tracked || this.recurrent.tracked;
    const h = tape.output([rows, hidden], this.dtype, tracked);
    tape.kernels.copyAt(h.data, 0, projected.data, step * rows * hidden, rows * hidden);
    tape.kernels.matmulInto(h.data, hPrevious.data, this.recurrent.data, refill(records.product, rows, hidden, hidden));
    tape.kernels.plainStepForward(h.data, hPrevious.data, this.activation, refillStep(records.at, rows, hidden, lengths, step));
    const saved = tape.record(plainStepKind, h);
    if (saved !== null) {
      saved.projected = projected;
      saved.hPrevious = hPrevious;
      saved.recurrent = this.recurrent;
      saved.activation = this.activation;
      saved.lengths = lengths;
      saved.step = step;
    }
    return h;
  }
}

/** What a fused plain step saves for backward. */
interface PlainStepSaved {
  /** The whole sequence's projected inputs x·W + b, [T·B, H]; this step reads rows `step`·B onward. */
  projected: Tensor;
  hPrevious: Tensor;
  recurrent: Tensor;
  /** φ: tanh or ReLU. */
  activation: PlainActivation;
  lengths: Int32Array | null;
  step: number;
}

const plainStepKind: OperationKind<PlainStepSaved> = {
  name: 'plainStep',
  saves: () => ({ projected: noTensor, hPrevious: noTensor, recurrent: noTensor, activation: 'tanh', lengths: null, step: 0 }),
  backward(node, tape): void {
    const { projected, hPrevious, recurrent, activation, lengths, step } = node.saved;
    const h = node.output;
    const rows = hPrevious.shape[0];
    const hidden = h.shape[1];
    const preGradient = tape.buffer(h.dtype, rows * hidden);
    const hPreviousGradient = hPrevious.tracked ? tape.gradientOf(hPrevious) : null;
    const gradients = records.gradients;
    gradients.pre = preGradient;
    gradients.hPrevious = hPreviousGradient;
    tape.kernels.plainStepBackward(gradients, h.gradient!, h.data, activation, refillStep(records.at, rows, hidden, lengths, step));
    if (projected.tracked) tape.kernels.addAt(tape.gradientOf(projected), step * rows * hidden, preGradient, 0, rows * hidden);
    if (hPreviousGradient !== null) tape.kernels.matmulInto(hPreviousGradient, preGradient, recurrent.data, refill(records.product, rows, hidden, hidden, 'b'));
    if (recurrent.tracked) tape.kernels.matmulInto(tape.gradientOf(recurrent), hPrevious.data, preGradient, refill(records.product, hidden, rows, hidden, 'a'));
  },
};

/** The step kernels' argument records, made once and refilled before each call (the calls are synchronous). */
const records = {
  product: productShape(0, 0, 0),
  at: { rows: 0, hidden: 0, lengths: null, step: 0 } as StepAt,
  gradients: { pre: noTensor.data, hPrevious: null } as PlainStepGradients,
};
