import { describe, expect, it } from 'vitest';
import { choiceFlag, numberFlag, parseArgs } from '../src/args.js';
import type { FlagSpec } from '../src/args.js';
import { CommandError } from '../src/errors.js';

const specs: FlagSpec[] = [
  { name: 'rate', value: 'NUMBER', description: 'learning rate' },
  { name: 'cell', value: 'KIND', description: 'cell' },
  { name: 'quiet', switch: true, description: 'quiet' },
];

function refusal(argv: string[]): string {
  try {
    parseArgs('train', argv, specs);
  } catch (error) {
    if (error instanceof CommandError) return `${error.exitCode} ${error.message}`;
    throw error;
  }
  throw new Error('expected the arguments to be refused');
}

describe('reading command-line flags', () => {
  it('reads --name value, --name=value, switches and positionals in any order', () => {
    const parsed = parseArgs('train', ['data.csv', '--rate', '0.01', '--cell=gru', '--quiet', 'more.csv'], specs);
    expect(Object.fromEntries(parsed.flags)).toEqual({ rate: '0.01', cell: 'gru' });
    expect([...parsed.switches]).toEqual(['quiet']);
    expect(parsed.positional).toEqual(['data.csv', 'more.csv']);
  });

  it('takes a value that starts with one dash, such as a negative number or - for standard input', () => {
    const parsed = parseArgs('train', ['-', '--rate', '-0.5'], specs);
    expect(parsed.flags.get('rate')).toBe('-0.5');
    expect(parsed.positional).toEqual(['-']);
  });

  it('ends the flags at --: what follows is positional, even when it looks like a flag', () => {
    const parsed = parseArgs('train', ['--rate', '1', '--', '--odd name.csv', '--quiet', '--rate=2'], specs);
    expect(parsed.positional).toEqual(['--odd name.csv', '--quiet', '--rate=2']);
    expect(Object.fromEntries(parsed.flags)).toEqual({ rate: '1' });
    expect(parsed.switches.size).toBe(0);
  });

  it('refuses a flag given twice, in either spelling, naming it', () => {
    expect(refusal(['--rate', '1', '--rate=2'])).toBe('2 flag --rate of weft train is given twice; give it once');
    expect(refusal(['--quiet', '--quiet'])).toBe('2 flag --quiet of weft train is given twice; give it once');
  });

  it('refuses unknown flags, short ones included, pointing at the help', () => {
    expect(refusal(['--speed', '3'])).toBe('2 unknown flag --speed for weft train (see weft train --help)');
    expect(refusal(['-r', '3'])).toBe('2 unknown flag -r for weft train (see weft train --help)');
  });

  it('refuses a missing value and a value given to a switch', () => {
    expect(refusal(['--rate'])).toBe('2 flag --rate of weft train needs a value (NUMBER)');
    expect(refusal(['--rate', '--quiet'])).toBe('2 flag --rate of weft train needs a value (NUMBER)');
    expect(refusal(['--quiet=yes'])).toBe('2 flag --quiet of weft train takes no value');
  });

  it('checks number and choice flags against their bounds and choices', () => {
    const parsed = parseArgs('train', ['--rate', '2', '--cell', 'tree'], specs);
    expect(() => numberFlag(parsed, 'rate', 1, { max: 1 })).toThrow('--rate must be a number, got "2"');
    expect(numberFlag(parseArgs('train', ['--rate', '0.5'], specs), 'rate', 1, { min: 0, max: 1 })).toBe(0.5);
    expect(() => choiceFlag(parsed, 'cell', ['lstm', 'gru'], 'lstm')).toThrow('--cell must be one of lstm, gru, got "tree"');
  });
});
