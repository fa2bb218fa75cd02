/**
 * `weft check`: gradient checks (f64 central differences against the tape) for the built-in cells, fused and
 * composed, or for a cell exported from the user's own module. A module exports (as default, or under
 * --export NAME) a cell plan (CellPlan of @weft/cells, the form --cell-module trains), or a function that makes the
 * cell: ({ inputWidth, hidden, dtype }) => RecurrentCell.
 */
import { Random, add, checkGradients, multiply, randomUniform, sum } from '@weft/core';
import { MAX_FAILED_SHOWN } from '@weft/core/internal';
import type { GradientCheckOptions, GradientReport, Tape, Tensor } from '@weft/core';
import { GruCell, LstmCell, PlainCell, PlanCell, runSequence } from '@weft/cells';
import type { RecurrentCell } from '@weft/cells';
import type { FlagSpec, ParsedArgs } from './args.js';
import { choiceFlag, numberFlag } from './args.js';
import { backendFlag, chooseBackend, kernelsFlag } from './backend.js';
import { CommandError } from './errors.js';
import { loadUserModule, makerExport } from './user-module.js';
import { planExport } from './cell-module.js';

export const checkFlags: FlagSpec[] = [
  {
    name: 'module',
    value: 'FILE',
    description: 'check the cell your module makes instead of the built-in cells (JavaScript; TypeScript on Node 22.18+, or with tsx installed beside it)',
  },
  { name: 'export', value: 'NAME', description: 'the export that makes the cell', fallback: 'default' },
  { name: 'inputs', value: 'NUMBER', description: 'input width for the check', fallback: '3' },
  { name: 'hidden', value: 'NUMBER', description: 'hidden size for the check', fallback: '4' },
  { name: 'steps', value: 'NUMBER', description: 'sequence length (rows have lengths T, T−2, 1)', fallback: '5' },
  { name: 'tolerance', value: 'NUMBER', description: 'largest relative error that passes', fallback: '1e-6' },
  { name: 'step', value: 'NUMBER', description: 'the finite-difference step h (Richardson extrapolation adds h/2 where needed)', fallback: '1e-5' },
  { name: 'floor', value: 'NUMBER', description: 'an absolute error under this passes whatever its relative error', fallback: '1e-9' },
  { name: 'entries', value: 'NUMBER', description: 'check at most this many entries of each tensor, drawn by the seed', fallback: 'every entry' },
  { name: 'seed', value: 'TEXT', description: "seed of the check's inputs, weights and drawn entries", fallback: "the cell's name" },
  { name: 'report', value: 'summary|table', description: 'summary: a line per tensor; table: also every failing entry with both values', fallback: 'summary' },
  backendFlag,
  kernelsFlag,
  { name: 'quiet', switch: true, description: 'print only the result line (and the reports of checks that fail)' },
  { name: 'debug', switch: true, description: 'show stack traces' },
];

type Maker = (request: { inputWidth: number; hidden: number; dtype: 'f64' }) => RecurrentCell;

/** How one cell is checked (the command's flags; a test gives the same). */
export interface CellCheckOptions extends Omit<GradientCheckOptions, 'seed' | 'directions'> {
  /** Sequence length. */
  readonly steps: number;
  /** Seed of the inputs, weights and drawn entries. */
  readonly seed: string;
}

/**
 * The gradient check of one cell: a batch of three rows of lengths T, T − 2 and 1 from random initial states, the
 * loss a weighted sum of its outputs plus the squares of its final state, every parameter, the inputs and the
 * initial state checked (f64).
 */
export function checkCell(cell: RecurrentCell, options: CellCheckOptions): GradientReport {
  const { steps, seed } = options;
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
  const tensors: Tensor[] = [
    ...cell.parameters().map((p) => {
      p.tensor.name = p.name;
      return p.tensor;
    }),
    inputs,
    ...state,
  ];
  for (const t of tensors) {
    if (t.dtype !== 'f64') throw new CommandError(`the cell's parameter ${t.name} is ${t.dtype}; make it in the dtype the request gives (f64)`);
  }
  return checkGradients(
    (tape: Tape) => {
      const result = runSequence(tape, cell, inputs, { lengths, initialState: state });
      let total = sum(tape, multiply(tape, result.outputs, weights));
      for (const s of result.state) total = add(tape, total, sum(tape, multiply(tape, s, s)));
      return total;
    },
    tensors,
    { ...options, directions: 2, seed },
  );
}

