/** The typed-array kernels: out-first, explicit dimensions, no allocation. */
export { matmul, matmulNaive } from './matmul.js';
export { add, addInto, addRow, addScaledInto, multiply, multiplyInto, scale, subtract, sumRows } from './elementwise.js';
export { exp, log, relu, reluGradientInto, sigmoid, sigmoidGradientInto, tanh, tanhGradientInto } from './activations.js';
export { dot, firstNonFinite, maxAbs, sum, sumOfSquares } from './reductions.js';
export { crossEntropyRows } from './softmax.js';
