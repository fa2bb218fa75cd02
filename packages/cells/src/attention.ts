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
 * ∂a_s/∂e_t = a_s([s = t] − a_t)). Sources are time-major [S, B, ·] like every sequence here; a row of length 0 has
 * a zero context and zero weights. The query may hold T steps at once ([T, B, D], Luong et al.'s decoder states
 * h_t, which do not depend on the attention), each attending over the same states.
 */
import { fail, formatShape, noTensor } from '@weft/core';
import type { FloatArray, OperationKind, Tape, Tensor } from '@weft/core';

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
  /** The weights a, [T, B, S]. */
  weights: FloatArray;
  lengths: Int32Array | null;
}

const attentionKind: OperationKind<AttentionSaved> = {
  name: 'attend',
  saves: () => ({ query: noTensor, scoreKeys: noTensor, values: noTensor, vector: null, weights: noTensor.data, lengths: null }),
  backward(node, tape): void {
    const { query, scoreKeys, values, vector, weights, lengths } = node.saved;
    const [sources, rows, width] = values.shape;
    const depth = scoreKeys.shape[2];
    const steps = query.size / (rows * depth);
    const g = node.output.gradient!;
    const gq = query.tracked ? tape.gradientOf(query) : null;
    const gk = scoreKeys.tracked ? tape.gradientOf(scoreKeys) : null;
    const gv = values.tracked ? tape.gradientOf(values) : null;
    const gvec = vector?.tracked ? tape.gradientOf(vector) : null;
    const scoreGradient = tape.buffer('f64', sources);
    for (let t = 0; t < steps; t++) {
      for (let b = 0; b < rows; b++) {
        const length = lengths === null ? sources : lengths[b];
        const row = t * rows + b;
        // ∂a_s = ∂c · h_s; ∂h_s += a_s ∂c; then ∂e_s = a_s (∂a_s − Σ_u a_u ∂a_u).
        let dot = 0;
        for (let s = 0; s < length; s++) {
          const at = (s * rows + b) * width;
          const a = weights[row * sources + s];
          let da = 0;
          for (let j = 0; j < width; j++) {
            da += g[row * width + j] * values.data[at + j];
            if (gv !== null) gv[at + j] += a * g[row * width + j];
          }
          scoreGradient[s] = da;
          dot += a * da;
        }
        for (let s = 0; s < length; s++) {
          const de = weights[row * sources + s] * (scoreGradient[s] - dot);
          const at = (s * rows + b) * depth;
          if (vector === null) {
            for (let d = 0; d < depth; d++) {
              if (gq !== null) gq[row * depth + d] += de * scoreKeys.data[at + d];
              if (gk !== null) gk[at + d] += de * query.data[row * depth + d];
            }
          } else {
            // tanh(q + u) again rather than kept: it would take T·S·B·D numbers.
            for (let d = 0; d < depth; d++) {
              const activation = Math.tanh(query.data[row * depth + d] + scoreKeys.data[at + d]);
              if (gvec !== null) gvec[d] += de * activation;
              const pre = de * vector.data[d] * (1 - activation * activation);
              if (gq !== null) gq[row * depth + d] += pre;
              if (gk !== null) gk[at + d] += pre;
            }
          }
        }
      }
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
  const tracked = query.tracked || scoreKeys.tracked || values.tracked || (vector?.tracked ?? false);
  const out = tape.output(query.shape.length === 3 ? [steps, rows, width] : [rows, width], values.dtype, tracked);
  const weights = tape.buffer('f64', steps * rows * sources);
  weights.fill(0);
  out.data.fill(0);
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengths === null ? sources : lengths[b];
      const row = t * rows + b;
      const q = row * depth;
      const w = row * sources;
      let max = -Infinity;
      for (let s = 0; s < length; s++) {
        const at = (s * rows + b) * depth;
        let e = 0;
        if (vector === null) {
          for (let d = 0; d < depth; d++) e += query.data[q + d] * scoreKeys.data[at + d];
        } else {
          for (let d = 0; d < depth; d++) e += vector.data[d] * Math.tanh(query.data[q + d] + scoreKeys.data[at + d]);
        }
        weights[w + s] = e;
        if (e > max) max = e;
      }
      // Softmax with the largest score subtracted first, so no exponent is positive (common practice).
      let total = 0;
      for (let s = 0; s < length; s++) {
        const e = Math.exp(weights[w + s] - max);
        weights[w + s] = e;
        total += e;
      }
      for (let s = 0; s < length; s++) {
        const a = weights[w + s] / total;
        weights[w + s] = a;
        const at = (s * rows + b) * width;
        for (let j = 0; j < width; j++) out.data[row * width + j] += a * values.data[at + j];
      }
    }
  }
  const saved = tape.record(attentionKind, out);
  if (saved !== null) {
    saved.query = query;
    saved.scoreKeys = scoreKeys;
    saved.values = values;
    saved.vector = vector;
    saved.weights = weights;
    saved.lengths = lengths;
  }
  return { context: out, weights: Float64Array.from(weights) };
}
