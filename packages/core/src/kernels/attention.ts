/**
 * Attention's kernels, forward and backward, out-first (Bahdanau, Cho & Bengio 2015, "Neural machine translation by
 * jointly learning to align and translate", eqs. 5–6 and appendix A.1.2; Luong, Pham & Manning 2015, "Effective
 * approaches to attention-based neural machine translation", §3.1, eqs. 7–8):
 *
 *   score      e_tbs = q_tb · k_sb                  (dot and general forms; general passes the keys already
 *                                                    multiplied by W_a)
 *              e_tbs = v · tanh(q_tb + k_sb)        (additive form; q and k already projected)
 *   weights    a_tbs = exp(e_tbs) / Σ_{s' < L_b} exp(e_tbs')   for s < L_b, 0 beyond (each row's own sources)
 *   context    c_tb  = Σ_s a_tbs h_sb
 *
 * and their derivatives by the chain rule, with the softmax Jacobian ∂a_s/∂e_u = a_s([s = u] − a_u). Every array is
 * time-major like every sequence here: queries [T, B, D], keys [S, B, D], values [S, B, H], scores and weights
 * [T, B, S], contexts [T, B, H]. An encoder-decoder in training has T target steps over a batch of B sources; the
 * runtime's decoding has one source shared by its R rows, which is the same layout with B = 1 and T = R.
 *
 * Training (the `attend` operation of @weft/cells) and the runtime's decoding both compute through these kernels, so
 * the equations are written once (the WebAssembly twins aside). Sums run in index order in f64 (JavaScript numbers)
 * and are stored once.
 */
import type { FloatArray } from '../dtype.js';

/** The sizes of one attention call. */
export interface AttentionShape {
  /** T: the query steps (each attends over the same sources). */
  steps: number;
  /** B: the rows of the batch; row b has its own sources. */
  rows: number;
  /** S: the source positions, and the stride of the scores' and weights' rows. */
  sources: number;
  /** D: the width of a query and a key. */
  depth: number;
  /** H: the width of a value and of a context. */
  width: number;
  /** L_b, each row's own source count (≤ S); null: every row has S. */
  lengths: Int32Array | null;
}

/** The additive form's inputs: the projected queries and keys, and the vector v [D]. */
export interface AdditiveInputs {
  /** W_a s, [T, B, D]. */
  readonly query: FloatArray;
  /** U_a h, [S, B, D]. */
  readonly keys: FloatArray;
  /** v, [D]. */
  readonly vector: FloatArray;
}

/** Where the additive form's backward adds its gradients; a null field is not computed. */
export interface AdditiveGradients {
  /** Added into: ∂/∂query, [T, B, D]. */
  readonly query: FloatArray | null;
  /** Added into: ∂/∂keys, [S, B, D]. */
  readonly keys: FloatArray | null;
  /** Added into: ∂/∂v, [D]. */
  readonly vector: FloatArray | null;
}

/** An attention shape record, made once by a caller and refilled per call. */
export function attentionShape(steps: number, rows: number, sources: number, depth: number, width: number, lengths: Int32Array | null = null): AttentionShape {
  return { steps, rows, sources, depth, width, lengths };
}

/** L_b: row b's source count. */
function lengthOf(shape: AttentionShape, b: number): number {
  return shape.lengths === null ? shape.sources : Math.min(shape.sources, Math.max(0, shape.lengths[b]));
}

/**
 * scores[t, b, s] = query[t, b] · keys[s, b] for s < L_b (the dot and general forms); entries at s ≥ L_b are not
 * written. Aliasing: `scores` must not alias `query` or `keys`.
 */
export function attentionScores(scores: FloatArray, query: FloatArray, keys: FloatArray, shape: AttentionShape): FloatArray {
  dotsWithinLengths(scores, query, keys, shape, shape.depth);
  return scores;
}

/**
 * scores[t, b, s] = v · tanh(query[t, b] + keys[s, b]) for s < L_b (the additive form); entries at s ≥ L_b are not
 * written. Aliasing: `scores` must not alias any input.
 */
