import { Random, add, matmul, multiply, randomUniform, sigmoid, subtract, tanh, trainable, zeros } from '@weft/core';
import type { DType, Tape, Tensor } from '@weft/core';
import type { CellStep, NamedParameter, RecurrentCell, StateSlot } from '@weft/cells';

/**
 * A minimal gated unit (Zhou, Wu, Zhang & Zhou 2016, "Minimal gated unit for recurrent neural networks"):
 *   f = σ(x·Wf + h₋·Uf + bf),  n = tanh(x·Wn + (f ⊙ h₋)·Un + bn),  h = h₋ + f ⊙ (n − h₋).
 */
export class MinimalGatedCell implements RecurrentCell {
  readonly kind = 'minimal-gated';
  readonly state: readonly StateSlot[];
  readonly hidden: number;
  private readonly weights: Record<'inputGate' | 'recurrentGate' | 'gateBias' | 'inputCandidate' | 'recurrentCandidate' | 'candidateBias', Tensor>;

  constructor(
    readonly inputWidth: number,
    hidden: number,
    readonly dtype: DType = 'f32',
    seed = 0,
  ) {
    const random = new Random(seed);
    const matrix = (rows: number): Tensor => trainable(randomUniform([rows, hidden], random, -1 / Math.sqrt(rows), 1 / Math.sqrt(rows), dtype));
    const bias = (): Tensor => trainable(zeros([hidden], dtype));
    this.hidden = hidden;
    this.state = [{ name: 'h', width: hidden }];
    this.weights = {
      inputGate: matrix(inputWidth),
      recurrentGate: matrix(hidden),
      gateBias: bias(),
      inputCandidate: matrix(inputWidth),
      recurrentCandidate: matrix(hidden),
      candidateBias: bias(),
    };
  }

  parameters(): readonly NamedParameter[] {
    return Object.entries(this.weights).map(([name, tensor]) => ({ name, tensor }));
  }

  step(tape: Tape, x: Tensor, [h]: readonly Tensor[]): CellStep {
    const w = this.weights;
    const f = sigmoid(tape, add(tape, add(tape, matmul(tape, x, w.inputGate), matmul(tape, h, w.recurrentGate)), w.gateBias));
    const n = tanh(tape, add(tape, add(tape, matmul(tape, x, w.inputCandidate), matmul(tape, multiply(tape, f, h), w.recurrentCandidate)), w.candidateBias));
    const next = add(tape, h, multiply(tape, f, subtract(tape, n, h)));
    return { output: next, state: [next] };
  }
}
