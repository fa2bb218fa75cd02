/**
 * Attention over an encoder's states, as one tape operation with its own backward (Bahdanau, Cho & Bengio 2015,
 * "Neural machine translation by jointly learning to align and translate", eqs. 5–6 and appendix A.1.2; Luong, Pham &
 * Manning 2015, "Effective approaches to attention-based neural machine translation", §3.1, eq. 8):
 *
 *   score e_bs:  dot      q_b · k_bs
 *                general  q_b · (W k_bs)                 (pass the keys already multiplied by W: `scoreKeys` = K·Wᵀ)
 *                additive v · tanh(q_b + u_bs)            (q_b = W_a s, u_bs = U_a h_s, both projected by the caller)
 *   weights a_bs = exp(e_bs) / Σ_{s' < L_b} exp(e_bs')    (softmax over the row's own source positions; 0 beyond L_b)
 *   context c_b  = Σ_s a_bs h_bs
 *
 * The projections are ordinary tape products, so this operation holds only the part no other operation does: the
 * scores, the masked softmax and the weighted sum, with their derivatives (chain rule; softmax Jacobian
 * ∂a_s/∂e_t = a_s([s = t] − a_t)). It computes through the backend's attention kernels (core's kernels/attention.ts),
 * which the runtime's decoding calls too, so the equations are written once. Sources are time-major [S, B, ·] like
 * every sequence here; a row of length 0 has a zero context and zero weights. The query may hold T steps at once
 * ([T, B, D], Luong et al.'s decoder states h_t, which do not depend on the attention), each attending over the same
 * states.
 */
import { fail, formatShape, noTensor } from '@weft/core';
import type { FloatArray, OperationKind, Tape, Tensor } from '@weft/core';
import { attentionShape } from '@weft/core/internal';
import type { AttentionShape } from '@weft/core/internal';

/** What attention gives for one decoding step. */
export interface AttentionStep {
  /** The context c [B, H] (or [T, B, H] for a query of T steps): the values weighted by the attention weights. */
  readonly context: Tensor;
  /**
   * The attention weights a [B, S] (or [T, B, S]; row b sums to 1 over its first L_b positions; a copy the caller may
   * keep).
   */
  readonly weights: Float64Array;
}

interface AttentionSaved {
  query: Tensor;
  scoreKeys: Tensor;
  values: Tensor;
  /** v of the additive form, or null for the dot forms. */
  vector: Tensor | null;
  /** The weights a, [T, B, S], in the values' element type. */
  weights: FloatArray;
  shape: AttentionShape;
}

const attentionKind: OperationKind<AttentionSaved> = {
  name: 'attend',
  saves: () => ({ query: noTensor, scoreKeys: noTensor, values: noTensor, vector: null, weights: noTensor.data, shape: attentionShape(0, 0, 0, 0, 0) }),
  backward(node, tape): void {
    const { query, scoreKeys, values, vector, weights, shape } = node.saved;
    const kernels = tape.kernels;
    // ∂a from the context, then ∂e through the softmax (in place), then the score's own backward.
    const scoreGradient = tape.buffer(values.dtype, weights.length);
    kernels.attentionContextBackward(scoreGradient, values.tracked ? tape.gradientOf(values) : null, node.output.gradient!, weights, values.data, shape);
    kernels.softmaxWithinLengthsBackward(scoreGradient, scoreGradient, weights, shape);
    const gq = query.tracked ? tape.gradientOf(query) : null;
    const gk = scoreKeys.tracked ? tape.gradientOf(scoreKeys) : null;
    if (vector === null) {
      kernels.attentionScoresBackward(gq, gk, scoreGradient, query.data, scoreKeys.data, shape);
    } else {
      const gradients = { query: gq, keys: gk, vector: vector.tracked ? tape.gradientOf(vector) : null };
      kernels.attentionScoresAdditiveBackward(gradients, scoreGradient, { query: query.data, keys: scoreKeys.data, vector: vector.data }, shape);
    }
  },
};

/**
 * Attention (see above): `query` [B, D], or [T, B, D] for T steps at once; `scoreKeys` [S, B, D] (the keys as
 * scored: the encoder states for `dot`, K·Wᵀ for `general`, U·h for `additive`); `values` [S, B, H] (the encoder
 * states); `vector` [D] (v, additive form only, else null); `lengths` per row, or null for full rows.
 */
export function attend(tape: Tape, query: Tensor, scoreKeys: Tensor, values: Tensor, vector: Tensor | null, lengths: Int32Array | null): AttentionStep {
  if (query.shape.length !== 2 && query.shape.length !== 3)
    fail('shape_mismatch', 'attend.query', '[batch, depth] or [steps, batch, depth]', formatShape(query.shape));
  const steps = query.shape.length === 3 ? query.shape[0] : 1;
  const [rows, depth] = query.shape.slice(-2);
  if (values.shape.length !== 3 || values.shape[1] !== rows) fail('shape_mismatch', 'attend.values', `[sources, ${rows}, width]`, formatShape(values.shape));
  const [sources, , width] = values.shape;
  if (scoreKeys.shape.length !== 3 || scoreKeys.shape[0] !== sources || scoreKeys.shape[1] !== rows || scoreKeys.shape[2] !== depth) {
    fail('shape_mismatch', 'attend.scoreKeys', formatShape([sources, rows, depth]), formatShape(scoreKeys.shape));
  }
  if (vector !== null && (vector.shape.length !== 1 || vector.shape[0] !== depth))
    fail('shape_mismatch', 'attend.vector', formatShape([depth]), formatShape(vector.shape));
  if (lengths !== null && lengths.length !== rows) fail('shape_mismatch', 'attend.lengths', `${rows} lengths`, `${lengths.length}`);
  if (lengths !== null) {
    for (let b = 0; b < rows; b++) {
      if (!Number.isInteger(lengths[b]) || lengths[b] < 0 || lengths[b] > sources)
        fail('invalid_argument', `attend.lengths[${b}]`, `a length from 0 to ${sources}`, String(lengths[b]));
    }
  }
  const tracked = query.tracked || scoreKeys.tracked || values.tracked || (vector?.tracked ?? false);
  const out = tape.output(query.shape.length === 3 ? [steps, rows, width] : [rows, width], values.dtype, tracked);
  const weights = tape.buffer(values.dtype, steps * rows * sources);
  const shape = attentionShape(steps, rows, sources, depth, width, lengths);
  const kernels = tape.kernels;
  if (vector === null) kernels.attentionScores(weights, query.data, scoreKeys.data, shape);
  else kernels.attentionScoresAdditive(weights, { query: query.data, keys: scoreKeys.data, vector: vector.data }, shape);
  kernels.softmaxWithinLengths(weights, weights, shape);
  kernels.attentionContext(out.data, weights, values.data, shape);
  const saved = tape.record(attentionKind, out);
  if (saved !== null) {
    saved.query = query;
    saved.scoreKeys = scoreKeys;
    saved.values = values;
    saved.vector = vector;
    saved.weights = weights;
    saved.shape = shape;
  }
  return { context: out, weights: Float64Array.from(weights) };
}
