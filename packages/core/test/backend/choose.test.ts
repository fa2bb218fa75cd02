/**
 * Choosing a backend, and what happens at its edges: tensors of two backends meeting in one operation, a pool of
 * the wrong backend, an unknown backend name, a platform without WebAssembly SIMD, and a memory reservation that
 * runs out. Each is a WeftError naming the backend and what was wrong; messages are pinned.
 */
import { fileURLToPath } from 'node:url';
import { describe, expect, it, vi } from 'vitest';
import { withRefusedWebAssembly } from '../../../../tests/helpers/refused-webassembly.js';
import {
  Tape,
  WeftError,
  add,
  backendNamed,
  backendOf,
  createWebAssemblyBackend,
  defaultBackend,
  javascriptBackend,
  matmul,
  setDefaultBackend,
  tensor,
  webAssemblyUnavailable,
  zeros,
} from '@weft/core';

const available = webAssemblyUnavailable() === null;

describe('choosing a backend', () => {
  it('defaults to WebAssembly SIMD where the platform validates it, unless WEFT_BACKEND names one', () => {
    const requested = process.env.WEFT_BACKEND;
    const expected = requested !== undefined && requested !== '' ? requested : available ? 'webassembly' : 'javascript';
    expect(defaultBackend().name).toBe(expected);
  });

  it('falls back to JavaScript with one note where WebAssembly validates but may not be compiled (a strict Content-Security-Policy), and refuses it by name there in one line', () => {
    const entry = fileURLToPath(new URL('../../dist/index.js', import.meta.url));
    const { result, stderr } = withRefusedWebAssembly<{ names: string[]; notes: string[]; named: string }>(`
      const core = await import(${JSON.stringify(entry)});
      const names = [core.defaultBackend().name, core.defaultBackend().name];
      let named;
      try { core.createWebAssemblyBackend(); } catch (error) { named = error.message; }
      console.log(JSON.stringify({ names, notes, named }));`);
    expect(stderr).toBe('');
    const { names, notes, named } = result;
    expect(names).toEqual(['javascript', 'javascript']);
    expect(notes).toHaveLength(1);
    expect(notes[0]).toMatch(/^weft: WebAssembly could not be compiled here \(.*disallowed by embedder.*\); training runs on JavaScript/);
    expect(named).toMatch(
      /^Backend unavailable at backend webassembly: expected a platform that compiles WebAssembly, received a refusal to compile \(Wasm code generation disallowed by embedder\)/,
    );
  });

  it('refuses an unknown backend name, listing the known ones', () => {
    expect(() => backendNamed('gpu')).toThrowError("Invalid option at backend: expected 'javascript' or 'webassembly', received \"gpu\"");
  });

  it.skipIf(!available)('refuses tensors of two backends in one operation instead of copying between them', () => {
    const wasm = backendNamed('webassembly');
    const onWasm = zeros([2, 3], 'f32', wasm.pool);
    const onJs = zeros([3, 2], 'f32', javascriptBackend.pool);
    expect(backendOf(onWasm.data)).toBe(wasm);
    expect(backendOf(onJs.data)).toBe(javascriptBackend);
    const jsTape = new Tape({ backend: javascriptBackend });
    expect(() => matmul(jsTape, onJs, onWasm)).toThrowError(
      "Backend mismatch at matmul.b: expected a tensor in javascript memory (the tape's backend), received a tensor in webassembly memory " +
        '(make tensors and tapes on one backend, or copy with convert(t, dtype, backend.pool))',
    );
    const wasmTape = new Tape({ backend: wasm });
    expect(() => add(wasmTape, onWasm, zeros([2, 3], 'f32', javascriptBackend.pool))).toThrowError(
      /^Backend mismatch at add\.b: expected a tensor in webassembly memory/,
    );
    // f64 tensors live on every backend (gradient checks run on the JavaScript kernels on either).
    const a = tensor([1, 2], [1, 2], 'f64');
    expect(add(wasmTape, a, a).data[1]).toBe(4);
  });

  it.skipIf(!available)('refuses a tape given a pool of another backend, before any operation runs', () => {
    expect(() => new Tape({ backend: backendNamed('webassembly'), pool: javascriptBackend.createPool() })).toThrowError(
      'Backend mismatch at Tape.pool: expected a pool of the webassembly backend (backend.createPool()), received a pool whose buffers live elsewhere ' +
        '(pass { backend, pool: backend.createPool() } together, or leave out the pool)',
    );
  });

  it.skipIf(!available)('runs out of a small reservation with an error that says how to reserve more, and never grows the memory', () => {
    const small = createWebAssemblyBackend({ memoryBytes: 65536 });
    const first = small.pool.take('f32', 1000) as Float32Array;
    first.fill(7);
    const bytes = first.buffer.byteLength;
    let error: unknown;
    try {
      small.pool.take('f32', 20000);
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(WeftError);
    expect((error as WeftError).code).toBe('backend_memory');
    expect((error as WeftError).message).toContain('make the backend with a larger memoryBytes');
    // The earlier view is still attached and holds its values: the memory never grew.
    expect(first.buffer.byteLength).toBe(bytes);
    expect(first[999]).toBe(7);
    expect(() => createWebAssemblyBackend({ memoryBytes: 100 })).toThrowError(/^Invalid option at webassembly backend\.memoryBytes/);
  });

  it('says which backend is missing and why on a platform without WebAssembly SIMD', async () => {
    vi.resetModules();
    vi.stubGlobal('WebAssembly', { ...WebAssembly, validate: () => false });
    try {
      const fresh = await import('../../src/backend/webassembly.js');
      expect(fresh.webAssemblyUnavailable()).toBe('this platform does not validate WebAssembly SIMD (128-bit) modules');
      expect(() => fresh.createWebAssemblyBackend()).toThrowError(
        "Backend unavailable at backend webassembly: expected a platform that runs WebAssembly SIMD, received this platform does not validate WebAssembly SIMD (128-bit) modules (use the 'javascript' backend)",
      );
    } finally {
      vi.unstubAllGlobals();
      vi.resetModules();
    }
  });

  it('changes the default for what is made afterwards, leaving existing tensors where they are', () => {
    const before = defaultBackend();
    const made = zeros([2], 'f32');
    try {
      setDefaultBackend('javascript');
      expect(defaultBackend()).toBe(javascriptBackend);
      expect(backendOf(zeros([2], 'f32').data)).toBe(javascriptBackend);
      expect(backendOf(made.data)).toBe(before);
    } finally {
      setDefaultBackend(before);
    }
  });
});
