/** `weft sample`: text from a next-token model. */
import { Random } from '@weft/core';
import { createTranslator } from '@weft/io';
import { loadWeightFile } from '@weft/io/node';
import { createRuntime, generateTokens } from '@weft/io/runtime';
import type { FlagSpec, ParsedArgs } from './args.js';
import { numberFlag } from './args.js';
import { backendFlag, chooseBackend } from './backend.js';
import { CommandError } from './errors.js';
import { cellModuleFlags, cellPlansFrom } from './cell-module.js';

export const sampleFlags: FlagSpec[] = [
  ...cellModuleFlags,
  { name: 'length', value: 'NUMBER', description: 'tokens to generate', fallback: '200' },
  { name: 'temperature', value: 'NUMBER', description: 'below 1 sharper, above 1 more varied', fallback: '0.8' },
  { name: 'top-k', value: 'NUMBER', description: 'choose among the k most likely tokens only (0: all)', fallback: '0' },
  { name: 'seed', value: 'TEXT', description: 'seed for the sampling', fallback: '1' },
  { name: 'prefix', value: 'TEXT', description: 'text to start from', fallback: 'the most common token' },
  { name: 'greedy', switch: true, description: 'always take the most likely token' },
  backendFlag,
  { name: 'debug', switch: true, description: 'show stack traces' },
];

export async function sampleText(args: ParsedArgs): Promise<string> {
  const [path] = args.positional;
  if (path === undefined) throw new CommandError('weft sample needs a weight file (see weft sample --help)', 2);
  const plans = await cellPlansFrom(args);
  const file = await loadWeightFile(path, { plans });
  const vocabulary = file.metadata.vocabulary;
  if (file.metadata.task !== 'next-token' || vocabulary === undefined)
    throw new CommandError(`${path}: not a text model (its task is ${JSON.stringify(file.metadata.task)}); weft sample needs one trained on text`);
  const mode = file.metadata.tokens === 'words' ? 'words' : 'characters';
  const runtime = await createRuntime(file, { backend: chooseBackend(args).name, plans });
  const translator = createTranslator(file.metadata as Record<string, unknown>);
  const prefixText = args.flags.get('prefix');
  const split = prefixText === undefined ? null : translator.tokenIds(prefixText);
  const prefix = split === null ? [Math.min(1, vocabulary.length - 1)] : Array.from(split.ids);
  if (prefix.length === 0) throw new CommandError('--prefix must hold at least one token', 2);
  if (split !== null && split.unknown > 0) {
    process.stderr.write(
      `weft: ${split.unknown} of ${split.pieces.length} ${mode} of --prefix are not in the model's vocabulary; the model reads them as ${translator.tokenText(0)}\n`,
    );
  }
  const tokens = generateTokens(runtime, {
    prefix,
    length: numberFlag(args, 'length', 200, { whole: true, min: 0, max: 1_000_000 }),
    temperature: numberFlag(args, 'temperature', 0.8, { min: 1e-3, max: 100 }),
    topK: numberFlag(args, 'top-k', 0, { whole: true, min: 0 }),
    random: args.switches.has('greedy') ? undefined : new Random(args.flags.get('seed') ?? '1'),
  });
  const join = mode === 'words' ? ' ' : '';
  // The prefix as written (unknown pieces included), then what the model made.
  const shown = split === null ? prefix.map((id) => vocabulary[id]) : [...split.pieces];
  return [...shown, ...tokens.map((id) => vocabulary[id])].join(join);
}
