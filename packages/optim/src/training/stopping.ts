/**
 * The stopping rule (early stopping with patience, common practice): after each validation, a loss lower than the
 * best so far becomes the best and its weights are copied aside; otherwise the count of stale validations grows,
 * and the run stops when it reaches the patience. At the end the kept weights can be put back.
 */
import type { Backend, FloatArray, Tensor } from '@weft/core';
import type { ValidationResult } from './evaluation.js';

export class BestValidation {
  /** The best validation loss so far (Infinity before the first validation). */
  loss = Infinity;
  /** The step of that validation (−1 before the first). */
  step = -1;
  /** Validations since the best one. */
  stale = 0;
  /** The best validation's figures in this run (null before the first). */
  result: ValidationResult | null = null;
  /** Copies of the parameters at the best validation (null before the first). */
  parameters: FloatArray[] | null = null;

  constructor(
    private readonly backend: Backend,
    private readonly patience: number | undefined,
  ) {}

  /** Records a validation at `step`; returns true when patience has run out and the run should stop. */
  observe(result: ValidationResult, step: number, parameters: readonly Tensor[]): boolean {
    if (result.loss < this.loss) {
      this.loss = result.loss;
      this.step = step;
      this.result = result;
      this.parameters ??= this.copies(parameters);
      parameters.forEach((p, i) => (this.parameters as FloatArray[])[i].set(p.data));
      this.stale = 0;
      return false;
    }
    return this.patience !== undefined && ++this.stale >= this.patience;
  }

  /** Buffers for copies of `parameters`, from the backend's pool. */
  copies(parameters: readonly Tensor[]): FloatArray[] {
    return parameters.map((p) => this.backend.pool.take(p.dtype, p.size));
  }

  /** Puts the best weights back into `parameters`; returns their step, or null when there are none. */
  putBack(parameters: readonly Tensor[]): number | null {
    if (this.parameters === null) return null;
    parameters.forEach((p, i) => p.data.set((this.parameters as FloatArray[])[i]));
    return this.step;
  }
}
