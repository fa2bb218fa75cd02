/** Test helper: the message of the WeftError that `f` throws (failing the test if it throws anything else or nothing). */
import { expect } from 'vitest';
import { WeftError } from '@weft/core';

export function weftErrorMessage(f: () => unknown): string {
  try {
    f();
  } catch (error) {
    expect(error).toBeInstanceOf(WeftError);
    return (error as WeftError).message;
  }
  throw new Error('expected a WeftError, but nothing was thrown');
}
