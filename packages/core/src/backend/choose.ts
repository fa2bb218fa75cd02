/**
 * Which backend runs when none is given. The default is the WebAssembly SIMD backend where the platform validates
 * a SIMD module, else the JavaScript backend; `setDefaultBackend` changes it for everything made afterwards, and
 * the environment variable WEFT_BACKEND (`javascript` or `webassembly`, read once where a `process` exists) sets
 * it for a whole process, which is how CI runs the suite on each backend.
 *
 * Tensors keep the backend whose memory holds them: changing the default does not move existing tensors, and an
 * operation that meets tensors of two backends says so (see backend.ts).
 */
import type { FloatArray } from '../dtype.js';
import { environmentBackendChoice } from './environment.js';
import { fail } from '../errors.js';
import type { Backend, BackendName } from './backend.js';
import { javascriptBackend } from './javascript.js';
import { createWebAssemblyBackend, webAssemblyUnavailable } from './webassembly.js';

let sharedWebAssembly: Backend | null = null;
let current: Backend | null = null;

const NAMES: readonly BackendName[] = ['javascript', 'webassembly'];

/** The backend shared by everything that names `webassembly` without making its own (made on first use). */
export function webAssemblyBackend(): Backend {
  if (sharedWebAssembly === null) sharedWebAssembly = createWebAssemblyBackend();
  return sharedWebAssembly;
}

/** The backend called `name` (`javascript` or `webassembly`); a WeftError names what is missing. */
export function backendNamed(name: string, path = 'backend'): Backend {
  if (name === 'javascript') return javascriptBackend;
  if (name === 'webassembly') return webAssemblyBackend();
  fail('invalid_option', path, NAMES.map((n) => `'${n}'`).join(' or '), JSON.stringify(name));
}

/**
 * The backend used where none is given: WEFT_BACKEND's, else WebAssembly where SIMD modules validate and compile,
 * else JavaScript (with a one-time console note when compiling was refused).
 */
export function defaultBackend(): Backend {
  if (current === null) {
    const requested = environmentBackendChoice();
    if (requested !== undefined) current = backendNamed(requested, 'WEFT_BACKEND');
    else if (webAssemblyUnavailable() !== null) current = javascriptBackend;
    else {
      try {
        current = webAssemblyBackend();
      } catch (error) {
        // Validated but not compiled (a page whose Content-Security-Policy lacks 'wasm-unsafe-eval'): JavaScript,
        // said once, as the runtime does. Naming a backend says nothing.
        console.warn(
          `weft: WebAssembly could not be compiled here (${(error as Error).message}); training runs on JavaScript. Allow 'wasm-unsafe-eval' in a page's CSP, or choose the 'javascript' backend.`,
        );
        current = javascriptBackend;
      }
    }
  }
  return current;
}

/** Makes `backend` (or the backend of that name) the default for everything made from now on; returns it. */
export function setDefaultBackend(backend: Backend | BackendName): Backend {
  current = typeof backend === 'string' ? backendNamed(backend) : backend;
  return current;
}

export { memoryOwner } from './backend.js';
import { memoryOwner } from './backend.js';

/** The backend whose memory holds `array` (the JavaScript backend for ordinary typed arrays). */
export function backendOf(array: FloatArray): Backend {
  return memoryOwner(array) ?? javascriptBackend;
}
