/** `@weft/core/forward/javascript`: the runtime's JavaScript backend alone (no WebAssembly bytes). */
export type { ForwardBackend, ForwardKernelName, ForwardKernels } from './forward.js';
export { javascriptForward } from './forward.js';
