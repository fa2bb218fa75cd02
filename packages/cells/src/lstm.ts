/**
 * The LSTM cell with forget gate (Gers, Schmidhuber & Cummins 2000) and optional peepholes (Gers & Schmidhuber
 * 2000); equations in kernels/lstm-step.ts.
 *
 * Parameters (gate order i, f, g, o in every gate-stacked tensor; g is the cell candidate):
 *   input [I, 4H], recurrent [H, 4H], bias [4H], peephole [3H] (order i, f, o; only with `peepholes`).
 * Initialisation: input Glorot-uniform per gate block, recurrent orthogonal per H×H block, bias 0 except the
 * forget block, which starts at `forgetBias` (default 1: Jozefowicz, Zaremba & Sutskever 2015, "An empirical
 * exploration of recurrent network architectures"), peepholes 0.
 */
import { fail, noTensor } from '@weft/core';
import type { FloatArray, OperationKind, Tape, Tensor } from '@weft/core';
import type { CellMode, FusedSequence, SequenceResult } from './cell.js';
import { fillOrthogonal, fillUniform, glorotBound } from './init.js';
import { PlanCell } from './plan-cell.js';
import { lstmPlan } from './plans/lstm.js';
import { projectInputs, runSteps } from './recurrence.js';
import { productShape, refill, refillStep } from '@weft/core/kernels';
import type { LstmArriving, LstmSaved, LstmState, LstmStepGradients, LstmStepOut, StepAt } from '@weft/core/kernels';
import type { CommonCellOptions } from './recurrence.js';

export interface LstmOptions extends CommonCellOptions {
  /** Peephole connections from the cell to the gates. Default false. */
  readonly peepholes?: boolean;
  /** Starting value of the forget gate's bias. Default 1. */
  readonly forgetBias?: number;
}

export class LstmCell extends PlanCell implements FusedSequence {
  override readonly kind = 'lstm';
  /** Input weights [I, 4H], gate blocks i, f, g, o. */
  readonly input: Tensor;
  /** Recurrent weights [H, 4H], gate blocks i, f, g, o. */
  readonly recurrent: Tensor;
  /** Bias [4H], gate blocks i, f, g, o. */
  readonly bias: Tensor;
  /** Peephole weights [3H] (i, f, o), or null without peepholes. */
  readonly peephole: Tensor | null;
  /** How the cell runs: `fused` or `composed` (the plan's step on the tape; may be changed between runs). */
  mode: CellMode;

  constructor(options: LstmOptions) {
    const forgetBias = options.forgetBias ?? 1;
    if (typeof forgetBias !== 'number' || !Number.isFinite(forgetBias))
      fail('invalid_option', `${options.name ?? 'lstm'}.forgetBias`, 'a finite number', String(forgetBias));
    super({
      ...options,
      plan: lstmPlan,
      layer: { cell: 'lstm', hidden: options.hidden, peepholes: options.peepholes === true },
      initialise(value, { inputWidth, hidden }, random) {
        const bound = glorotBound(inputWidth, hidden);
        for (let gate = 0; gate < 4; gate++) {
          fillUniform(value('input'), 4 * hidden, inputWidth, gate * hidden, hidden, bound, random);
          fillOrthogonal(value('recurrent'), 4 * hidden, hidden, gate * hidden, random);
        }
        value('bias').fill(forgetBias, hidden, 2 * hidden);
      },
    });
    this.mode = options.mode ?? 'fused';
    this.input = this.parameter('input');
    this.recurrent = this.parameter('recurrent');
    this.bias = this.parameter('bias');
    this.peephole = options.peepholes === true ? this.parameter('peephole') : null;
  }

  runFused(tape: Tape, inputs: Tensor, state: readonly Tensor[], lengths: Int32Array | null): SequenceResult {
    const projected = projectInputs(tape, inputs, this.input, this.bias);
    return runSteps(tape, inputs.shape[0], state, lengths, (t, current) => this.fusedStep(tape, projected, t, current, lengths));
  }

