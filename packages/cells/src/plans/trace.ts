/**
 * Tracing a plan's step: its step is called once with a writer that records each operation, checking every
 * operand's width against the plan's own parameter shapes, so that a wrong plan is refused by name before any
 * weight is made, and every place that runs the cell follows one checked list.
 */
import { fail } from '@weft/core/base';
import type {
  CellPlan,
  CellShape,
  ParameterLayout,
  PlanSlot,
  ProgramValue,
  StepInstruction,
  StepOperation,
  StepProgram,
  StepValue,
  StepWriter,
} from './plan.js';

/** Traces `plan` for one cell's sizes; `where` names the cell in messages (`layers[0].forward`). */
export function traceStep(plan: CellPlan, shape: CellShape, where: string): StepProgram {
  const path = `${where} (cell '${plan.kind}')`;
  const state = plan.state(shape);
  const parameters = plan.parameters(shape);
  const recorder = new StepRecorder(path, shape.inputWidth, state, checkedParameters(path, shape, state, parameters));
  const results = plan.step(recorder.writer(), shape);
  return { kind: plan.kind, inputWidth: shape.inputWidth, hidden: shape.hidden, state, parameters, ...recorder.finish(results) };
}

/** The plan's state and parameters checked (an output slot of the hidden width; each parameter named once, 1-D or 2-D). */
function checkedParameters(path: string, shape: CellShape, state: readonly PlanSlot[], parameters: readonly ParameterLayout[]): Map<string, ParameterLayout> {
  if (state.length < 1) fail('invalid_option', `${path}.state`, 'at least one state slot (the first is the output)', 'none');
  if (state[0].width !== shape.hidden)
    fail('invalid_option', `${path}.state[0]`, `the output slot ${shape.hidden} wide (the layer's hidden)`, `${state[0].width} wide`);
  const byName = new Map<string, ParameterLayout>();
  for (const p of parameters) {
    if (byName.has(p.name)) fail('invalid_option', `${path}.parameters`, 'each parameter named once', `'${p.name}' twice`);
    if (!(p.shape.length === 1 || p.shape.length === 2) || !p.shape.every((n) => Number.isInteger(n) && n >= 1)) {
      fail('invalid_option', `${path}.parameters.${p.name}`, 'a shape of one or two whole numbers ≥ 1', JSON.stringify(p.shape));
    }
    byName.set(p.name, p);
  }
  return byName;
}

/** Records a step's operations as the writer is called, checking each operand. */
class StepRecorder {
  private readonly values: ProgramValue[];
  private readonly instructions: StepInstruction[] = [];

  constructor(
    private readonly path: string,
    inputWidth: number,
    private readonly state: readonly PlanSlot[],
    private readonly byName: ReadonlyMap<string, ParameterLayout>,
  ) {
    this.values = [{ source: 'input', width: inputWidth, row: false, name: '', slot: -1 }];
    state.forEach((slot, i) => this.values.push({ source: 'state', width: slot.width, row: false, name: slot.name, slot: i }));
  }

  /** The writer the plan's step is called with. */
  writer(): StepWriter {
    return {
      input: this.handle(0),
      state: this.state.map((_, i) => this.handle(i + 1)),
      vector: (name) => this.vector(name),
      product: (value, weights) => this.product(value, weights),
      add: (a, b) => this.pair('add', a, b),
      subtract: (a, b) => this.pair('subtract', a, b),
      multiply: (a, b) => this.pair('multiply', a, b),
      sigmoid: (a) => this.make('sigmoid', this.check(a, 'sigmoid').width, a.row, a.id),
      tanh: (a) => this.make('tanh', this.check(a, 'tanh').width, a.row, a.id),
      relu: (a) => this.make('relu', this.check(a, 'relu').width, a.row, a.id),
      columns: (a, start, width) => this.columns(a, start, width),
    };
  }

