/**
 * Which backend a runtime runs on: `webassembly` (forward SIMD kernels in a memory of the runtime's own),
 * `javascript`, or a ForwardBackend made by the caller. The default is WebAssembly where the platform validates a
 * SIMD module, else JavaScript; WEFT_BACKEND (read once where a `process` exists) overrides it, as for training.
 */
import { fail } from '@weft/core';
import type { ForwardBackend } from '@weft/core/forward';
import { createForwardWebAssembly, forwardWebAssemblyUnavailable, javascriptForward } from '@weft/core/forward';
import { setForwardChooser } from './forward-default.js';

/** Where a runtime runs: a backend by name, or a forward backend you made. */
export type RuntimeBackendChoice = 'javascript' | 'webassembly' | ForwardBackend;

/** The forward backend for a choice, sized for `weightBytes` of weights. */
export function forwardBackend(choice: RuntimeBackendChoice | undefined, weightBytes: number, memoryBytes?: number): ForwardBackend {
  if (choice === undefined) {
    const host = globalThis as { process?: { env?: Record<string, string | undefined> } };
    const requested = host.process?.env?.WEFT_BACKEND;
    if (requested !== undefined && requested !== '') return forwardBackend(requested as RuntimeBackendChoice, weightBytes, memoryBytes);
    return forwardWebAssemblyUnavailable() === null ? createForwardWebAssembly({ weightBytes, memoryBytes }) : javascriptForward;
  }
  if (choice === 'javascript') return javascriptForward;
  if (choice === 'webassembly') return createForwardWebAssembly({ weightBytes, memoryBytes });
  if (typeof choice === 'object' && choice !== null && typeof choice.floats === 'function') return choice;
  fail('invalid_option', 'runtime.backend', "'javascript', 'webassembly' or a forward backend", JSON.stringify(choice) ?? String(choice));
}

setForwardChooser((weightBytes) => forwardBackend(undefined, weightBytes));
