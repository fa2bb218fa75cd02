/**
 * The backend the environment asks for (backend/environment.ts): WEFT_BACKEND's value, nothing when it is unset or
 * empty, and nothing (not a throw) where reading the environment is refused, as Deno refuses it without
 * `--allow-env` (its error is a NotCapable exception thrown by the read; simulated here by a getter that throws).
 */
import { afterEach, describe, expect, it } from 'vitest';
import { environmentBackendChoice } from '@weft/core';

const saved = Object.getOwnPropertyDescriptor(process, 'env')!;
const original = process.env.WEFT_BACKEND;

afterEach(() => {
  Object.defineProperty(process, 'env', saved);
  if (original === undefined) delete process.env.WEFT_BACKEND;
  else process.env.WEFT_BACKEND = original;
});

describe('the backend the environment asks for', () => {
  it('reads WEFT_BACKEND, and nothing when it is unset or empty', () => {
    process.env.WEFT_BACKEND = 'javascript';
    expect(environmentBackendChoice()).toBe('javascript');
    process.env.WEFT_BACKEND = '';
    expect(environmentBackendChoice()).toBeUndefined();
    delete process.env.WEFT_BACKEND;
    expect(environmentBackendChoice()).toBeUndefined();
  });

  it('takes a refused read of the environment as unset instead of throwing', () => {
    Object.defineProperty(process, 'env', {
      configurable: true,
      get: () => {
        throw new Error('NotCapable: Requires env access to "WEFT_BACKEND"');
      },
    });
    expect(() => process.env).toThrow('NotCapable');
    expect(environmentBackendChoice()).toBeUndefined();
  });
});
