/**
 * The cells' step kernels. Their JavaScript implementations live in @weft/core's kernel table (so a backend can
 * register its own twins beside them); this entry re-exports them for code that imported them from here.
 */
export {
  gruBackwardCandidate,
  gruBackwardReset,
  gruResetHidden,
  gruStepFinish,
  gruUpdateReset,
  logistic,
  lstmStepBackward,
  lstmStepForward,
  plainStepBackward,
  plainStepForward,
} from '@weft/core/kernels';