/** Every failing entry of a report as table rows: tensor, index, reverse value, finite difference, relative error. */
function failureTable(report: GradientReport): string {
  const rows = report.tensors.flatMap((t) =>
    t.failed.map(
      (f) => `  ${t.name}[${f.index.join(', ')}]  reverse ${f.analytic}  finite difference ${f.numeric}  relative error ${f.relativeError.toExponential(2)}`,
    ),
  );
  return rows.length === 0 ? '' : `\nfailing entries (at most ${MAX_FAILED_SHOWN} per tensor, the worst first):\n${rows.join('\n')}`;
}

export async function check(args: ParsedArgs): Promise<{ text: string; passed: boolean }> {
  const backend = chooseBackend(args);
  const inputWidth = numberFlag(args, 'inputs', 3, { whole: true, min: 1, max: 64 });
  const hidden = numberFlag(args, 'hidden', 4, { whole: true, min: 1, max: 64 });
  const steps = numberFlag(args, 'steps', 5, { whole: true, min: 2, max: 50 });
  const tolerance = numberFlag(args, 'tolerance', 1e-6, { min: 1e-14, max: 1 });
  const step = numberFlag(args, 'step', 1e-5, { min: 1e-12, max: 0.1 });
  const absoluteFloor = numberFlag(args, 'floor', 1e-9, { min: 0, max: 1 });
  const entries = args.flags.has('entries') ? numberFlag(args, 'entries', 1, { whole: true, min: 1, max: 1e9 }) : undefined;
  const table = choiceFlag(args, 'report', ['summary', 'table'] as const, 'summary') === 'table';
  const cells: [string, RecurrentCell][] = [];
  const modulePath = args.flags.get('module');
  if (modulePath !== undefined) {
    const loaded = await loadUserModule(modulePath);
    const name = args.flags.get('export') ?? 'default';
    // A cell plan (as --cell-module takes) is checked as its training cell; anything else must be a maker.
    const exported = loaded[name];
    const maker: Maker =
      typeof exported === 'object' && exported !== null
        ? (request) => new PlanCell({ ...request, plan: planExport(loaded, modulePath, name), random: 1 })
        : makerExport<Maker>(loaded, modulePath, name, '({ inputWidth, hidden, dtype }) => cell');
    let cell: RecurrentCell;
    try {
      cell = maker({ inputWidth, hidden, dtype: 'f64' });
    } catch (error) {
      throw new CommandError(
        `${modulePath}: export ${JSON.stringify(name)} threw when asked for a cell of ${inputWidth} inputs and ${hidden} hidden in f64: ${(error as Error).message.split('\n')[0]}`,
      );
    }
    if (typeof cell !== 'object' || cell === null || typeof cell.step !== 'function' || typeof cell.parameters !== 'function' || !Array.isArray(cell.state)) {
      throw new CommandError(`${modulePath}: export ${JSON.stringify(name)} did not return a cell (an object with state, parameters() and step())`);
    }
    cells.push([`${cell.kind ?? 'custom'} cell from ${modulePath}`, cell]);
  } else {
    for (const mode of ['fused', 'composed'] as const) {
      const random = new Random(`check-${mode}`);
      const shake = (cell: RecurrentCell) => {
        for (const p of cell.parameters())
          if (p.name !== 'input' && p.name !== 'recurrent') for (let i = 0; i < p.tensor.size; i++) p.tensor.data[i] += random.between(-0.4, 0.4);
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
    const report = checkCell(cell, {
      steps,
      tolerance,
      step,
      absoluteFloor,
      ...(entries === undefined ? {} : { entriesPerTensor: entries }),
      seed: args.flags.get('seed') ?? label,
    });
    passed = passed && report.passed;
    if (!args.switches.has('quiet') || !report.passed) parts.push(`${label}:\n${report.text()}${table ? failureTable(report) : ''}`);
  }
  parts.push(
    `${passed ? `all ${cells.length} gradient checks passed` : 'GRADIENT CHECK FAILED'} (backend ${backend.name}${backend.kernelSet === 'relaxed' ? ' (relaxed kernels)' : ''}; finite differences in f64 run on the JavaScript kernels on every backend)`,
  );
  return { text: parts.join('\n\n'), passed };
}
