/**
 * The GRU cell (Cho et al. 2014); equations in kernels/gru-step.ts.
 *
 * Parameters (gate order z, r, n):
 *   input [I, 3H], bias [3H] (input-side biases, with the recurrent-side biases of z and r folded in),
 *   recurrent [H, 2H] (z and r), recurrentCandidate [H, H] (n), and, only with `resetAfterProduct`,
 *   recurrentCandidateBias [H] (the bias inside the reset: n = tanh(a_n + r ⊙ (h₋·R_n + b_Rn))).
 * `resetAfterProduct` false (default) applies the reset gate to h₋ before the recurrent product (ONNX
 * linear_before_reset = 0); true applies it after (ONNX linear_before_reset = 1).
 * Initialisation: input Glorot-uniform per gate block, each recurrent H×H block orthogonal, biases 0.
 */
import { noTensor } from '@weft/core';
import type { FloatArray, OperationKind, Tape, Tensor } from '@weft/core';
import type { CellMode, FusedSequence, SequenceResult } from './cell.js';
import { fillOrthogonal, fillUniform, glorotBound } from './init.js';
import { PlanCell } from './plan-cell.js';
import { gruPlan } from './plans/gru.js';
import { projectInputs, runSteps } from './recurrence.js';
import { productShape, refill, refillStep } from '@weft/core/kernels';
import type { GruFinishInputs, GruForm, GruSaved, GruStepGradients, GruStepOut, StepAt } from '@weft/core/kernels';
import type { CommonCellOptions } from './recurrence.js';

export interface GruOptions extends CommonCellOptions {
  /** Apply the reset gate after the recurrent product (ONNX linear_before_reset = 1). Default false. */
  readonly resetAfterProduct?: boolean;
}

export class GruCell extends PlanCell implements FusedSequence {
  override readonly kind = 'gru';
  /** True when the reset gate applies after the recurrent product (ONNX linear_before_reset = 1). */
  readonly resetAfterProduct: boolean;
  /** Input weights [I, 3H], gate blocks z, r, n. */
  readonly input: Tensor;
  /** Bias [3H], gate blocks z, r, n (the recurrent-side biases of z and r folded in). */
  readonly bias: Tensor;
  /** Recurrent weights of the update and reset gates [H, 2H]. */
  readonly recurrent: Tensor;
  /** Recurrent weights of the candidate [H, H]. */
  readonly recurrentCandidate: Tensor;
  /** The candidate's recurrent bias [H] (inside the reset), only with `resetAfterProduct`; else null. */
  readonly recurrentCandidateBias: Tensor | null;
  /** How the cell runs: `fused` or `composed` (the plan's step on the tape; may be changed between runs). */
  mode: CellMode;

  constructor(options: GruOptions) {
    const resetAfterProduct = options.resetAfterProduct === true;
    super({
      ...options,
      plan: gruPlan,
      layer: { cell: 'gru', hidden: options.hidden, resetAfterProduct },
      initialise(value, { inputWidth, hidden }, random) {
        const bound = glorotBound(inputWidth, hidden);
        for (let gate = 0; gate < 3; gate++) fillUniform(value('input'), 3 * hidden, inputWidth, gate * hidden, hidden, bound, random);
        fillOrthogonal(value('recurrent'), 2 * hidden, hidden, 0, random);
        fillOrthogonal(value('recurrent'), 2 * hidden, hidden, hidden, random);
        fillOrthogonal(value('recurrentCandidate'), hidden, hidden, 0, random);
      },
    });
    this.mode = options.mode ?? 'fused';
    this.resetAfterProduct = resetAfterProduct;
    this.input = this.parameter('input');
    this.bias = this.parameter('bias');
    this.recurrent = this.parameter('recurrent');
    this.recurrentCandidate = this.parameter('recurrentCandidate');
    this.recurrentCandidateBias = resetAfterProduct ? this.parameter('recurrentCandidateBias') : null;
  }

  runFused(tape: Tape, inputs: Tensor, state: readonly Tensor[], lengths: Int32Array | null): SequenceResult {
    const projected = projectInputs(tape, inputs, this.input, this.bias);
    return runSteps(tape, inputs.shape[0], state, lengths, (t, current) => [this.fusedStep(tape, projected, t, current[0], lengths)]);
  }

