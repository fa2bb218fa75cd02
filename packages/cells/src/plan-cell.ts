/**
 * A cell's plan on the tape: its traced step run with core operations (each recorded, so the gradients come from
 * the tape), and `PlanCell`, the training cell of any plan. The built-in cells run their plans' steps this way in
 * `composed` mode (the reference their fused steps are proven against); a cell of your own is a plan and runs
 * this way always, in training, in gradient checks, and (through the same traced step) in the runtime.
 */
import { add, fail, matmul, multiply, relu, reshape, sigmoid, slice, subtract, tanh } from '@weft/core';
import type { DType, FloatArray, Random, Tape, Tensor } from '@weft/core';
import type { CellStep, NamedParameter, PreparedSequence, RecurrentCell, SequencePreparation, StateSlot } from './cell.js';
import type { LayerDescription } from './description.js';
import { fillOrthogonal, fillUniform, glorotBound } from './init.js';
import type { CellPlan, CellShape, StepProgram } from './plans/plan.js';
import { traceStep } from './plans/trace.js';
import { checkStepArguments, createParameter, resolveCellOptions } from './recurrence.js';
import { timeStep } from './sequence-ops.js';
import type { CommonCellOptions } from './recurrence.js';

/** One operation of a traced step bound to its operands' places (and its weights): made once per cell. */
type BoundOperation = (tape: Tape, values: Tensor[]) => void;

/** A traced step made ready for the tape once per cell: its vectors and one bound operation per instruction. */
export interface StepTensors {
  /** By value number: the tensor of a vector value, else null. */
  readonly vectors: readonly (Tensor | null)[];
  /** The instructions, each bound to where its operands are and its weights. */
  readonly operations: readonly BoundOperation[];
}

/** Binds a traced step's operations to their operands and looks its parameters up by name, once (not every step). */
export function stepTensors(program: StepProgram, parameter: (name: string) => Tensor): StepTensors {
  const operations = program.instructions.map((instruction): BoundOperation => {
    const { a, b, out } = instruction;
    switch (instruction.operation) {
      case 'product': {
        const weights = parameter(instruction.weights);
        return (tape, v) => {
          v[out] = matmul(tape, v[a], weights);
        };
      }
      case 'add':
        return (tape, v) => {
          v[out] = add(tape, v[a], v[b]);
        };
      case 'subtract':
        return (tape, v) => {
          v[out] = subtract(tape, v[a], v[b]);
        };
      case 'multiply':
        return (tape, v) => {
          v[out] = multiply(tape, v[a], v[b]);
        };
      case 'sigmoid':
        return (tape, v) => {
          v[out] = sigmoid(tape, v[a]);
        };
      case 'tanh':
        return (tape, v) => {
          v[out] = tanh(tape, v[a]);
        };
      case 'relu':
        return (tape, v) => {
          v[out] = relu(tape, v[a]);
        };
      case 'columns': {
        const end = instruction.start + program.values[out].width;
        return (tape, v) => {
          v[out] = slice(tape, v[a], instruction.start, end);
        };
      }
    }
  });
  return { vectors: program.values.map((v) => (v.source === 'vector' ? parameter(v.name) : null)), operations };
}

/** Runs a traced step on `tape`: x [B, inputWidth] and the state in, the new state (slot order) out. */
export function stepOnTape(program: StepProgram, tape: Tape, x: Tensor, state: readonly Tensor[], tensors: StepTensors): Tensor[] {
  const values = stepValues(program, state, tensors);
  values[0] = x;
  const operations = tensors.operations;
  for (let k = 0; k < operations.length; k++) operations[k](tape, values);
  return stepResults(program, values);
}

/** A step's values array with the state slots and the vectors in place (the caller puts in the rest). */
function stepValues(program: StepProgram, state: readonly Tensor[], tensors: StepTensors): Tensor[] {
  const described = program.values;
  const values: Tensor[] = new Array<Tensor>(described.length);
  for (let id = 1; id < described.length; id++) {
    const v = described[id];
    if (v.source === 'state') values[id] = state[v.slot];
    else if (v.source === 'vector') values[id] = tensors.vectors[id] as Tensor;
  }
  return values;
}

/** The new state's values, in slot order. */
function stepResults(program: StepProgram, values: readonly Tensor[]): Tensor[] {
  const results = program.results;
  const next: Tensor[] = new Array<Tensor>(results.length);
  for (let s = 0; s < results.length; s++) next[s] = values[results[s]];
  return next;
}

