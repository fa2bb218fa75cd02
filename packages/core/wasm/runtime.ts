/** The runtime module: the forward kernels alone, so the inference bundle stays small. */
export { affineRows, gruLayerStep, lstmLayerStep, plainLayerStep } from './layers';
export { packPanels } from './packed';
