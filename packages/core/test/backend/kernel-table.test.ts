import { describe, expect, it } from 'vitest';
import { KERNEL_NAMES, createWebAssemblyBackend, javascriptKernels, kernels, webAssemblyUnavailable } from '@weft/core';

describe('the kernel table', () => {
  it('names every kernel once, and the JavaScript table holds exactly the kernels of @weft/core/kernels by those names', () => {
    expect(new Set(KERNEL_NAMES).size).toBe(KERNEL_NAMES.length);
    expect(Object.keys(javascriptKernels).sort()).toEqual([...KERNEL_NAMES].sort());
    for (const name of KERNEL_NAMES) expect(javascriptKernels[name]).toBe((kernels as Record<string, unknown>)[name]);
  });

  it.skipIf(webAssemblyUnavailable() !== null)('is filled for every name by the WebAssembly backend too, each entry a function', () => {
    const backend = createWebAssemblyBackend({ memoryBytes: 1048576 });
    expect(Object.keys(backend.kernels).sort()).toEqual([...KERNEL_NAMES].sort());
    for (const name of KERNEL_NAMES) expect(typeof backend.kernels[name]).toBe('function');
  });
});