export function attentionScoresAdditive(scores: FloatArray, inputs: AdditiveInputs, shape: AttentionShape): FloatArray {
  const { steps, rows, sources, depth } = shape;
  const { query, keys, vector } = inputs;
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthOf(shape, b);
      const q = (t * rows + b) * depth;
      const out = (t * rows + b) * sources;
      for (let s = 0; s < length; s++) {
        const k = (s * rows + b) * depth;
        let e = 0;
        for (let d = 0; d < depth; d++) e += vector[d] * Math.tanh(query[q + d] + keys[k + d]);
        scores[out + s] = e;
      }
    }
  }
  return scores;
}

/**
 * weights[t, b, s] = the softmax of scores[t, b, 0 … L_b − 1] at s (the largest score subtracted first, so no exponent
 * is positive: common practice), and 0 for s ≥ L_b; a row of length 0 is all zeros. Aliasing: `weights` may alias
 * `scores`.
 */
export function softmaxWithinLengths(weights: FloatArray, scores: FloatArray, shape: AttentionShape): FloatArray {
  const { steps, rows, sources } = shape;
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthOf(shape, b);
      const at = (t * rows + b) * sources;
      let max = -Infinity;
      for (let s = 0; s < length; s++) if (scores[at + s] > max) max = scores[at + s];
      let total = 0;
      for (let s = 0; s < length; s++) {
        const e = Math.exp(scores[at + s] - max);
        weights[at + s] = e;
        total += e;
      }
      for (let s = 0; s < length; s++) weights[at + s] /= total;
      for (let s = length; s < sources; s++) weights[at + s] = 0;
    }
  }
  return weights;
}

/**
 * context[t, b] = Σ_{s < L_b} weights[t, b, s] · values[s, b] (zero for a row of length 0). Aliasing: `context`
 * must not alias `weights` or `values`.
 */
export function attentionContext(context: FloatArray, weights: FloatArray, values: FloatArray, shape: AttentionShape): FloatArray {
  weighSources(context, weights, values, shape, shape.width, false);
  return context;
}

/**
 * The context's backward: weightGradient[t, b, s] = arriving[t, b] · values[s, b] for s < L_b and 0 beyond; and,
 * unless `valueGradient` is null, valueGradient[s, b] += Σ_t weights[t, b, s] · arriving[t, b]. `arriving` is
 * ∂/∂context [T, B, H]. Aliasing: no output may alias an input or the other output.
 */
export function attentionContextBackward(
  weightGradient: FloatArray,
  valueGradient: FloatArray | null,
  arriving: FloatArray,
  weights: FloatArray,
  values: FloatArray,
  shape: AttentionShape,
): FloatArray {
  const { steps, rows, sources } = shape;
  dotsWithinLengths(weightGradient, arriving, values, shape, shape.width);
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) weightGradient.fill(0, (t * rows + b) * sources + lengthOf(shape, b), (t * rows + b + 1) * sources);
  }
  if (valueGradient !== null) weighSteps(valueGradient, weights, arriving, shape, shape.width);
  return weightGradient;
}

/**
 * The softmax's backward within each row's length: scoreGradient[t, b, s] = a_s (g_s − Σ_u a_u g_u) for s < L_b and
 * 0 beyond, where a = weights and g = weightGradient. Aliasing: `scoreGradient` may alias `weightGradient`.
 */
export function softmaxWithinLengthsBackward(scoreGradient: FloatArray, weightGradient: FloatArray, weights: FloatArray, shape: AttentionShape): FloatArray {
  const { steps, rows, sources } = shape;
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthOf(shape, b);
      const at = (t * rows + b) * sources;
      let dot = 0;
      for (let s = 0; s < length; s++) dot += weights[at + s] * weightGradient[at + s];
      for (let s = 0; s < length; s++) scoreGradient[at + s] = weights[at + s] * (weightGradient[at + s] - dot);
      for (let s = length; s < sources; s++) scoreGradient[at + s] = 0;
    }
  }
  return scoreGradient;
}

/**
 * The dot score's backward, adding into the gradients that are not null: queryGradient[t, b] += Σ_s ∂e_tbs ·
 * keys[s, b]; keyGradient[s, b] += Σ_t ∂e_tbs · query[t, b] (s < L_b). Aliasing: no output may alias an input or
 * the other output.
 */
