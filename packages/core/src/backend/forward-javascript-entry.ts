/** `@weft/core/forward/javascript`: the runtime's JavaScript backend alone (no WebAssembly bytes). */
export type { ForwardAttentionKernels, ForwardBackend, ForwardKernelName, ForwardKernels } from './forward.js';
export { forwardAttentionKernels, javascriptForward } from './forward.js';