  private fusedStep(tape: Tape, projected: Tensor, step: number, hPrevious: Tensor, lengths: Int32Array | null): Tensor {
    const rows = hPrevious.shape[0];
    const hidden = this.hidden;
    const dtype = this.dtype;
    const offset = step * rows * 3 * hidden;
    const candidateBias = this.recurrentCandidateBias;
    const tracked = projected.tracked || hPrevious.tracked || this.recurrent.tracked || this.recurrentCandidate.tracked || (candidateBias?.tracked ?? false);
    const gates = tape.buffer(dtype, rows * 3 * hidden);
    const updateReset = tape.buffer(dtype, rows * 2 * hidden);
    const product = records.product;
    tape.kernels.matmul(updateReset, hPrevious.data, this.recurrent.data, refill(product, rows, hidden, 2 * hidden));
    tape.kernels.gruUpdateReset(gates, projected.data, offset, updateReset, rows, hidden);
    const candidate = tape.buffer(dtype, rows * hidden);
    let resetHidden = null;
    if (candidateBias === null) {
      resetHidden = tape.buffer(dtype, rows * hidden);
      tape.kernels.gruResetHidden(resetHidden, gates, hPrevious.data, rows, hidden);
      tape.kernels.matmul(candidate, resetHidden, this.recurrentCandidate.data, refill(product, rows, hidden, hidden));
    } else {
      tape.kernels.matmul(candidate, hPrevious.data, this.recurrentCandidate.data, refill(product, rows, hidden, hidden));
      tape.kernels.addRow(candidate, candidate, candidateBias.data, rows, hidden);
    }
    const h = tape.output([rows, hidden], dtype, tracked);
    const { out, inputs } = records;
    out.h = h.data;
    out.gates = gates;
    inputs.projected = projected.data;
    inputs.projectedOffset = offset;
    inputs.candidate = candidate;
    inputs.hPrevious = hPrevious.data;
    tape.kernels.gruStepFinish(out, inputs, formOf(candidateBias), refillStep(records.at, rows, hidden, lengths, step));
    const saved = tape.record(gruStepKind, h);
    if (saved !== null) {
      saved.projected = projected;
      saved.hPrevious = hPrevious;
      saved.recurrent = this.recurrent;
      saved.recurrentCandidate = this.recurrentCandidate;
      saved.candidateBias = candidateBias;
      saved.gates = gates;
      saved.candidate = candidate;
      saved.resetHidden = resetHidden;
      saved.lengths = lengths;
      saved.step = step;
    }
    return h;
  }
}

/** What a fused GRU step saves for backward. */
interface GruStepSaved {
  /** The whole sequence's projected inputs x·W + b, [T·B, 3H]; this step reads rows `step`·B onward. */
  projected: Tensor;
  hPrevious: Tensor;
  recurrent: Tensor;
  recurrentCandidate: Tensor;
  /** The candidate's recurrent bias with the reset applied after the product; null for the reset-before form. */
  candidateBias: Tensor | null;
  /** The gates z, r and the candidate n of this step, [B, 3H]. */
  gates: FloatArray;
  /** The candidate's recurrent term before the reset, [B, H]. */
  candidate: FloatArray;
  /** r ⊙ h₋ (reset-before form only), [B, H]. */
  resetHidden: FloatArray | null;
  lengths: Int32Array | null;
  step: number;
}