export function attentionScoresBackward(
  queryGradient: FloatArray | null,
  keyGradient: FloatArray | null,
  scoreGradient: FloatArray,
  query: FloatArray,
  keys: FloatArray,
  shape: AttentionShape,
): void {
  if (queryGradient !== null) weighSources(queryGradient, scoreGradient, keys, shape, shape.depth, true);
  if (keyGradient !== null) weighSteps(keyGradient, scoreGradient, query, shape, shape.depth);
}

/**
 * The additive score's backward, adding into the gradients that are not null: with u = tanh(q_tb + k_sb) (computed
 * again rather than kept: it would take T·B·S·D numbers), ∂v += Σ ∂e·u, and ∂q_tb, ∂k_sb += ∂e · v ⊙ (1 − u²).
 * Aliasing: no gradient may alias an input or another gradient.
 */
export function attentionScoresAdditiveBackward(gradients: AdditiveGradients, scoreGradient: FloatArray, inputs: AdditiveInputs, shape: AttentionShape): void {
  const { steps, rows, sources, depth } = shape;
  const { query, keys, vector } = inputs;
  const gq = gradients.query;
  const gk = gradients.keys;
  const gv = gradients.vector;
  // Per query row and depth, over its sources: the row's shares of ∂q and ∂v summed in f64 and added once.
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthOf(shape, b);
      const row = t * rows + b;
      for (let d = 0; d < depth; d++) {
        const q = query[row * depth + d];
        let dq = 0;
        let dv = 0;
        for (let s = 0; s < length; s++) {
          const de = scoreGradient[row * sources + s];
          const k = (s * rows + b) * depth + d;
          const u = Math.tanh(q + keys[k]);
          dv += de * u;
          const pre = de * vector[d] * (1 - u * u);
          dq += pre;
          if (gk !== null) gk[k] += pre;
        }
        if (gq !== null) gq[row * depth + d] += dq;
        if (gv !== null) gv[d] += dv;
      }
    }
  }
}

/** out[t, b, s] = left[t, b, :n] · right[s, b, :n] for s < L_b (scores; the context's backward to the weights). */
function dotsWithinLengths(out: FloatArray, left: FloatArray, right: FloatArray, shape: AttentionShape, n: number): void {
  const { steps, rows, sources } = shape;
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthOf(shape, b);
      const l = (t * rows + b) * n;
      const o = (t * rows + b) * sources;
      for (let s = 0; s < length; s++) {
        const r = (s * rows + b) * n;
        let e = 0;
        for (let d = 0; d < n; d++) e += left[l + d] * right[r + d];
        out[o + s] = e;
      }
    }
  }
}

/**
 * out[t, b, :n] = (or +=, when `accumulate`) Σ_{s < L_b} weights[t, b, s] · vectors[s, b, :n] (the context; the
 * score's backward to the queries).
 */
function weighSources(out: FloatArray, weights: FloatArray, vectors: FloatArray, shape: AttentionShape, n: number, accumulate: boolean): void {
  const { steps, rows, sources } = shape;
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthOf(shape, b);
      const w = (t * rows + b) * sources;
      const o = (t * rows + b) * n;
      for (let j = 0; j < n; j++) {
        let sum = 0;
        for (let s = 0; s < length; s++) sum += weights[w + s] * vectors[(s * rows + b) * n + j];
        out[o + j] = accumulate ? out[o + j] + sum : sum;
      }
    }
  }
}

/**
 * out[s, b, :n] += Σ_t weights[t, b, s] · vectors[t, b, :n] for s < L_b (the context's backward to the values; the
 * score's backward to the keys).
 */
function weighSteps(out: FloatArray, weights: FloatArray, vectors: FloatArray, shape: AttentionShape, n: number): void {
  const { steps, rows, sources } = shape;
  for (let s = 0; s < sources; s++) {
    for (let b = 0; b < rows; b++) {
      if (s >= lengthOf(shape, b)) continue;
      const o = (s * rows + b) * n;
      for (let j = 0; j < n; j++) {
        let sum = 0;
        for (let t = 0; t < steps; t++) sum += weights[(t * rows + b) * sources + s] * vectors[(t * rows + b) * n + j];
        out[o + j] += sum;
      }
    }
  }
}