/**
 * A traced step cut for a whole sequence: the instructions that read neither the state nor anything made from it
 * run once over every step's rows (all of them row-wise: products, sums, columns, elementwise functions), the rest
 * step by step. Each instruction keeps its own bound operation, so the cut changes where values are made, not how.
 */
export interface SequenceCut {
  /** Instructions run once per sequence, in program order. */
  readonly once: readonly number[];
  /** Instructions run at every step, in program order. */
  readonly each: readonly number[];
  /** Batch values made once and read by the steps, one [B, width] block per step (the input itself when it is read). */
  readonly blocks: readonly number[];
  /** Row values made once (a vector's columns) and read by the steps as they are. */
  readonly rows: readonly number[];
}

/**
 * The most batch rows at which `prepareSequence` computes the input-only part once per sequence. Measured on the
 * WebAssembly backend (one window forward and back, LSTM and GRU in composed mode): at 1 row per step 3–13% faster
 * than stepping, at 4 rows 4–5%, at 8 rows 1–3%; at 16 and 32 rows 3–11% slower (each step's product is already
 * efficient there, and copying each step's block of the whole sequence's values in and its gradient out costs more).
 */
const WHOLE_SEQUENCE_ROWS = 8;

/** Cuts `program` into its once-per-sequence and per-step parts (see `SequenceCut`). */
export function cutForSequence(program: StepProgram): SequenceCut {
  const values = program.values;
  // A value is made once when it does not depend on the state: the input, vectors, and what only they make.
  const once = values.map((v) => v.source === 'input' || v.source === 'vector');
  const made: number[] = [];
  const each: number[] = [];
  program.instructions.forEach((instruction, k) => {
    const fromOnce = once[instruction.a] && (instruction.b < 0 || once[instruction.b]);
    once[instruction.out] = fromOnce;
    (fromOnce ? made : each).push(k);
  });
  const read = new Set<number>(program.results);
  for (const k of each) {
    const { a, b } = program.instructions[k];
    read.add(a);
    if (b >= 0) read.add(b);
  }
  const blocks: number[] = [];
  const rows: number[] = [];
  for (const id of [...read].sort((x, y) => x - y)) {
    if (!once[id] || values[id].source === 'vector') continue;
    (values[id].row ? rows : blocks).push(id);
  }
  return { once: made, each, blocks, rows };
}

/** The parameters a traced plan names, made as trainable zeros, by name (in the plan's order). */
function planParameters(program: StepProgram, dtype: DType): Map<string, Tensor> {
  return new Map(program.parameters.map((p) => [p.name, createParameter(p.name, p.shape, dtype)]));
}

/** The parameters by name, as a cell lists them (the plan's order). */
function namedParameters(parameters: ReadonlyMap<string, Tensor>): NamedParameter[] {
  return [...parameters].map(([name, tensor]) => ({ name, tensor }));
}

/** The parameter `name` of a cell (`where`), or a WeftError when its plan has none of that name. */
function parameterNamed(parameters: ReadonlyMap<string, Tensor>, name: string, where: string): Tensor {
  const t = parameters.get(name);
  if (t === undefined) fail('invalid_option', `${where}.parameters`, `a parameter '${name}' in the plan`, 'none');
  return t;
}

/**
 * The default initialisation of a plan's parameters. A matrix whose width is a multiple of H is taken as gate
 * blocks H wide, each its own matrix: orthogonal when it has H rows (a recurrent block; Saxe, McClelland & Ganguli
 * 2014), else Glorot-uniform with fanIn = its rows and fanOut = H (Glorot & Bengio 2010), as the built-in cells
 * start. Any other matrix is Glorot-uniform over its own shape; vectors start at 0.
 */
export function initialisePlanParameters(parameters: ReadonlyMap<string, Tensor>, hidden: number, random: Random): void {
  for (const tensor of parameters.values()) {
    if (tensor.shape.length !== 2) continue;
    const [rows, cols] = tensor.shape;
    if (cols % hidden !== 0) {
      fillUniform(tensor.data, cols, rows, 0, cols, glorotBound(rows, cols), random);
      continue;
    }
    for (let block = 0; block < cols / hidden; block++) {
      if (rows === hidden) fillOrthogonal(tensor.data, cols, hidden, block * hidden, random);
      else fillUniform(tensor.data, cols, rows, block * hidden, hidden, glorotBound(rows, hidden), random);
    }
  }
}

