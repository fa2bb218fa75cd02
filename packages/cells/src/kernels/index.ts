/** The cells' step kernels: typed-array loops shared by the tape path and the inference runtime. */
export { lstmStepBackward, lstmStepForward } from './lstm-step.js';
export { gruBackwardCandidate, gruBackwardReset, gruResetHidden, gruStepFinish, gruUpdateReset } from './gru-step.js';
export { plainStepBackward, plainStepForward } from './plain-step.js';
export { logistic } from './logistic.js';
