/**
 * `weft check`: gradient checks (f64 central differences against the tape) for the built-in cells, fused and
 * composed, or for a cell exported from the user's own module. A module exports (as default, or under
 * --export NAME) a function that makes the cell: ({ inputWidth, hidden, dtype }) => RecurrentCell.
 */
import { resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Random, add, checkGradients, multiply, randomUniform, sum } from '@weft/core';
import type { GradientReport, Tape, Tensor } from '@weft/core';
import { GruCell, LstmCell, PlainCell, runSequence } from '@weft/cells';
import type { RecurrentCell } from '@weft/cells';
import type { FlagSpec, ParsedArgs } from './args.js';
import { numberFlag } from './args.js';
import { backendFlag, chooseBackend } from './backend.js';
import { CommandError } from './errors.js';

export const checkFlags: FlagSpec[] = [
  { name: 'module', value: 'FILE', description: 'check the cell your JavaScript module makes instead of the built-in cells' },
  { name: 'export', value: 'NAME', description: 'the export that makes the cell', fallback: 'default' },
  { name: 'inputs', value: 'NUMBER', description: 'input width for the check', fallback: '3' },
  { name: 'hidden', value: 'NUMBER', description: 'hidden size for the check', fallback: '4' },
  { name: 'steps', value: 'NUMBER', description: 'sequence length (rows have lengths T, T−2, 1)', fallback: '5' },
  { name: 'tolerance', value: 'NUMBER', description: 'largest relative error that passes', fallback: '1e-6' },
  backendFlag,
  { name: 'quiet', switch: true, description: 'print only the result line (and the reports of checks that fail)' },
  { name: 'debug', switch: true, description: 'show stack traces' },
];

type Maker = (request: { inputWidth: number; hidden: number; dtype: 'f64' }) => RecurrentCell;

function checkCell(cell: RecurrentCell, steps: number, tolerance: number, seed: string): GradientReport {
  const random = new Random(seed);
  const batch = 3;
  const inputs = randomUniform([steps, batch, cell.inputWidth], random, -1, 1, 'f64');
  inputs.name = 'inputs';
  const state = cell.state.map((slot) => {
    const t = randomUniform([batch, slot.width], random, -0.5, 0.5, 'f64');
    t.name = `initial ${slot.name}`;
    return t;
  });
  const weights = randomUniform([steps, batch, cell.hidden], random, -1, 1, 'f64');
  const lengths = [steps, Math.max(1, steps - 2), 1];
  const tensors: Tensor[] = [...cell.parameters().map((p) => {
    p.tensor.name = p.name;
    return p.tensor;
  }), inputs, ...state];
  for (const t of tensors) {
    if (t.dtype !== 'f64') throw new CommandError(`the cell's parameter ${t.name} is ${t.dtype}; make it in the dtype the request gives (f64)`);
  }
  return checkGradients((tape: Tape) => {
    const result = runSequence(tape, cell, inputs, { lengths, initialState: state });
    let total = sum(tape, multiply(tape, result.outputs, weights));
    for (const s of result.state) total = add(tape, total, sum(tape, multiply(tape, s, s)));
    return total;
  }, tensors, { tolerance, directions: 2 });
}

export async function check(args: ParsedArgs): Promise<{ text: string; passed: boolean }> {
  const backend = chooseBackend(args);
  const inputWidth = numberFlag(args, 'inputs', 3, { whole: true, min: 1, max: 64 });
  const hidden = numberFlag(args, 'hidden', 4, { whole: true, min: 1, max: 64 });
  const steps = numberFlag(args, 'steps', 5, { whole: true, min: 2, max: 50 });
  const tolerance = numberFlag(args, 'tolerance', 1e-6, { min: 1e-14, max: 1 });
  const cells: [string, RecurrentCell][] = [];
  const modulePath = args.flags.get('module');
  if (modulePath !== undefined) {
    let loaded: Record<string, unknown>;
    try {
      loaded = (await import(pathToFileURL(resolve(modulePath)).href)) as Record<string, unknown>;
    } catch (error) {
      throw new CommandError(`${modulePath}: could not load the module: ${(error as Error).message.split('\n')[0]}`);
    }
    const name = args.flags.get('export') ?? 'default';
    const maker = loaded[name];
    if (typeof maker !== 'function') throw new CommandError(`${modulePath}: export ${JSON.stringify(name)} is ${typeof maker}, not a function ({ inputWidth, hidden, dtype }) => cell`);
    const cell = (maker as Maker)({ inputWidth, hidden, dtype: 'f64' });
    if (typeof cell !== 'object' || cell === null || typeof cell.step !== 'function' || typeof cell.parameters !== 'function' || !Array.isArray(cell.state)) {
      throw new CommandError(`${modulePath}: export ${JSON.stringify(name)} did not return a cell (an object with state, parameters() and step())`);
    }
    cells.push([`${cell.kind ?? 'custom'} cell from ${modulePath}`, cell]);
  } else {
    for (const mode of ['fused', 'composed'] as const) {
      const random = new Random(`check-${mode}`);
      const shake = (cell: RecurrentCell) => {
        for (const p of cell.parameters()) if (p.name !== 'input' && p.name !== 'recurrent') for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.4, 0.4);
        return cell;
      };
      const base = { inputWidth, hidden, dtype: 'f64' as const, mode };
      cells.push(
        [`LSTM (${mode})`, shake(new LstmCell({ ...base, random: 1 }))],
        [`LSTM with peepholes (${mode})`, shake(new LstmCell({ ...base, random: 2, peepholes: true }))],
        [`GRU, reset before the product (${mode})`, shake(new GruCell({ ...base, random: 3 }))],
        [`GRU, reset after the product (${mode})`, shake(new GruCell({ ...base, random: 4, resetAfterProduct: true }))],
        [`plain tanh (${mode})`, shake(new PlainCell({ ...base, random: 5 }))],
      );
    }
  }
  const parts: string[] = [];
  let passed = true;
  for (const [label, cell] of cells) {
    const report = checkCell(cell, steps, tolerance, label);
    passed = passed && report.passed;
    if (!args.switches.has('quiet') || !report.passed) parts.push(`${label}:\n${report.text()}`);
  }
  parts.push(`${passed ? `all ${cells.length} gradient checks passed` : 'GRADIENT CHECK FAILED'} (backend ${backend.name}; finite differences in f64 run on the JavaScript kernels on every backend)`);
  return { text: parts.join('\n\n'), passed };
}