const gruStepKind: OperationKind<GruStepSaved> = {
  name: 'gruStep',
  saves: () => ({
    projected: noTensor,
    hPrevious: noTensor,
    recurrent: noTensor,
    recurrentCandidate: noTensor,
    candidateBias: null,
    gates: noTensor.data,
    candidate: noTensor.data,
    resetHidden: null,
    lengths: null,
    step: 0,
  }),
  backward(node, tape): void {
    const { projected, hPrevious, recurrent, recurrentCandidate, candidateBias, gates, candidate, resetHidden, lengths, step } = node.saved;
    const h = node.output;
    const resetAfter = candidateBias !== null;
    const rows = hPrevious.shape[0];
    const hidden = h.shape[1];
    const dtype = h.dtype;
    const updateResetGradient = tape.buffer(dtype, rows * 2 * hidden);
    const candidateGradient = tape.buffer(dtype, rows * hidden);
    const productGradient = tape.buffer(dtype, rows * hidden);
    const hPreviousGradient = hPrevious.tracked ? tape.gradientOf(hPrevious) : null;
    const { gradients, saved: read, product } = records;
    gradients.updateReset = updateResetGradient;
    gradients.candidate = candidateGradient;
    gradients.product = productGradient;
    gradients.hPrevious = hPreviousGradient;
    read.gates = gates;
    read.candidate = candidate;
    read.hPrevious = hPrevious.data;
    const at = refillStep(records.at, rows, hidden, lengths, step);
    tape.kernels.gruBackwardCandidate(gradients, h.gradient!, read, formOf(candidateBias), at);
    if (!resetAfter) {
      // δ(r ⊙ h₋) = δq · R_nᵀ; δR_n += (r ⊙ h₋)ᵀ · δq
      const resetHiddenGradient = tape.buffer(dtype, rows * hidden);
      tape.kernels.matmul(resetHiddenGradient, productGradient, recurrentCandidate.data, refill(product, rows, hidden, hidden, 'b'));
      tape.kernels.gruBackwardReset(gradients, resetHiddenGradient, read, at);
      if (recurrentCandidate.tracked) {
        tape.kernels.matmulInto(tape.gradientOf(recurrentCandidate), resetHidden!, productGradient, refill(product, hidden, rows, hidden, 'a'));
      }
    } else {
      // q = h₋·R_n + b_Rn: δR_n += h₋ᵀ · δq, δb_Rn += Σ_rows δq, δh₋ += δq · R_nᵀ
      if (recurrentCandidate.tracked) {
        tape.kernels.matmulInto(tape.gradientOf(recurrentCandidate), hPrevious.data, productGradient, refill(product, hidden, rows, hidden, 'a'));
      }
      if (candidateBias!.tracked) tape.kernels.sumRowsInto(tape.gradientOf(candidateBias!), productGradient, rows, hidden);
      if (hPreviousGradient !== null)
        tape.kernels.matmulInto(hPreviousGradient, productGradient, recurrentCandidate.data, refill(product, rows, hidden, hidden, 'b'));
    }
    if (projected.tracked) {
      const gp = tape.gradientOf(projected);
      const offset = step * rows * 3 * hidden;
      for (let b = 0; b < rows; b++) {
        const to = offset + b * 3 * hidden;
        for (let k = 0; k < 2 * hidden; k++) gp[to + k] += updateResetGradient[b * 2 * hidden + k];
        for (let j = 0; j < hidden; j++) gp[to + 2 * hidden + j] += candidateGradient[b * hidden + j];
      }
    }
    // δh₋ += δa_zr · R_zrᵀ; δR_zr += h₋ᵀ · δa_zr
    if (hPreviousGradient !== null)
      tape.kernels.matmulInto(hPreviousGradient, updateResetGradient, recurrent.data, refill(product, rows, 2 * hidden, hidden, 'b'));
    if (recurrent.tracked)
      tape.kernels.matmulInto(tape.gradientOf(recurrent), hPrevious.data, updateResetGradient, refill(product, hidden, rows, 2 * hidden, 'a'));
  },
};

/** The step kernels' form: the reset after the candidate product when the cell has that product's bias. */
function formOf(candidateBias: Tensor | null): GruForm {
  return candidateBias === null ? 'resetBefore' : 'resetAfter';
}

/** The step kernels' argument records, made once and refilled before each call (the calls are synchronous). */
const records = {
  product: productShape(0, 0, 0),
  at: { rows: 0, hidden: 0, lengths: null, step: 0 } as StepAt,
  out: { h: noTensor.data, gates: noTensor.data } as GruStepOut,
  inputs: { projected: noTensor.data, projectedOffset: 0, candidate: noTensor.data, hPrevious: noTensor.data } as GruFinishInputs,
  gradients: { updateReset: noTensor.data, candidate: noTensor.data, product: noTensor.data, hPrevious: null } as GruStepGradients,
  saved: { gates: noTensor.data, candidate: noTensor.data, hPrevious: noTensor.data } as GruSaved,
};
