/**
 * The kernel table: every loop the library computes with, by name, with a fixed signature (the JavaScript
 * kernel's). A backend supplies one table; ops, cells, update rules and the runtime call kernels only through
 * the table of the backend they were given, never by importing a kernel module.
 *
 * Adding a kernel (both backends, DESIGN "Numbers"):
 *   1. write the JavaScript kernel in core/src/kernels/ (out-first; at most six parameters, grouped into argument
 *      records a caller makes once and refills (shapes.ts, step-records.ts); separate named kernels, not boolean
 *      flags; its comment says which outputs may alias which inputs) and add its name to KERNEL_NAMES below; the
 *      JavaScript table picks it up;
 *   2. if it is hot, write its twin in core/wasm/ (AssemblyScript, byte offsets, same argument order), export it
 *      from core/wasm/training.ts (and runtime.ts if inference needs it), and wrap it in backend/webassembly.ts;
 *      otherwise the WebAssembly table uses the JavaScript kernel on its own memory, which is correct, just slower;
 *   3. add the pair to test/backend/webassembly.test.ts (twin against kernel, f32, |a−b| ≤ 1e-5·max(1, |a|, |b|)),
 *      and its aliasing statement to test/backend/aliasing.test.ts (proved on both backends).
 */
import * as javascript from '../kernels/index.js';

/** The names in every kernel table. */
export const KERNEL_NAMES = [
  'matmul',
  'matmulInto',
  'add',
  'subtract',
  'multiply',
  'scale',
  'addInto',
  'addScaledInto',
  'multiplyInto',
  'addRow',
  'sumRows',
  'sumRowsInto',
  'copyAt',
  'addAt',
  'copyToColumns',
  'copyFromColumns',
  'addToColumns',
  'addFromColumns',
  'sigmoid',
  'tanh',
  'relu',
  'exp',
  'log',
  'sigmoidGradientInto',
  'tanhGradientInto',
  'reluGradientInto',
  'sum',
  'dot',
  'sumOfSquares',
  'maxAbs',
  'firstNonFinite',
  'limitEntries',
  'crossEntropyRows',
  'attentionScores',
  'attentionScoresAdditive',
  'softmaxWithinLengths',
  'attentionContext',
  'attentionContextBackward',
  'softmaxWithinLengthsBackward',
  'attentionScoresBackward',
  'attentionScoresAdditiveBackward',
  'lstmStepForward',
  'lstmStepBackward',
  'gruUpdateReset',
  'gruResetHidden',
  'gruStepFinish',
  'gruBackwardCandidate',
  'gruBackwardReset',
  'plainStepForward',
  'plainStepBackward',
  'adamUpdate',
  'sgdUpdate',
  'nesterovUpdate',
] as const;

/** The name of a kernel in every backend's table. */
export type KernelName = (typeof KERNEL_NAMES)[number];

/** One function per name, with the JavaScript kernel's signature. */
export type KernelTable = { readonly [K in KernelName]: (typeof javascript)[K] };

/** The JavaScript kernels as a table. */
// biome-ignore lint/performance/noDynamicNamespaceImportAccess: the table is every kernel of the module by name, made once.
export const javascriptKernels: KernelTable = Object.freeze(Object.fromEntries(KERNEL_NAMES.map((name) => [name, javascript[name]])) as unknown as KernelTable);
