/** The runtime module: the forward kernels alone, so the inference bundle stays small. */
export { matmul } from './matmul';
export { addRow } from './elementwise';
export { gruLayerStep, lstmLayerStep, plainLayerStep } from './layers';
