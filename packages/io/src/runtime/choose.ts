/**
 * Which backend a runtime runs on: `webassembly` (forward SIMD kernels in a memory of the runtime's own),
 * `javascript`, or a ForwardBackend made by the caller. The default is WebAssembly where the platform validates a
 * SIMD module, else JavaScript; WEFT_BACKEND (where a `process` exists and may be read) overrides it, as for
 * training.
 */
import { fail } from '@weft/core/base';
import type { BackendName } from '@weft/core';
import type { ForwardBackend } from '@weft/core/forward';
import { createForwardWebAssembly, environmentBackendChoice, forwardWebAssemblyUnavailable, javascriptForward } from '@weft/core/forward';
import { setForwardChooser } from './forward-default.js';

/** Where a runtime runs: a backend by the name training uses (`BackendName`), or a forward backend you made. */
export type RuntimeBackendChoice = BackendName | ForwardBackend;

let warned = false;

/**
 * The forward backend for a choice, sized for `weightBytes` of weights. With no choice: WebAssembly where the
 * platform validates and compiles SIMD modules, else JavaScript (with a one-time console note when compiling was
 * refused; `runtime.backend.name` says which ran).
 */
export function forwardBackend(choice: RuntimeBackendChoice | undefined, weightBytes: number, memoryBytes?: number): ForwardBackend {
  if (choice === undefined) {
    const requested = environmentBackendChoice();
    if (requested !== undefined) return forwardBackend(requested as RuntimeBackendChoice, weightBytes, memoryBytes);
    if (forwardWebAssemblyUnavailable() !== null) return javascriptForward;
    try {
      return createForwardWebAssembly({ weightBytes, memoryBytes });
    } catch (error) {
      // A platform that validates SIMD modules but refuses to compile them (a page whose Content-Security-Policy
      // lacks 'wasm-unsafe-eval'): JavaScript, said once. Choosing a backend by name says nothing.
      if (!warned) {
        warned = true;
        console.warn(
          `weft: WebAssembly could not be compiled here (${(error as Error).message}); the runtime runs on JavaScript, 3–4× slower. Allow 'wasm-unsafe-eval' in a page's CSP, or pass backend: 'javascript'.`,
        );
      }
      return javascriptForward;
    }
  }
  if (choice === 'javascript') return javascriptForward;
  if (choice === 'webassembly') return createForwardWebAssembly({ weightBytes, memoryBytes });
  if (typeof choice === 'object' && choice !== null && typeof choice.floats === 'function') return choice;
  fail('invalid_option', 'runtime.backend', "'javascript', 'webassembly' or a forward backend", JSON.stringify(choice) ?? String(choice));
}

setForwardChooser((weightBytes) => forwardBackend(undefined, weightBytes));
