/**
 * A cell of your own for the commands: `--cell-module FILE` (JavaScript, or TypeScript as user-module.ts loads it)
 * and `--cell-export NAME` (default: the module's default export) name a cell plan (`CellPlan` of @weft/cells: an
 * object with `kind`, `state`, `parameters` and `step`). `weft train` trains a model of it; `weft run`, `score`,
 * `sample`, `inspect` and `convert` need the same module to read a weight file that names its kind. A class, a
 * maker function or a malformed plan is a one-line error naming the file and the export.
 */
import { checkPlans } from '@weft/cells';
import type { CellPlan, CellPlans } from '@weft/cells';
import type { FlagSpec, ParsedArgs } from './args.js';
import { CommandError } from './errors.js';
import { loadUserModule } from './user-module.js';

/** The flags of every command that reads or trains a cell of your own. */
export const cellModuleFlags: FlagSpec[] = [
  {
    name: 'cell-module',
    value: 'FILE',
    description: "a module exporting a cell plan of your own (its kind namespaced, such as 'lab.mgu'): trains it, or reads weight files that name it",
  },
  { name: 'cell-export', value: 'NAME', description: "the module's export that is the plan", fallback: 'default' },
];

/** True for a value shaped as a cell plan (its functions are checked when it is traced). */
function isPlan(value: unknown): value is CellPlan {
  const p = value as Partial<CellPlan> | null;
  return typeof p === 'object' && p !== null && typeof p.state === 'function' && typeof p.parameters === 'function' && typeof p.step === 'function';
}

/** The export `name` of a loaded module as a cell plan, or a one-line error naming the file and the export. */
export function planExport(loaded: Record<string, unknown>, path: string, name: string): CellPlan {
  const value = loaded[name];
  const what = '{ kind, state(shape), parameters(shape), step(writer, shape) }';
  if (value === undefined) {
    const names = Object.keys(loaded).map((k) => JSON.stringify(k));
    throw new CommandError(`${path}: no export ${JSON.stringify(name)} (it exports ${names.join(', ') || 'nothing'}); name the plan with --cell-export`);
  }
  if (typeof value === 'function') {
    const isClass = /^class[\s{]/.test(Function.prototype.toString.call(value));
    throw new CommandError(
      `${path}: export ${JSON.stringify(name)} is ${isClass ? 'a class' : 'a function'}; --cell-module takes a cell plan, an object ${what} (weft check --module also takes a maker function)`,
    );
  }
  if (!isPlan(value)) throw new CommandError(`${path}: export ${JSON.stringify(name)} is not a cell plan: expected an object ${what}`);
  try {
    checkPlans({ [String(value.kind)]: value }, `${path} export ${JSON.stringify(name)}`);
  } catch (error) {
    throw new CommandError((error as Error).message);
  }
  return value;
}

/** The plans the command's flags name (one, by its kind), or undefined without --cell-module. */
export async function cellPlansFrom(args: ParsedArgs): Promise<CellPlans | undefined> {
  const path = args.flags.get('cell-module');
  if (path === undefined) {
    if (args.flags.has('cell-export')) throw new CommandError('--cell-export names an export of --cell-module FILE, which is not given', 2);
    return undefined;
  }
  const plan = planExport(await loadUserModule(path), path, args.flags.get('cell-export') ?? 'default');
  return { [plan.kind]: plan };
}
