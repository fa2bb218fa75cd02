/**
 * The argument records of the recurrent step kernels (lstm-step.ts, gru-step.ts, plain-step.ts), grouped as the
 * equations group them: what the step writes (first), the state it reads, the weights, its working memory, and
 * where the batch stands. A caller makes each record once (per layer or per cell) and refills its fields before a
 * call, so no step allocates; the kernels read the fields and keep nothing.
 *
 * Names follow the equations: h and c are the hidden and cell state (hPrevious, cPrevious the step's inputs), a
 * gradient record's fields are the gradients of the values of the same name.
 */
import type { FloatArray } from '../dtype.js';

/** Where a step of a batch stands. Rows with `step` ≥ their length hold their state (`lengths` null: none do). */
export interface StepAt {
  /** Rows in the batch. */
  rows: number;
  /** The hidden width H. */
  hidden: number;
  /** Each row's sequence length, or null when every row runs the whole sequence. */
  lengths: Int32Array | null;
  /** The step's index within the sequence. */
  step: number;
}

/** A whole-layer step's place: a step's and the width of its input rows. */
export interface LayerStepAt extends StepAt {
  /** Features per input row. */
  inputWidth: number;
}

/** A plain cell's activation φ. */
export type StepActivation = 'tanh' | 'relu';

/** An LSTM's state: h and c, each [rows, H]. */
export interface LstmState {
  /** h [rows, H]. */
  h: FloatArray;
  /** c [rows, H]. */
  c: FloatArray;
}

/** What an LSTM step writes: h, c, the gates [rows, 4H] (pre-activations on entry) and tanh(c) [rows, H]. */
export interface LstmStepOut extends LstmState {
  /** The gates [rows, 4H]: pre-activations on entry, activations i, f, g, o on exit. */
  gates: FloatArray;
  /** tanh(c) [rows, H], written. */
  tanhCell: FloatArray;
}

/** The gradients arriving at an LSTM step's h and c (either null when none reached it). */
export interface LstmArriving {
  /** ∂L/∂h [rows, H], or null. */
  h: FloatArray | null;
  /** ∂L/∂c [rows, H], or null. */
  c: FloatArray | null;
}

/**
 * What an LSTM step's backward writes: the gate gradients [rows, 4H] (written), and adds into the previous
 * state's gradients and the peephole's (each null when not wanted).
 */
export interface LstmStepGradients {
  /** ∂L/∂a [rows, 4H], written. */
  gates: FloatArray;
  /** ∂L/∂h₋ [rows, H], added into; or null. */
  hPrevious: FloatArray | null;
  /** ∂L/∂c₋ [rows, H], added into; or null. */
  cPrevious: FloatArray | null;
  /** ∂L/∂p [3H], added into; or null. */
  peephole: FloatArray | null;
}

/** What an LSTM step's backward reads: the forward step's gates, tanh(c), c₋ and c, and the peephole [3H] or null. */
export interface LstmSaved {
  /** The step's gate activations [rows, 4H]. */
  gates: FloatArray;
  /** tanh(c) [rows, H]. */
  tanhCell: FloatArray;
  /** c₋ [rows, H]. */
  cPrevious: FloatArray;
  /** c [rows, H]. */
  c: FloatArray;
  /** The peephole weights [3H] (i, f, o), or null. */
  peephole: FloatArray | null;
}

/** An LSTM layer's weights: W [inputWidth, 4H], R [H, 4H], b [4H] and the peephole [3H] or null. */
export interface LstmWeights {
  /** W [inputWidth, 4H]. */
  input: FloatArray;
  /** R [H, 4H]. */
  recurrent: FloatArray;
  /** b [4H]. */
  bias: FloatArray;
  /** The peephole weights [3H] (i, f, o), or null. */
  peephole: FloatArray | null;
}

/** An LSTM layer step's working memory: the gates [rows, 4H] and tanh(c) [rows, H]. */
export interface LstmWork {
  /** The gates [rows, 4H]. */
  gates: FloatArray;
  /** tanh(c) [rows, H]. */
  tanhCell: FloatArray;
}

