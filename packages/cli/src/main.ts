#!/usr/bin/env node
/**
 * The `weft` command. Verbs: train, run, score, sample, inspect, convert, sweep, check; `--help` on each, `--version`. Errors are one
 * line on stderr with a non-zero exit (2 for a misused command), and a stack trace only with --debug.
 */
import { readFileSync, realpathSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { WeftError, describeProblem } from '@weft/core';
import type { Problem } from '@weft/core';
import { isNamespacedKind } from '@weft/cells';
import type { FlagSpec, ParsedArgs } from './args.js';
import { helpText, parseArgs } from './args.js';
import { check, checkFlags } from './check.js';
import { convert, convertFlags } from './convert.js';
import { endQuietlyOnClosedPipes, line } from './terminal.js';
import { CommandError } from './errors.js';
import { inspect, inspectFlags } from './inspect.js';
import { runFlags, runModel } from './run.js';
import { sampleFlags, sampleText } from './sample.js';
import { score, scoreFlags } from './score.js';
import { sweep, sweepFlags, watchSweepParent } from './sweep.js';
import { train, trainFlags } from './train.js';

interface Verb {
  readonly summary: string;
  readonly usage: string;
  readonly example: string;
  readonly flags: FlagSpec[];
  readonly act: (args: ParsedArgs) => Promise<number>;
}

const write = (text: string) => process.stdout.write(text.endsWith('\n') ? text : `${text}\n`);

const verbs: Record<string, Verb> = {
  train: {
    summary: 'train a model on a CSV of numeric series, a text file, or a labelled CSV of sequences',
    usage: 'weft train DATA [flags]',
    example: 'weft train greenhouse.csv --target air_temperature_c --horizon 8 --cell gru',
    flags: trainFlags,
    act: async (args) => {
      watchSweepParent();
      await train(args);
      return 0;
    },
  },
  run: {
    summary: 'apply a weight file to new data (a file, or - for standard input) and write CSV or JSON',
    usage: 'weft run MODEL [DATA|-] [flags]',
    example: 'weft run greenhouse.weft.json new-readings.csv --format json --out forecasts.json',
    flags: runFlags,
    act: async (args) => {
      const output = await runModel(args);
      if (output !== null) process.stdout.write(output);
      return 0;
    },
  },
  sample: {
    summary: 'generate text from a text model',
    usage: 'weft sample MODEL [flags]',
    example: 'weft sample story.weft.json --prefix "The loom" --length 300 --temperature 0.7 --seed 4',
    flags: sampleFlags,
    act: async (args) => {
      write(await sampleText(args));
      return 0;
    },
  },
  inspect: {
    summary: "show a weight file's model, tensors, parameter count, metadata and digest, or an ONNX file's graph",
    usage: 'weft inspect MODEL [flags]',
    example: 'weft inspect greenhouse.weft.json',
    flags: inspectFlags,
    act: async (args) => {
      write(await inspect(args));
      return 0;
    },
  },
  score: {
    summary: "score a weight file on a labelled data file, beside the baselines, in the data's units",
    usage: 'weft score MODEL DATA [flags]',
    example: 'weft score greenhouse.weft.json greenhouse-june.csv --format json',
    flags: scoreFlags,
    act: async (args) => {
      process.stdout.write(await score(args));
      return 0;
    },
  },
  convert: {
    summary: 'convert between ONNX and weft: an .onnx model to a weight file, a weight file to an .onnx model',
    usage: 'weft convert FILE [flags]',
    example: 'weft convert greenhouse.weft.json --out greenhouse.onnx',
    flags: convertFlags,
    act: async (args) => {
      write(await convert(args));
      return 0;
    },
  },
  sweep: {
    summary: 'train every combination of a grid of flags and data files, several at a time, and rank them',
    usage: 'weft sweep GRID [--part K/N] [--merge] [flags]',
    example: 'weft sweep grid.json --part 2/3 --folder runs',
    flags: sweepFlags,
    act: async (args) => {
      const { text, failed } = await sweep(args);
      write(text);
      return failed ? 1 : 0;
    },
  },
  check: {
    summary: 'gradient-check the built-in cells, or a cell from your own module, against finite differences',
    usage: 'weft check [--module FILE [--export NAME]] [flags]',
    example: 'weft check --module ./my-cell.mjs --export makeCell',
    flags: checkFlags,
    act: async (args) => {
      const { text, passed } = await check(args);
      write(text);
      return passed ? 0 : 1;
    },
  },
};

function version(): string {
  const packageJson = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8')) as { version: string };
  return packageJson.version;
}

function overview(): string {
  const lines = [
    'weft: train and run small recurrent networks (LSTM, GRU, plain) from the terminal',
    '',
    'usage: weft VERB [flags]   (weft VERB --help for each)',
    '',
  ];
  for (const [name, verb] of Object.entries(verbs)) lines.push(`  ${name.padEnd(8)} ${verb.summary}`);
  lines.push('', '  --version  print the version', '', `example:\n  ${verbs.train.example}`);
  return lines.join('\n');
}

export async function main(argv: readonly string[]): Promise<number> {
  const [name, ...rest] = argv;
  // Flags end at `--`; what follows is positional, even when it looks like --help.
  const ended = rest.indexOf('--');
  const flagPart = ended < 0 ? rest : rest.slice(0, ended);
  const debug = name !== '--' && flagPart.includes('--debug');
  try {
    if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
      write(overview());
      return name === undefined ? 2 : 0;
    }
    if (name === '--version' || name === '-v') {
      write(version());
      return 0;
    }
    const verb = verbs[name];
    if (verb === undefined) throw new CommandError(`unknown verb ${JSON.stringify(name)}; the verbs are ${Object.keys(verbs).join(', ')} (see weft --help)`, 2);
    if (flagPart.includes('--help') || flagPart.includes('-h')) {
      write(helpText(name, verb.summary, verb.usage, verb.flags, verb.example));
      return 0;
    }
    return await verb.act(parseArgs(name, rest, verb.flags));
  } catch (error) {
    const { text, code } = errorReport(error, debug);
    if (text !== '') process.stderr.write(text);
    return code;
  }
}