  private fusedStep(tape: Tape, projected: Tensor, step: number, state: readonly Tensor[], lengths: Int32Array | null): readonly Tensor[] {
    const [hPrevious, cPrevious] = state;
    const rows = hPrevious.shape[0];
    const hidden = this.hidden;
    const width = 4 * hidden;
    const tracked = projected.tracked || hPrevious.tracked || cPrevious.tracked || this.recurrent.tracked || (this.peephole?.tracked ?? false);
    const gates = tape.buffer(this.dtype, rows * width);
    tape.kernels.copyAt(gates, 0, projected.data, step * rows * width, rows * width);
    // a = (x·W + b) + h₋·R
    tape.kernels.matmulInto(gates, hPrevious.data, this.recurrent.data, refill(records.product, rows, hidden, width));
    const h = tape.output([rows, hidden], this.dtype, tracked);
    const c = tape.output([rows, hidden], this.dtype, tracked);
    const tanhCell = tape.buffer(this.dtype, rows * hidden);
    const { out, previous } = records;
    out.h = h.data;
    out.c = c.data;
    out.gates = gates;
    out.tanhCell = tanhCell;
    previous.h = hPrevious.data;
    previous.c = cPrevious.data;
    tape.kernels.lstmStepForward(out, previous, this.peephole?.data ?? null, refillStep(records.at, rows, hidden, lengths, step));
    const saved = tape.record(lstmStepKind, h, c);
    if (saved !== null) {
      saved.projected = projected;
      saved.hPrevious = hPrevious;
      saved.cPrevious = cPrevious;
      saved.recurrent = this.recurrent;
      saved.peephole = this.peephole;
      saved.gates = gates;
      saved.tanhCell = tanhCell;
      saved.lengths = lengths;
      saved.step = step;
    }
    return [h, c];
  }
}

/** What a fused LSTM step saves for backward (outputs: h, then c). */
interface LstmStepSaved {
  /** The whole sequence's projected inputs x·W + b, [T·B, 4H]; this step reads rows `step`·B onward. */
  projected: Tensor;
  hPrevious: Tensor;
  cPrevious: Tensor;
  recurrent: Tensor;
  peephole: Tensor | null;
  /** The gate activations i, f, g, o of this step, [B, 4H]. */
  gates: FloatArray;
  /** tanh(c) of this step, [B, H]. */
  tanhCell: FloatArray;
  lengths: Int32Array | null;
  step: number;
}

const lstmStepKind: OperationKind<LstmStepSaved> = {
  name: 'lstmStep',
  saves: () => ({
    projected: noTensor,
    hPrevious: noTensor,
    cPrevious: noTensor,
    recurrent: noTensor,
    peephole: null,
    gates: noTensor.data,
    tanhCell: noTensor.data,
    lengths: null,
    step: 0,
  }),
  backward(node, tape): void {
    const { projected, hPrevious, cPrevious, recurrent, peephole, gates, tanhCell, lengths, step } = node.saved;
    const h = node.output;
    const c = node.secondOutput as Tensor;
    const rows = hPrevious.shape[0];
    const hidden = h.shape[1];
    const width = 4 * hidden;
    const gateGradient = tape.buffer(h.dtype, rows * width);
    const hPreviousGradient = hPrevious.tracked ? tape.gradientOf(hPrevious) : null;
    const { gradients, arriving, saved: read } = records;
    gradients.gates = gateGradient;
    gradients.hPrevious = hPreviousGradient;
    gradients.cPrevious = cPrevious.tracked ? tape.gradientOf(cPrevious) : null;
    gradients.peephole = peephole?.tracked ? tape.gradientOf(peephole) : null;
    arriving.h = h.gradient;
    arriving.c = c.gradient;
    read.gates = gates;
    read.tanhCell = tanhCell;
    read.cPrevious = cPrevious.data;
    read.c = c.data;
    read.peephole = peephole === null ? null : peephole.data;
    tape.kernels.lstmStepBackward(gradients, arriving, read, refillStep(records.at, rows, hidden, lengths, step));
    if (projected.tracked) tape.kernels.addAt(tape.gradientOf(projected), step * rows * width, gateGradient, 0, rows * width);
    // δh₋ += δa · Rᵀ and δR += h₋ᵀ · δa.
    if (hPreviousGradient !== null) tape.kernels.matmulInto(hPreviousGradient, gateGradient, recurrent.data, refill(records.product, rows, width, hidden, 'b'));
    if (recurrent.tracked) tape.kernels.matmulInto(tape.gradientOf(recurrent), hPrevious.data, gateGradient, refill(records.product, hidden, rows, width, 'a'));
  },
};

/** The step kernels' argument records, made once and refilled before each call (the calls are synchronous). */
const records = {
  product: productShape(0, 0, 0),
  at: { rows: 0, hidden: 0, lengths: null, step: 0 } as StepAt,
  out: { h: noTensor.data, c: noTensor.data, gates: noTensor.data, tanhCell: noTensor.data } as LstmStepOut,
  previous: { h: noTensor.data, c: noTensor.data } as LstmState,
  gradients: { gates: noTensor.data, hPrevious: null, cPrevious: null, peephole: null } as LstmStepGradients,
  arriving: { h: null, c: null } as LstmArriving,
  saved: { gates: noTensor.data, tanhCell: noTensor.data, cPrevious: noTensor.data, c: noTensor.data, peephole: null } as LstmSaved,
};
