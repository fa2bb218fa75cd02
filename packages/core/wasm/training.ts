/** The training module: every kernel of the WebAssembly backend. */
export { matmul } from './matmul';
export { add, addInto, addRow, addScaledInto, exp, multiply, multiplyInto, scale, sigmoid, sigmoidGradientInto, subtract, sumRows, tanh, tanhGradientInto } from './elementwise';
export {
  gruBackwardCandidate, gruBackwardReset, gruResetHidden, gruStepFinish, gruUpdateReset, lstmStepBackward, lstmStepForward,
  plainStepBackward, plainStepForward,
} from './steps';
export { adamUpdate, sgdUpdate } from './rules';
export {
  attentionContext, attentionContextBackward, attentionScores, attentionScoresAdditive, attentionScoresAdditiveBackward, attentionScoresBackward,
} from './attention';
export { addAt, columns, copyAt, crossEntropyRows, firstNonFinite, sumOfSquares } from './rows';
