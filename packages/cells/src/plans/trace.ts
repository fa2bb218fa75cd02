/**
 * Tracing a plan's step: its step is called once with a writer that records each operation, checking every
 * operand's width against the plan's own parameter shapes, so that a wrong plan is refused by name before any
 * weight is made, and every place that runs the cell follows one checked list.
 */
import { fail } from '@weft/core/base';
import type { CellPlan, CellShape, ParameterLayout, ProgramValue, StepInstruction, StepOperation, StepProgram, StepValue, StepWriter } from './plan.js';

/** Traces `plan` for one cell's sizes; `where` names the cell in messages (`layers[0].forward`). */
export function traceStep(plan: CellPlan, shape: CellShape, where: string): StepProgram {
  const path = `${where} (cell '${plan.kind}')`;
  const state = plan.state(shape);
  const parameters = plan.parameters(shape);
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
  const values: ProgramValue[] = [{ source: 'input', width: shape.inputWidth, row: false, name: '', slot: -1 }];
  state.forEach((slot, i) => values.push({ source: 'state', width: slot.width, row: false, name: slot.name, slot: i }));
  const instructions: StepInstruction[] = [];
  const handle = (id: number): StepValue => ({ id, width: values[id].width, row: values[id].row });
  const check = (v: StepValue, operation: string): ProgramValue => {
    const value = values[v?.id];
    if (value === undefined || value.width !== v.width)
      fail('invalid_option', `${path}.step.${operation}`, "values made by this step's writer", JSON.stringify(v));
    return value;
  };
  const make = (operation: StepOperation, width: number, row: boolean, a: number, b = -1, weights = '', start = 0): StepValue => {
    values.push({ source: 'computed', width, row, name: '', slot: -1 });
    instructions.push({ operation, out: values.length - 1, a, b, weights, start });
    return handle(values.length - 1);
  };
  const pair = (operation: 'add' | 'subtract' | 'multiply', a: StepValue, b: StepValue): StepValue => {
    const va = check(a, operation);
    const vb = check(b, operation);
    const rowAllowed = operation !== 'subtract';
    if (va.width !== vb.width || (va.row && !vb.row) || (vb.row && !va.row && !rowAllowed)) {
      const as = (v: ProgramValue): string => `${v.row ? 'a row' : 'a value'} ${v.width} wide`;
      fail(
        'shape_mismatch',
        `${path}.step.${operation}`,
        rowAllowed ? 'equal widths (b may be a row)' : 'equal widths, neither a row',
        `${as(va)} and ${as(vb)}`,
      );
    }
    return make(operation, va.width, va.row, a.id, b.id);
  };
  const writer: StepWriter = {
    input: handle(0),
    state: state.map((_, i) => handle(i + 1)),
    vector(name) {
      const p = byName.get(name);
      if (p === undefined || p.shape.length !== 1)
        fail(
          'invalid_option',
          `${path}.step.vector`,
          'a one-dimensional parameter of the plan',
          `'${name}'${p === undefined ? ' (no such parameter)' : ` ${JSON.stringify(p.shape)}`}`,
        );
      values.push({ source: 'vector', width: p.shape[0], row: true, name, slot: -1 });
      return handle(values.length - 1);
    },
    product(value, weights) {
      const v = check(value, 'product');
      const p = byName.get(weights);
      if (p === undefined || p.shape.length !== 2 || p.shape[0] !== v.width || v.row) {
        fail(
          'shape_mismatch',
          `${path}.step.product`,
          `a two-dimensional parameter [${v.width}, …] for a value ${v.width} wide`,
          `'${weights}'${p === undefined ? ' (no such parameter)' : ` ${JSON.stringify(p.shape)}`}${v.row ? ' with a row' : ''}`,
        );
      }
      return make('product', p.shape[1], false, value.id, -1, weights);
    },
    add: (a, b) => pair('add', a, b),
    subtract: (a, b) => pair('subtract', a, b),
    multiply: (a, b) => pair('multiply', a, b),
    sigmoid: (a) => make('sigmoid', check(a, 'sigmoid').width, a.row, a.id),
    tanh: (a) => make('tanh', check(a, 'tanh').width, a.row, a.id),
    relu: (a) => make('relu', check(a, 'relu').width, a.row, a.id),
    columns(a, start, width) {
      const v = check(a, 'columns');
      if (!(Number.isInteger(start) && Number.isInteger(width) && start >= 0 && width >= 1 && start + width <= v.width)) {
        fail('invalid_option', `${path}.step.columns`, `columns within [0, ${v.width})`, `start ${start}, width ${width}`);
      }
      return make('columns', width, v.row, a.id, -1, '', start);
    },
  };
  const results = plan.step(writer, shape);
  if (!Array.isArray(results) || results.length !== state.length) {
    fail(
      'invalid_option',
      `${path}.step`,
      `the new state: ${state.length} value(s), one per slot`,
      Array.isArray(results) ? `${results.length} value(s)` : typeof results,
    );
  }
  results.forEach((r, i) => {
    const v = check(r, 'result');
    if (v.width !== state[i].width || v.row)
      fail(
        'shape_mismatch',
        `${path}.step.result[${i}]`,
        `slot '${state[i].name}': a value ${state[i].width} wide`,
        `${v.row ? 'a row' : 'a value'} ${v.width} wide`,
      );
  });
  // A slot's new value that is not computed by the step (a slot or the input passed on as it is) is copied, so
  // that writing the new state never reads a slot already written.
  const ids = results.map((r) => (values[r.id].source === 'computed' ? r.id : make('columns', r.width, false, r.id).id));
  return { kind: plan.kind, inputWidth: shape.inputWidth, hidden: shape.hidden, state, parameters, values, instructions, results: ids };
}
