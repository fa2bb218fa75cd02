import { describe, expect, it } from 'vitest';
import { forwardWebAssemblyUnavailable, javascriptForward } from '@weft/core/forward';
import { forwardBackend } from '../../src/runtime/choose.js';

describe('choosing the runtime\'s backend', () => {
  it('takes one by name or one made by the caller, and refuses anything else by the option\'s name', () => {
    expect(forwardBackend('javascript', 0)).toBe(javascriptForward);
    expect(forwardBackend(javascriptForward, 0)).toBe(javascriptForward);
    expect(() => forwardBackend('gpu' as 'javascript', 0)).toThrowError('Invalid option at runtime.backend: expected \'javascript\', \'webassembly\' or a forward backend, received "gpu"');
  });

  it.skipIf(forwardWebAssemblyUnavailable() !== null)('makes a WebAssembly backend sized for the weights when asked by name', () => {
    const backend = forwardBackend('webassembly', 4 * 1048576);
    expect(backend.name).toBe('webassembly');
    expect(backend.floats(1_000_000).length).toBe(1_000_000);
  });

  it('follows WEFT_BACKEND when no backend is named, as training does', () => {
    const before = process.env.WEFT_BACKEND;
    process.env.WEFT_BACKEND = 'javascript';
    try {
      expect(forwardBackend(undefined, 0)).toBe(javascriptForward);
    } finally {
      if (before === undefined) delete process.env.WEFT_BACKEND;
      else process.env.WEFT_BACKEND = before;
    }
  });
});
