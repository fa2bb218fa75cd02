/**
 * What every optimiser shares. An optimiser is made with a base learning rate α and updates parameter values in
 * place from their gradient buffers; `update(parameters, multiplier)` takes the schedule's factor η_t, so one
 * step uses the rate α·η_t (and decoupled decay η_t·λ, as in Loshchilov & Hutter 2019, Algorithm 2).
 *
 * Per-parameter state (moments, accumulators) is created on the first update, one buffer per parameter and slot,
 * and is exposed as plain data for checkpoints: `state()` and `restore()` round-trip it exactly (f32 and f64
 * values are exact as JSON numbers).
 */
import { backendOf, fail, formatShape } from '@weft/core';
import type { FloatArray, KernelTable, Tensor, UpdateRuleState } from '@weft/core';

/** Checks a learning-rate-like option: a finite number > 0 (or ≥ 0 when `zeroAllowed`). */
export function checkRate(value: unknown, path: string, zeroAllowed = false): number {
  const ok = typeof value === 'number' && Number.isFinite(value) && (zeroAllowed ? value >= 0 : value > 0);
  if (!ok) fail('invalid_option', path, zeroAllowed ? 'a finite number ≥ 0' : 'a finite number > 0', shown(value));
  return value as number;
}

/** Checks a decay-like factor in [0, 1). */
export function checkFactor(value: unknown, path: string): number {
  if (typeof value !== 'number' || !(value >= 0 && value < 1)) fail('invalid_option', path, 'a number in [0, 1)', shown(value));
  return value;
}

function shown(value: unknown): string {
  return typeof value === 'number' ? String(value) : (JSON.stringify(value) ?? String(value));
}

/**
 * An optimiser: updates parameters in place from their gradients, keeping per-parameter slots (moments, velocities) it
 * can save and restore exactly.
 */
export abstract class UpdateRule {
  /** The rule's kind, as saved in its state. */
  abstract readonly kind: string;
  /** The base learning rate α. */
  readonly rate: number;
  /** Updates taken so far (Adam's t). */
  protected steps = 0;
  private readonly slotNames: readonly string[];
  private slots: Map<string, FloatArray[]> | null = null;
  private sizes: number[] = [];

  protected constructor(rate: number, slotNames: readonly string[], path: string) {
    this.rate = checkRate(rate, `${path}.rate`);
    this.slotNames = slotNames;
  }

  /** Updates taken so far. */
  get updates(): number {
    return this.steps;
  }

  /** One update of every parameter from its gradient, at rate α·multiplier. */
  update(parameters: readonly Tensor[], multiplier = 1): void {
    if (!(multiplier >= 0) || !Number.isFinite(multiplier))
      fail('invalid_argument', `${this.kind}.update.multiplier`, 'a finite number ≥ 0', String(multiplier));
    this.prepare(parameters);
    this.steps++;
    for (let i = 0; i < parameters.length; i++) {
      const p = parameters[i];
      this.apply(i, p.data, p.gradient as FloatArray, multiplier, backendOf(p.data).kernels);
    }
  }

  /** The buffer of `slot` for parameter `index`. */
  protected slot(name: string, index: number): FloatArray {
    return (this.slots as Map<string, FloatArray[]>).get(name)![index];
  }

  /** Updates one parameter's values in place, with the kernels of the backend that holds them. */
  protected abstract apply(index: number, values: FloatArray, gradient: FloatArray, multiplier: number, kernels: KernelTable): void;

  /** The rule's state as plain data (slots copied), for a checkpoint. */
  state(): UpdateRuleState {
    const slots: Record<string, number[][]> = {};
    for (const name of this.slotNames) slots[name] = (this.slots?.get(name) ?? []).map((buffer) => Array.from(buffer));
    return { kind: this.kind, steps: this.steps, slots };
  }

  /** Continues from a saved state, for these parameters (checked against it). */
  restore(state: UpdateRuleState, parameters: readonly Tensor[]): void {
    if (state.kind !== this.kind) fail('invalid_argument', 'optimizer state.kind', this.kind, String(state.kind));
    if (!Number.isInteger(state.steps) || state.steps < 0) fail('invalid_argument', 'optimizer state.steps', 'a whole number ≥ 0', String(state.steps));
    this.slots = null;
    this.steps = state.steps;
    if (state.steps === 0 && Object.values(state.slots).every((list) => list.length === 0)) return;
    this.prepare(parameters);
    for (const name of this.slotNames) {
      const saved = state.slots[name];
      if (saved === undefined || saved.length !== parameters.length) {
        fail('invalid_argument', `optimizer state.slots.${name}`, `${parameters.length} arrays`, String(saved?.length ?? 'nothing'));
      }
      saved.forEach((values, i) => {
        const buffer = this.slot(name, i);
        if (values.length !== buffer.length) fail('shape_mismatch', `optimizer state.slots.${name}[${i}]`, `${buffer.length} values`, `${values.length}`);
        for (let k = 0; k < values.length; k++) buffer[k] = values[k];
      });
    }
  }

  private prepare(parameters: readonly Tensor[]): void {
    if (this.slots === null) {
      this.slots = new Map();
      this.sizes = parameters.map((p) => p.size);
      for (const name of this.slotNames)
        this.slots.set(
          name,
          parameters.map((p) => backendOf(p.data).pool.takeZeroed(p.dtype, p.size)),
        );
    }
    if (parameters.length !== this.sizes.length) {
      fail('invalid_argument', `${this.kind}.update.parameters`, `the same ${this.sizes.length} parameters on every update`, `${parameters.length}`);
    }
    for (let i = 0; i < parameters.length; i++) {
      const p = parameters[i];
      if (p.size !== this.sizes[i]) fail('shape_mismatch', `${this.kind}.update.parameters[${i}]`, `${this.sizes[i]} elements`, `${formatShape(p.shape)}`);
      if (p.gradient === null) {
        fail('invalid_argument', `${this.kind}.update.parameters[${i}]`, 'a trainable tensor with a gradient', p.label());
      }
    }
  }
}
