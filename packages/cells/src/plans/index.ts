/**
 * The plans weft knows: the three built-in cells', and a program's own (a `plans` record passed to the builder,
 * the weight-file reader and the runtime, by kind).
 */
import { fail, isRecord } from '@weft/core/base';
import { gruPlan } from './gru.js';
import { lstmPlan } from './lstm.js';
import type { CellPlan } from './plan.js';
import { plainPlan } from './plain.js';

/** The built-in cells' plans, by their word in a description. */
export const builtInPlans: Readonly<Record<'lstm' | 'gru' | 'plain', CellPlan>> = Object.freeze({ lstm: lstmPlan, gru: gruPlan, plain: plainPlan });

/** Plans of cells of your own, by the kind a description names them with. */
export type CellPlans = Readonly<Record<string, CellPlan>>;

/**
 * True for the kind of a cell of your own: namespaced, `owner.name` (letters, digits, `-`, `_`; `lab.mgu`), so it
 * never takes a word weft may build in later.
 */
export function isNamespacedKind(kind: string): boolean {
  return /^[A-Za-z][\w-]*(\.[A-Za-z][\w-]*)+$/.test(kind);
}

/** The namespaced cell kinds a description (either kind, checked or not) names, each once. */
export function namespacedKinds(value: unknown): string[] {
  const kinds = new Set<string>();
  const visit = (model: unknown): void => {
    if (!isRecord(model) || !Array.isArray(model.layers)) return;
    for (const layer of model.layers) if (isRecord(layer) && typeof layer.cell === 'string' && isNamespacedKind(layer.cell)) kinds.add(layer.cell);
  };
  visit(value);
  if (isRecord(value)) {
    visit(value.encoder);
    visit(value.decoder);
  }
  return [...kinds];
}

/** The plan of `kind`: a built-in one, else the program's own from `plans`; null when neither knows it. */
export function planOf(kind: string, plans?: CellPlans): CellPlan | null {
  if (Object.hasOwn(builtInPlans, kind)) return builtInPlans[kind as keyof typeof builtInPlans];
  return plans !== undefined && Object.hasOwn(plans, kind) ? plans[kind] : null;
}

/**
 * Checks a program's own plans where they enter (`path` names the option): each an object with the plan's
 * functions, filed under its own kind, and no built-in word taken.
 */
export function checkPlans(plans: unknown, path: string): CellPlans {
  if (plans === undefined) return {};
  if (typeof plans !== 'object' || plans === null || Array.isArray(plans))
    fail('invalid_option', path, 'an object of cell plans by kind', JSON.stringify(plans));
  for (const [kind, plan] of Object.entries(plans)) {
    const where = `${path}.${kind}`;
    if (!isNamespacedKind(kind))
      fail('invalid_option', where, "a namespaced kind of your own such as 'lab.mgu' (lstm, gru and plain are built in)", JSON.stringify(kind));
    const p = plan as Partial<CellPlan> | null;
    if (typeof p !== 'object' || p === null || typeof p.state !== 'function' || typeof p.parameters !== 'function' || typeof p.step !== 'function') {
      fail(
        'invalid_option',
        where,
        'a cell plan: { kind, state(shape), parameters(shape), step(writer, shape) }',
        typeof plan === 'function' ? 'a function (a cell maker? plans are objects)' : describeValue(plan),
      );
    }
    if (p.kind !== kind) fail('invalid_option', `${where}.kind`, JSON.stringify(kind), JSON.stringify(p.kind));
  }
  return plans as CellPlans;
}

function describeValue(value: unknown): string {
  if (value === null) return 'null';
  if (typeof value !== 'object') return `${typeof value} ${String(value)}`;
  return `an object with ${Object.keys(value).join(', ') || 'no fields'}`;
}
