import { describe, expect, it } from 'vitest';
import { CommandError } from '../src/errors.js';

describe('errors meant for the person at the terminal', () => {
  it('carry their message and the exit code the command ends with (1 unless said)', () => {
    const plain = new CommandError('weft: no such verb');
    expect([plain.message, plain.exitCode, plain.name, plain instanceof Error]).toEqual(['weft: no such verb', 1, 'CommandError', true]);
    expect(new CommandError('usage', 2).exitCode).toBe(2);
  });
});
