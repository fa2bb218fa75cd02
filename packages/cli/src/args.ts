/**
 * Command-line flags: `--name value`, `--name=value`, and `--switch` for the flags a verb declares as switches.
 * Unknown flags and missing values are refused with one line naming the flag and the verb.
 */
import { CommandError } from './errors.js';

export interface FlagSpec {
  /** Flag name without dashes. */
  readonly name: string;
  /** True for flags that take no value. */
  readonly switch?: boolean;
  readonly description: string;
  /** Shown in help, e.g. `NUMBER`, `FILE`. */
  readonly value?: string;
  readonly fallback?: string;
}

export interface ParsedArgs {
  readonly flags: Map<string, string>;
  readonly switches: Set<string>;
  readonly positional: string[];
}

export function parseArgs(verb: string, argv: readonly string[], specs: readonly FlagSpec[]): ParsedArgs {
  const known = new Map(specs.map((s) => [s.name, s]));
  const flags = new Map<string, string>();
  const switches = new Set<string>();
  const positional: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (!arg.startsWith('--')) {
      positional.push(arg);
      continue;
    }
    const [rawName, inline] = arg.slice(2).split(/=(.*)/s, 2);
    const spec = known.get(rawName);
    if (spec === undefined) throw new CommandError(`unknown flag --${rawName} for weft ${verb} (see weft ${verb} --help)`, 2);
    if (spec.switch === true) {
      if (inline !== undefined) throw new CommandError(`flag --${rawName} of weft ${verb} takes no value`, 2);
      switches.add(rawName);
      continue;
    }
    const value = inline ?? argv[++i];
    if (value === undefined || (inline === undefined && value.startsWith('--'))) throw new CommandError(`flag --${rawName} of weft ${verb} needs a value (${spec.value ?? 'VALUE'})`, 2);
    flags.set(rawName, value);
  }
  return { flags, switches, positional };
}

/** A number flag, checked: whole when `whole`, within [min, max]. */
export function numberFlag(args: ParsedArgs, name: string, fallback: number, options: { whole?: boolean; min?: number; max?: number } = {}): number {
  const text = args.flags.get(name);
  if (text === undefined) return fallback;
  const value = Number(text);
  const min = options.min ?? -Infinity;
  const max = options.max ?? Infinity;
  if (text.trim() === '' || !Number.isFinite(value) || (options.whole === true && !Number.isInteger(value)) || value < min || value > max) {
    const kind = options.whole === true ? 'a whole number' : 'a number';
    const range = Number.isFinite(min) && Number.isFinite(max) ? ` from ${min} to ${max}` : Number.isFinite(min) ? ` ≥ ${min}` : '';
    throw new CommandError(`--${name} must be ${kind}${range}, got ${JSON.stringify(text)}`, 2);
  }
  return value;
}

export function choiceFlag<T extends string>(args: ParsedArgs, name: string, choices: readonly T[], fallback: T): T {
  const text = args.flags.get(name);
  if (text === undefined) return fallback;
  if (!(choices as readonly string[]).includes(text)) throw new CommandError(`--${name} must be one of ${choices.join(', ')}, got ${JSON.stringify(text)}`, 2);
  return text as T;
}

export function helpText(verb: string, summary: string, usage: string, specs: readonly FlagSpec[], example: string): string {
  const lines = [`weft ${verb}: ${summary}`, '', `usage: ${usage}`, '', 'flags:'];
  for (const spec of specs) {
    const left = `  --${spec.name}${spec.switch === true ? '' : ` ${spec.value ?? 'VALUE'}`}`;
    lines.push(`${left.padEnd(30)} ${spec.description}${spec.fallback !== undefined ? ` (default ${spec.fallback})` : ''}`);
  }
  lines.push('', 'example:', `  ${example}`);
  return lines.join('\n');
}