/** Where a GRU's reset gate acts: on h₋ before the candidate product (the default) or on its result. */
export type GruForm = 'resetBefore' | 'resetAfter';

/** What a GRU step's finish writes: h [rows, H] and the candidate n into columns [2H, 3H) of the gates. */
export interface GruStepOut {
  /** h [rows, H], written. */
  h: FloatArray;
  /** The gates [rows, 3H]: z, r on entry; n written into columns [2H, 3H). */
  gates: FloatArray;
}

/**
 * What a GRU step's finish reads: the input projections (this step's rows start at `projectedOffset`), the
 * recurrent candidate term q [rows, H] and h₋.
 */
export interface GruFinishInputs {
  /** The input projections x·W + b, [rows, 3H] from `projectedOffset`. */
  projected: FloatArray;
  /** Where this step's rows start in `projected`. */
  projectedOffset: number;
  /** q, the recurrent candidate term [rows, H]. */
  candidate: FloatArray;
  /** h₋ [rows, H]. */
  hPrevious: FloatArray;
}

/**
 * A GRU step's backward outputs: δa_z, δa_r [rows, 2H], δa_n and δq [rows, H] (written), and the gradient of h₋
 * (added into; null when not wanted).
 */
export interface GruStepGradients {
  /** δa_z, δa_r [rows, 2H], written. */
  updateReset: FloatArray;
  /** δa_n [rows, H], written. */
  candidate: FloatArray;
  /** δq [rows, H], written. */
  product: FloatArray;
  /** ∂L/∂h₋ [rows, H], added into; or null. */
  hPrevious: FloatArray | null;
}

/** What a GRU step's backward reads: the forward step's gates [rows, 3H], q [rows, H] and h₋. */
export interface GruSaved {
  /** The gates z, r, n [rows, 3H]. */
  gates: FloatArray;
  /** q [rows, H]. */
  candidate: FloatArray;
  /** h₋ [rows, H]. */
  hPrevious: FloatArray;
}

/**
 * A GRU layer's weights: W [inputWidth, 3H], b [3H], R_zr [H, 2H], R_n [H, H] and, for the reset-after form,
 * the candidate's recurrent bias b_Rn [H] (null for the default form).
 */
export interface GruWeights {
  /** W [inputWidth, 3H]. */
  input: FloatArray;
  /** b [3H]. */
  bias: FloatArray;
  /** R_zr [H, 2H]. */
  recurrent: FloatArray;
  /** R_n [H, H]. */
  candidate: FloatArray;
  /** b_Rn [H] for the reset-after form, else null. */
  candidateBias: FloatArray | null;
}

/** A GRU layer step's working memory: projections [rows, 3H], gates [rows, 3H], h₋·R_zr [rows, 2H], q and r ⊙ h₋ [rows, H]. */
export interface GruWork {
  /** x·W + b [rows, 3H]. */
  projected: FloatArray;
  /** The gates [rows, 3H]. */
  gates: FloatArray;
  /** h₋·R_zr [rows, 2H]. */
  updateReset: FloatArray;
  /** q [rows, H]. */
  candidate: FloatArray;
  /** r ⊙ h₋ [rows, H]. */
  resetHidden: FloatArray;
}

/** What a plain step's backward writes: δa [rows, H] (written) and the gradient of h₋ (added into; null when not wanted). */
export interface PlainStepGradients {
  /** δa [rows, H], written. */
  pre: FloatArray;
  /** ∂L/∂h₋ [rows, H], added into; or null. */
  hPrevious: FloatArray | null;
}

/** A plain layer's weights: W [inputWidth, H], R [H, H], b [H]. */
export interface PlainWeights {
  /** W [inputWidth, H]. */
  input: FloatArray;
  /** R [H, H]. */
  recurrent: FloatArray;
  /** b [H]. */
  bias: FloatArray;
}
