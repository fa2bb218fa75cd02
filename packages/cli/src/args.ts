/**
 * Command-line flags, read by Node's own `util.parseArgs`: `--name value`, `--name=value`, and `--switch` for the
 * flags a verb declares as switches; `--` ends the flags (everything after it is positional, so a file named
 * `--odd.csv` can be given). Unknown flags, missing values and a flag given twice are refused with one line naming
 * the flag and the verb.
 */
import { parseArgs as readArguments } from 'node:util';
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

/** Reads a verb's arguments against its flag specs (see above). */
export function parseArgs(verb: string, argv: readonly string[], specs: readonly FlagSpec[]): ParsedArgs {
  const known = new Map(specs.map((s) => [s.name, s]));
  const options = Object.fromEntries(specs.map((s) => [s.name, { type: s.switch === true ? ('boolean' as const) : ('string' as const) }]));
  const { tokens } = readArguments({ args: [...argv], options, strict: false, allowPositionals: true, tokens: true });
  const flags = new Map<string, string>();
  const switches = new Set<string>();
  const positional: string[] = [];
  for (const token of tokens) {
    if (token.kind === 'positional') {
      positional.push(token.value);
      continue;
    }
    if (token.kind === 'option-terminator') continue;
    const spec = known.get(token.name);
    if (spec === undefined || !token.rawName.startsWith('--'))
      throw new CommandError(`unknown flag ${token.rawName} for weft ${verb} (see weft ${verb} --help)`, 2);
    if (flags.has(spec.name) || switches.has(spec.name)) throw new CommandError(`flag --${spec.name} of weft ${verb} is given twice; give it once`, 2);
    if (spec.switch === true) {
      if (token.inlineValue === true) throw new CommandError(`flag --${spec.name} of weft ${verb} takes no value`, 2);
      switches.add(spec.name);
      continue;
    }
    const value = token.value;
    if (value === undefined || (token.inlineValue !== true && value.startsWith('--')))
      throw new CommandError(`flag --${spec.name} of weft ${verb} needs a value (${spec.value ?? 'VALUE'})`, 2);
    flags.set(spec.name, value);
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