/** How a plan's cell is made. */
export interface PlanCellOptions extends CommonCellOptions {
  /** The cell's plan. */
  readonly plan: CellPlan;
  /** The layer's description, for options of the plan's own; default `{ cell: plan.kind, hidden }`. */
  readonly layer?: LayerDescription;
  /**
   * Sets the parameters' starting values (each given by name, zero-filled); default the plan's own `initialise`,
   * else `initialisePlanParameters`.
   */
  readonly initialise?: (value: (name: string) => FloatArray, shape: CellShape, random: Random) => void;
}

/** The training cell of a plan: its parameters from the plan, its step the plan's step on the tape. */
export class PlanCell implements RecurrentCell, SequencePreparation {
  readonly kind: string;
  readonly inputWidth: number;
  readonly hidden: number;
  readonly dtype: DType;
  readonly state: readonly StateSlot[];
  /** The plan's step traced for this cell's sizes. */
  readonly program: StepProgram;
  /** The cell's path in messages and parameter names (`layers[0].forward`). */
  name: string;
  private readonly tensors: Map<string, Tensor>;
  /** The step's tensors, found once. */
  private readonly stepTensors: StepTensors;
  /** The step cut into its once-per-sequence and per-step parts. */
  private readonly cut: SequenceCut;

  constructor(options: PlanCellOptions) {
    const { name, inputWidth, hidden, dtype, random } = resolveCellOptions(options, options.plan.kind);
    const layer = options.layer ?? { cell: options.plan.kind, hidden };
    const shape = { inputWidth, hidden, layer };
    this.kind = options.plan.kind;
    this.name = name;
    this.inputWidth = inputWidth;
    this.hidden = hidden;
    this.dtype = dtype;
    this.program = traceStep(options.plan, shape, name);
    this.state = this.program.state;
    this.tensors = planParameters(this.program, dtype);
    this.stepTensors = stepTensors(this.program, (n) => parameterNamed(this.tensors, n, name));
    this.cut = cutForSequence(this.program);
    const initialise = options.initialise ?? options.plan.initialise;
    if (initialise !== undefined) initialise((n) => parameterNamed(this.tensors, n, name).data, shape, random);
    else initialisePlanParameters(this.tensors, hidden, random);
  }

  parameters(): readonly NamedParameter[] {
    return namedParameters(this.tensors);
  }

  /** One step of the plan on the tape (core operations); for a built-in cell, the reference its fused path is proven against. */
  step(tape: Tape, x: Tensor, state: readonly Tensor[]): CellStep {
    checkStepArguments(this.name, x, this.inputWidth, state, this.state, this.dtype);
    const next = stepOnTape(this.program, tape, x, state, this.stepTensors);
    return { output: next[0], state: next };
  }

  /**
   * The input-only part of the step over every step of `inputs` [T, B, inputWidth] at once (the layer has checked its
   * shape); each step then runs the rest (see `SequenceCut`).
   */
  prepareSequence(tape: Tape, inputs: Tensor): PreparedSequence | null {
    const [steps, rows, width] = inputs.shape;
    const { program, cut } = this;
    if (rows > WHOLE_SEQUENCE_ROWS || cut.once.length === 0) return null;
    const tensors = this.stepTensors;
    const operations = tensors.operations;
    // The once-per-sequence part reads no state: the vectors and the whole sequence's rows as the input.
    const whole = stepValues(program, [], tensors);
    whole[0] = reshape(tape, inputs, [steps * rows, width]);
    for (const k of cut.once) operations[k](tape, whole);
    const blocks = cut.blocks.map((id) => (id === 0 ? inputs : reshape(tape, whole[id], [steps, rows, program.values[id].width])));
    return {
      step: (stepTape: Tape, t: number, state: readonly Tensor[]): CellStep => {
        const values = stepValues(program, state, tensors);
        for (let j = 0; j < blocks.length; j++) values[cut.blocks[j]] = timeStep(stepTape, blocks[j], t);
        for (const id of cut.rows) values[id] = whole[id];
        for (const k of cut.each) operations[k](stepTape, values);
        const next = stepResults(program, values);
        return { output: next[0], state: next };
      },
    };
  }

  /** The parameter `name` of the plan. */
  protected parameter(name: string): Tensor {
    return parameterNamed(this.tensors, name, this.name);
  }
}
