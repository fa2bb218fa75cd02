import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { withRefusedWebAssembly } from '../../../../tests/helpers/refused-webassembly.js';
import { forwardWebAssemblyUnavailable, javascriptForward } from '@weft/core/forward';
import { forwardBackend } from '../../src/runtime/choose.js';

describe("choosing the runtime's backend", () => {
  it("takes one by name or one made by the caller, and refuses anything else by the option's name", () => {
    expect(forwardBackend('javascript', 0)).toBe(javascriptForward);
    expect(forwardBackend(javascriptForward, 0)).toBe(javascriptForward);
    expect(() => forwardBackend('gpu' as 'javascript', 0)).toThrowError(
      "Invalid option at runtime.backend: expected 'javascript', 'webassembly' or a forward backend, received \"gpu\"",
    );
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

  it('falls back to JavaScript, with one note, where WebAssembly validates but may not be compiled (a strict Content-Security-Policy)', () => {
    const runtimeEntry = fileURLToPath(new URL('../../dist/runtime/index.js', import.meta.url));
    const { result, stderr } = withRefusedWebAssembly<{ names: string[]; notes: string[]; named: string }>(`
      const { forwardBackend } = await import(${JSON.stringify(runtimeEntry)});
      const names = [forwardBackend(undefined, 0).name, forwardBackend(undefined, 0).name];
      let named;
      try { forwardBackend('webassembly', 0); } catch (error) { named = error.constructor.name; }
      console.log(JSON.stringify({ names, notes, named }));`);
    expect(stderr).toBe('');
    const { names, notes, named } = result;
    expect(names).toEqual(['javascript', 'javascript']);
    expect(notes).toHaveLength(1);
    expect(notes[0]).toMatch(
      /^weft: WebAssembly could not be compiled here \(.*a refusal to compile \(Wasm code generation disallowed by embedder\).*\); the runtime runs on JavaScript/,
    );
    // Asked for by name, WebAssembly stays an error (a one-line WeftError): a fallback only replaces the default.
    expect(named).toBe('WeftError');
  });
});