  /**
   * The step's results checked (one per slot, each its slot's width, none a row); a slot's new value that the step
   * did not compute (a slot or the input passed on as it is) is copied, so that writing the new state never reads
   * a slot already written.
   */
  finish(results: readonly StepValue[]): Pick<StepProgram, 'values' | 'instructions' | 'results'> {
    const state = this.state;
    if (!Array.isArray(results) || results.length !== state.length) {
      const received = Array.isArray(results) ? `${results.length} value(s)` : typeof results;
      fail('invalid_option', `${this.path}.step`, `the new state: ${state.length} value(s), one per slot`, received);
    }
    results.forEach((r, i) => {
      const v = this.check(r, 'result');
      if (v.width !== state[i].width || v.row) {
        const received = `${v.row ? 'a row' : 'a value'} ${v.width} wide`;
        fail('shape_mismatch', `${this.path}.step.result[${i}]`, `slot '${state[i].name}': a value ${state[i].width} wide`, received);
      }
    });
    const ids = results.map((r) => (this.values[r.id].source === 'computed' ? r.id : this.make('columns', r.width, false, r.id).id));
    return { values: this.values, instructions: this.instructions, results: ids };
  }

  private handle(id: number): StepValue {
    return { id, width: this.values[id].width, row: this.values[id].row };
  }

  /** The recorded value `v` stands for, or a one-line error when it was not made by this writer. */
  private check(v: StepValue, operation: string): ProgramValue {
    const value = v === undefined || v === null ? undefined : this.values[v.id];
    if (value === undefined || value.width !== v.width)
      fail('invalid_option', `${this.path}.step.${operation}`, "values made by this step's writer", JSON.stringify(v));
    return value;
  }

  private make(operation: StepOperation, width: number, row: boolean, a: number, b = -1, weights = '', start = 0): StepValue {
    this.values.push({ source: 'computed', width, row, name: '', slot: -1 });
    this.instructions.push({ operation, out: this.values.length - 1, a, b, weights, start });
    return this.handle(this.values.length - 1);
  }

  private pair(operation: 'add' | 'subtract' | 'multiply', a: StepValue, b: StepValue): StepValue {
    const va = this.check(a, operation);
    const vb = this.check(b, operation);
    const rowAllowed = operation !== 'subtract';
    if (va.width !== vb.width || (va.row && !vb.row) || (vb.row && !va.row && !rowAllowed)) {
      const as = (v: ProgramValue): string => `${v.row ? 'a row' : 'a value'} ${v.width} wide`;
      const expected = rowAllowed ? 'equal widths (b may be a row)' : 'equal widths, neither a row';
      fail('shape_mismatch', `${this.path}.step.${operation}`, expected, `${as(va)} and ${as(vb)}`);
    }
    return this.make(operation, va.width, va.row, a.id, b.id);
  }

  private vector(name: string): StepValue {
    const p = this.byName.get(name);
    if (p === undefined || p.shape.length !== 1) {
      const received = `'${name}'${p === undefined ? ' (no such parameter)' : ` ${JSON.stringify(p.shape)}`}`;
      fail('invalid_option', `${this.path}.step.vector`, 'a one-dimensional parameter of the plan', received);
    }
    this.values.push({ source: 'vector', width: p.shape[0], row: true, name, slot: -1 });
    return this.handle(this.values.length - 1);
  }

  private product(value: StepValue, weights: string): StepValue {
    const v = this.check(value, 'product');
    const p = this.byName.get(weights);
    if (p === undefined || p.shape.length !== 2 || p.shape[0] !== v.width || v.row) {
      const received = `'${weights}'${p === undefined ? ' (no such parameter)' : ` ${JSON.stringify(p.shape)}`}${v.row ? ' with a row' : ''}`;
      fail('shape_mismatch', `${this.path}.step.product`, `a two-dimensional parameter [${v.width}, …] for a value ${v.width} wide`, received);
    }
    return this.make('product', p.shape[1], false, value.id, -1, weights);
  }

  private columns(a: StepValue, start: number, width: number): StepValue {
    const v = this.check(a, 'columns');
    if (!(Number.isInteger(start) && Number.isInteger(width) && start >= 0 && width >= 1 && start + width <= v.width)) {
      fail('invalid_option', `${this.path}.step.columns`, `columns within [0, ${v.width})`, `start ${start}, width ${width}`);
    }
    return this.make('columns', width, v.row, a.id, -1, '', start);
  }
}
