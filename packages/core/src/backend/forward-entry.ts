/** `@weft/core/forward`: the inference runtime's backends (forward kernels and their memory), both of them. */
export type { ForwardAttentionKernels, ForwardBackend, ForwardKernelName, ForwardKernels } from './forward.js';
export { forwardAttentionKernels, javascriptForward } from './forward.js';
export type { ForwardWebAssemblyOptions } from './forward-webassembly.js';
export { createForwardWebAssembly, forwardWebAssemblyUnavailable } from './forward-webassembly.js';
export { environmentBackendChoice } from './environment.js';
