/**
 * A cell's step plan: everything about one kind of recurrent cell that does not depend on where it runs. A plan
 * gives the cell's state slots, its parameters (names, shapes, gate order) and its step, written once against a
 * `StepWriter`. Tracing the step (trace.ts) turns it into a `StepProgram`, a short list of operations on numbered
 * values, which then runs three ways from the same list:
 *
 * - on the tape, for training and gradient checks (cells/src/plan-cell.ts);
 * - on buffers made once, for the inference runtime (forward.ts; a built-in cell may add a faster whole-layer step
 *   on the runtime's kernels, which must give the same numbers);
 * - as ONNX nodes, for export (io/src/onnx).
 *
 * The layout (parameter names and shapes), the parameter count, the weight-file checks and the runtime all read a
 * cell's parameters from its plan, so a cell's shape and equations live in its plan file only.
 *
 * Values in a step are [rows, width] blocks (one row per batch row), or rows: a vector parameter (or columns of
 * one) that applies to every batch row alike.
 */
import type { FloatArray, Random } from '@weft/core/base';
import type { LayerDescription } from '../description-types.js';

/** One parameter's name and shape. */
export interface ParameterLayout {
  /** The parameter's stable name, as in weight files and messages (`layers[0].forward.input`). */
  readonly name: string;
  /** Its shape (`[input width, gates × hidden]` for an input matrix). */
  readonly shape: readonly number[];
}

/** One state slot of a cell: carried from step to step, [rows, width]. */
export interface PlanSlot {
  /** The slot's name (`h`, `c`). */
  readonly name: string;
  /** Its width per batch row. */
  readonly width: number;
}

/** The sizes a plan is asked about: one direction's cell of one layer. */
export interface CellShape {
  /** Features per batch row the cell reads at each step. */
  readonly inputWidth: number;
  /** The layer's hidden size: the width of the cell's output. */
  readonly hidden: number;
  /** The layer's description (its cell word, and any options of the cell's own). */
  readonly layer: LayerDescription;
}

/** A value inside a traced step. Made only by a `StepWriter`. */
export interface StepValue {
  /** Its number in the program. */
  readonly id: number;
  /** Its width per batch row. */
  readonly width: number;
  /** True for a row that applies to every batch row alike (a vector parameter or columns of one). */
  readonly row: boolean;
}

/**
 * What a plan's step is written with. Every operation returns a new value; none changes its operands. `add` and
 * `multiply` take a row as `b` (added to, or multiplying, every batch row of `a`); `subtract` takes equal widths.
 */
export interface StepWriter {
  /** The step's input, [rows, inputWidth]. */
  readonly input: StepValue;
  /** The state before the step, one value per slot, in slot order. */
  readonly state: readonly StepValue[];
  /** A one-dimensional parameter, as a row. */
  vector(name: string): StepValue;
  /** value · W, where W is the two-dimensional parameter `weights` [value width, columns]. */
  product(value: StepValue, weights: string): StepValue;
  /** a + b. */
  add(a: StepValue, b: StepValue): StepValue;
  /** a − b (equal widths, neither a row unless both are). */
  subtract(a: StepValue, b: StepValue): StepValue;
  /** a ⊙ b. */
  multiply(a: StepValue, b: StepValue): StepValue;
  /** The logistic function 1 / (1 + e^−a). */
  sigmoid(a: StepValue): StepValue;
  /** tanh a. */
  tanh(a: StepValue): StepValue;
  /** max(a, 0). */
  relu(a: StepValue): StepValue;
  /** Columns [start, start + width) of a (a gate's block of a gate-stacked value). */
  columns(a: StepValue, start: number, width: number): StepValue;
}

/** A recurrent cell's plan; see the top of this file. */
export interface CellPlan {
  /** The cell's word in a model description (`lstm`; a cell of your own: a namespaced word such as `lab.mgu`). */
  readonly kind: string;
  /** The state slots carried from step to step, in order; the first is the step's output. */
  state(shape: CellShape): readonly PlanSlot[];
  /** Every parameter, in the order weight files list them, with its name within the cell and its shape. */
  parameters(shape: CellShape): readonly ParameterLayout[];
  /** The step: returns the new state, one value per slot, in slot order (the first is the output). */
  step(writer: StepWriter, shape: CellShape): readonly StepValue[];
  /**
   * Sets the parameters' starting values for training (each given by name, zero-filled), drawing only from
   * `random`; absent: the default of cells/src/plan-cell.ts (gate blocks orthogonal or Glorot-uniform, vectors 0).
   */
  initialise?(value: (name: string) => FloatArray, shape: CellShape, random: Random): void;
}

/** The operations of a traced step. */
export type StepOperation = 'product' | 'add' | 'subtract' | 'multiply' | 'sigmoid' | 'tanh' | 'relu' | 'columns';

/** One operation of a traced step: `out` ← operation(a, b). */
export interface StepInstruction {
  /** What it computes. */
  readonly operation: StepOperation;
  /** The value it makes. */
  readonly out: number;
  /** Its first (or only) operand. */
  readonly a: number;
  /** Its second operand, or −1. */
  readonly b: number;
  /** The weight matrix of a product; '' otherwise. */
  readonly weights: string;
  /** The first column taken by `columns`; 0 otherwise. */
  readonly start: number;
}

/** Where a value of a traced step comes from. */
export type ValueSource = 'input' | 'state' | 'vector' | 'computed';

/** One value of a traced step. */
export interface ProgramValue {
  /** Where it comes from. */
  readonly source: ValueSource;
  /** Its width per batch row. */
  readonly width: number;
  /** True for a row applied to every batch row. */
  readonly row: boolean;
  /** The slot's name of a state value, or the parameter's name of a vector; '' otherwise. */
  readonly name: string;
  /** The slot of a state value; −1 otherwise. */
  readonly slot: number;
}

/** A plan's step traced for one cell's sizes: the list every place that runs the cell follows. */
export interface StepProgram {
  /** The plan's kind. */
  readonly kind: string;
  /** Features per batch row read at each step. */
  readonly inputWidth: number;
  /** The layer's hidden size. */
  readonly hidden: number;
  /** The state slots, in order. */
  readonly state: readonly PlanSlot[];
  /** Every parameter with its shape, in weight-file order. */
  readonly parameters: readonly ParameterLayout[];
  /** Every value: the input (0), the state slots (1 …), then vectors and computed values as the step made them. */
  readonly values: readonly ProgramValue[];
  /** The operations, in order. */
  readonly instructions: readonly StepInstruction[];
  /** The new state's values, in slot order. */
  readonly results: readonly number[];
}
