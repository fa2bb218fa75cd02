/** The runtime module: the forward kernels alone, so the inference bundle stays small. */
export { matmul } from './matmul';
export { addRow } from './elementwise';
export { gruResetHidden, gruStepFinish, gruUpdateReset, lstmStepForward, plainStepForward } from './steps';
export { copyFloats } from './math';