/**
 * What an error prints on standard error, and the exit code: one safe line (escaped, cut: terminal.ts) for a
 * library or command error, the stack only with --debug. Multi-line command reports keep their lines.
 */
export function errorReport(error: unknown, debug: boolean): { text: string; code: number } {
  const stack = debug ? `${(error as Error)?.stack ?? ''}\n` : '';
  if (error instanceof CommandError) {
    const text = error.message === '' ? '' : `weft: ${error.message.split('\n').map(line).join('\n')}\n`;
    return { text: text + stack, code: error.exitCode };
  }
  if (error instanceof WeftError) {
    // One line, however many problems the error lists.
    const text = error.problems.length === 1 ? error.message : `${error.problems.length} problems: ${error.problems.map(describeProblem).join('; ')}`;
    return { text: `weft: ${line(text + ownCellHint(error.problems))}\n${stack}`, code: 1 };
  }
  const message = (error as Error)?.message ?? String(error);
  return { text: `weft: ${line(message)}${debug ? '' : ' (run again with --debug for details)'}\n${stack}`, code: 1 };
}

/**
 * The command's way to give the plan of a cell of your own, when a file's layer names one (a namespaced kind) that
 * was read without it: the library's words say `plans: { … }`, the command's are its flags.
 */
function ownCellHint(problems: readonly Problem[]): string {
  const own = problems.some((p) => {
    if (!p.path.endsWith('.cell')) return false;
    try {
      const kind: unknown = JSON.parse(p.received);
      return typeof kind === 'string' && isNamespacedKind(kind);
    } catch {
      return false;
    }
  });
  return own ? '; from the command, give its plan with --cell-module FILE (and --cell-export NAME unless it is the default export)' : '';
}

function invokedDirectly(): boolean {
  if (process.argv[1] === undefined) return false;
  try {
    return realpathSync(process.argv[1]) === fileURLToPath(import.meta.url);
  } catch {
    return false;
  }
}

/** Runs the command as a process: a closed pipe ends it quietly, and its exit code becomes the process's. */
export function runCommand(argv: readonly string[]): void {
  endQuietlyOnClosedPipes();
  main(argv).then((code) => {
    process.exitCode = code;
  });
}

if (invokedDirectly()) runCommand(process.argv.slice(2));
