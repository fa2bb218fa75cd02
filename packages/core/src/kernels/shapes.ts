/**
 * The argument records of the matrix kernels (a product's sizes and which operands are stored transposed, named
 * rather than passed as positional numbers and flags), and the refills of the kernels' records (step-records.ts). A caller makes its records once (per layer, per cell, per
 * call site) and refills `rows` when the batch changes, so no step allocates.
 */
import type { StepAt } from './step-records.js';

/** Which operands of a product are stored transposed: `a` stored [inner, rows], `b` stored [cols, inner]. */
export type Transposed = 'neither' | 'a' | 'b' | 'both';

/** The sizes of a product out [rows, cols] = a [rows, inner] · b [inner, cols]. */
export interface ProductSizes {
  /** Rows of the product (and of op(a)). */
  rows: number;
  /** The summed dimension: columns of op(a), rows of op(b). */
  inner: number;
  /** Columns of the product (and of op(b)). */
  cols: number;
}

/** A product's sizes and its operands' storage (as written when `transposed` is absent). */
export interface ProductShape extends ProductSizes {
  /** Which operands are stored transposed; as written when absent. */
  transposed?: Transposed;
}

/** A product's shape record: `productShape(rows, inner, cols, 'b')` for out = a · bᵀ. */
export function productShape(rows: number, inner: number, cols: number, transposed: Transposed = 'neither'): ProductShape {
  return { rows, inner, cols, transposed };
}

/** The storage of a product whose operands are stored transposed as the two flags say. */
export function transposedOf(a: boolean, b: boolean): Transposed {
  if (a) return b ? 'both' : 'a';
  return b ? 'b' : 'neither';
}

/** True when the product's left operand is stored transposed. */
export function transposesA(shape: ProductShape): boolean {
  return shape.transposed === 'a' || shape.transposed === 'both';
}

/** True when the product's right operand is stored transposed. */
export function transposesB(shape: ProductShape): boolean {
  return shape.transposed === 'b' || shape.transposed === 'both';
}

/** Sets a product record's sizes and storage in place and returns it (for records made once and refilled per call). */
export function refill(shape: ProductShape, rows: number, inner: number, cols: number, transposed: Transposed = 'neither'): ProductShape {
  shape.rows = rows;
  shape.inner = inner;
  shape.cols = cols;
  shape.transposed = transposed;
  return shape;
}

/** Sets a step record's place in place and returns it (for records made once and refilled per step). */
export function refillStep(at: StepAt, rows: number, hidden: number, lengths: Int32Array | null, step: number): StepAt {
  at.rows = rows;
  at.hidden = hidden;
  at.lengths = lengths;
  at.step = step;
  return at;
}
