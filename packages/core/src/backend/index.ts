/** Backends: the kernel table and the memory it computes in (see backend.ts). */
export type { Backend, BackendName, KernelSet } from './backend.js';
export type { KernelName, KernelTable } from './kernel-table.js';
export { KERNEL_NAMES, javascriptKernels } from './kernel-table.js';
export { javascriptBackend } from './javascript.js';
export type { WebAssemblyBackendOptions } from './webassembly.js';
export {
  compiledKernels,
  createWebAssemblyBackend,
  defaultKernelSet,
  relaxedKernelsUnavailable,
  useCompiledKernels,
  webAssemblyUnavailable,
} from './webassembly.js';
export { backendNamed, backendOf, defaultBackend, memoryOwner, setDefaultBackend, webAssemblyBackend } from './choose.js';
export { environmentBackendChoice, environmentKernelChoice } from './environment.js';
