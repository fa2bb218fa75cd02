/**
 * Attention's kernels in f32x4 SIMD, the twins of kernels/attention.ts with the same arguments and meaning (the
 * shape record unpacked into numbers, `lengths` a pointer to B int32 or 0 for none, a null gradient 0). Layouts are
 * time-major: queries [T, B, D], keys [S, B, D], values [S, B, H], scores and weights [T, B, S], contexts [T, B, H].
 *
 * Three loops do all the work, as in the JavaScript twin:
 *   dots         out[t, b, s] = left[t, b] · right[s, b]            four sources a turn: each turn loads a vector of
 *                                                                    the left row once for four multiply-adds
 *   weighSources out[t, b] (+)= Σ_s w[t, b, s] · x[s, b]           sixteen columns a turn: four accumulators stay in
 *                                                                    registers over every source
 *   weighSteps   out[s, b] += Σ_t w[t, b, s] · y[t, b]             the same over the query steps
 * Sums are f32 in four lanes, then across the lanes (the JavaScript twin sums in f64 in index order; the agreement
 * tests bound the difference). The additive form's tanh is math.ts's tanh4; its lane loops (`full`) are expanded by
 * the build (scripts/build-wasm.mjs) into a vector loop and a scalar tail.
 */
import { load4, madd, store4, tanh4, tanhCall4 } from './math';

// @ts-ignore: decorator
@inline function at(p: usize, i: i32): usize {
  return p + (<usize>i << 2);
}

/** L_b: row b's source count (clamped to 0 … S), or S when `lengths` is 0. */
// @ts-ignore: decorator
@inline function lengthAt(lengths: usize, b: i32, sources: i32): i32 {
  if (lengths == 0) return sources;
  const length = load<i32>(lengths + (<usize>b << 2));
  return length < 0 ? 0 : length > sources ? sources : length;
}

// @ts-ignore: decorator
@inline function across(v: v128): f32 {
  return f32x4.extract_lane(v, 0) + f32x4.extract_lane(v, 1) + f32x4.extract_lane(v, 2) + f32x4.extract_lane(v, 3);
}

/** out[t, b, s] = left[t, b, :n] · right[s, b, :n] for s < L_b. */
function dots(out: usize, left: usize, right: usize, steps: i32, rows: i32, sources: i32, n: i32, lengths: usize): void {
  const whole = n & ~3;
  const stride = rows * n;
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthAt(lengths, b, sources);
      const l = at(left, (t * rows + b) * n);
      const o = at(out, (t * rows + b) * sources);
      let s = 0;
      for (; s + 4 <= length; s += 4) {
        const r0 = at(right, s * stride + b * n);
        const r1 = r0 + (<usize>stride << 2);
        const r2 = r1 + (<usize>stride << 2);
        const r3 = r2 + (<usize>stride << 2);
        let a0 = f32x4.splat(0), a1 = f32x4.splat(0), a2 = f32x4.splat(0), a3 = f32x4.splat(0);
        for (let d = 0; d < whole; d += 4) {
          const lv = v128.load(at(l, d));
          a0 = madd(lv, v128.load(at(r0, d)), a0);
          a1 = madd(lv, v128.load(at(r1, d)), a1);
          a2 = madd(lv, v128.load(at(r2, d)), a2);
          a3 = madd(lv, v128.load(at(r3, d)), a3);
        }
        let e0 = across(a0), e1 = across(a1), e2 = across(a2), e3 = across(a3);
        for (let d = whole; d < n; d++) {
          const lv = load<f32>(at(l, d));
          e0 += lv * load<f32>(at(r0, d));
          e1 += lv * load<f32>(at(r1, d));
          e2 += lv * load<f32>(at(r2, d));
          e3 += lv * load<f32>(at(r3, d));
        }
        store<f32>(at(o, s), e0);
        store<f32>(at(o, s + 1), e1);
        store<f32>(at(o, s + 2), e2);
        store<f32>(at(o, s + 3), e3);
      }
      for (; s < length; s++) {
        const r = at(right, s * stride + b * n);
        let a = f32x4.splat(0);
        for (let d = 0; d < whole; d += 4) a = madd(v128.load(at(l, d)), v128.load(at(r, d)), a);
        let e = across(a);
        for (let d = whole; d < n; d++) e += load<f32>(at(l, d)) * load<f32>(at(r, d));
        store<f32>(at(o, s), e);
      }
    }
  }
}

/**
 * out[j] (+)= Σ_i weight(i) · vectors(i)[j] over `count` vectors `stride` floats apart, their weights `step` floats
 * apart: one row of weighSources or weighSteps.
 */
// @ts-ignore: decorator
@inline function weighRow(out: usize, weights: usize, step: i32, vectors: usize, stride: i32, count: i32, n: i32, accumulate: bool): void {
  const wStep = <usize>step << 2;
  const vStep = <usize>stride << 2;
  let j = 0;
  for (; j + 16 <= n; j += 16) {
    const o = at(out, j);
    let a0 = f32x4.splat(0), a1 = f32x4.splat(0), a2 = f32x4.splat(0), a3 = f32x4.splat(0);
    if (accumulate) {
      a0 = v128.load(o); a1 = v128.load(o, 16); a2 = v128.load(o, 32); a3 = v128.load(o, 48);
    }
    let w = weights;
    let v = at(vectors, j);
    for (let i = 0; i < count; i++) {
      const s = v128.load32_splat(w);
      a0 = madd(s, v128.load(v), a0);
      a1 = madd(s, v128.load(v, 16), a1);
      a2 = madd(s, v128.load(v, 32), a2);
      a3 = madd(s, v128.load(v, 48), a3);
      w += wStep;
      v += vStep;
    }
    v128.store(o, a0); v128.store(o, a1, 16); v128.store(o, a2, 32); v128.store(o, a3, 48);
  }
  for (; j + 4 <= n; j += 4) {
    const o = at(out, j);
    let a = accumulate ? v128.load(o) : f32x4.splat(0);
    let w = weights;
    let v = at(vectors, j);
    for (let i = 0; i < count; i++) {
      a = madd(v128.load32_splat(w), v128.load(v), a);
      w += wStep;
      v += vStep;
    }
    v128.store(o, a);
  }
  for (; j < n; j++) {
    let a: f32 = 0;
    let w = weights;
    let v = at(vectors, j);
    for (let i = 0; i < count; i++) {
      a += load<f32>(w) * load<f32>(v);
      w += wStep;
      v += vStep;
    }
    const o = at(out, j);
    store<f32>(o, accumulate ? load<f32>(o) + a : a);
  }
}

/** out[t, b, :n] (+)= Σ_{s < L_b} weights[t, b, s] · vectors[s, b, :n]. */
function weighSources(out: usize, weights: usize, vectors: usize, steps: i32, rows: i32, sources: i32, n: i32, lengths: usize, accumulate: bool): void {
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthAt(lengths, b, sources);
      weighRow(at(out, (t * rows + b) * n), at(weights, (t * rows + b) * sources), 1, at(vectors, b * n), rows * n, length, n, accumulate);
    }
  }
}

/** out[s, b, :n] += Σ_t weights[t, b, s] · vectors[t, b, :n] for s < L_b. */
function weighSteps(out: usize, weights: usize, vectors: usize, steps: i32, rows: i32, sources: i32, n: i32, lengths: usize): void {
  for (let s = 0; s < sources; s++) {
    for (let b = 0; b < rows; b++) {
      if (s >= lengthAt(lengths, b, sources)) continue;
      weighRow(at(out, (s * rows + b) * n), at(weights, b * sources + s), rows * sources, at(vectors, b * n), rows * n, steps, n, true);
    }
  }
}

/** scores[t, b, s] = query[t, b] · keys[s, b] for s < L_b. */
export function attentionScores(scores: usize, query: usize, keys: usize, steps: i32, rows: i32, sources: i32, depth: i32, lengths: usize): void {
  dots(scores, query, keys, steps, rows, sources, depth, lengths);
}

/** context[t, b] = Σ_{s < L_b} weights[t, b, s] · values[s, b]. */
export function attentionContext(context: usize, weights: usize, values: usize, steps: i32, rows: i32, sources: i32, width: i32, lengths: usize): void {
  weighSources(context, weights, values, steps, rows, sources, width, lengths, false);
}

/** ∂weights = arriving · values within the lengths (0 beyond); ∂values += Σ_t weights · arriving unless 0. */
export function attentionContextBackward(
  weightGradient: usize, valueGradient: usize, arriving: usize, weights: usize, values: usize,
  steps: i32, rows: i32, sources: i32, width: i32, lengths: usize,
): void {
  dots(weightGradient, arriving, values, steps, rows, sources, width, lengths);
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      for (let s = lengthAt(lengths, b, sources); s < sources; s++) store<f32>(at(weightGradient, (t * rows + b) * sources + s), 0);
    }
  }
  if (valueGradient != 0) weighSteps(valueGradient, weights, arriving, steps, rows, sources, width, lengths);
}

/** ∂query += Σ_s ∂e · keys; ∂keys += Σ_t ∂e · query; a gradient given as 0 is skipped. */
export function attentionScoresBackward(
  queryGradient: usize, keyGradient: usize, scoreGradient: usize, query: usize, keys: usize,
  steps: i32, rows: i32, sources: i32, depth: i32, lengths: usize,
): void {
  if (queryGradient != 0) weighSources(queryGradient, scoreGradient, keys, steps, rows, sources, depth, lengths, true);
  if (keyGradient != 0) weighSteps(keyGradient, scoreGradient, query, steps, rows, sources, depth, lengths);
}

/** scores[t, b, s] = v · tanh(query[t, b] + keys[s, b]) for s < L_b. */
export function attentionScoresAdditive(scores: usize, query: usize, keys: usize, vector: usize, steps: i32, rows: i32, sources: i32, depth: i32, lengths: usize): void {
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthAt(lengths, b, sources);
      const q = at(query, (t * rows + b) * depth);
      const o = at(scores, (t * rows + b) * sources);
      for (let s = 0; s < length; s++) {
        const k = at(keys, (s * rows + b) * depth);
        let sum = f32x4.splat(0);
        let tail: f32 = 0;
        for (let d = 0; d < depth; ) {
          const full = d + 4 <= depth;
          const term = f32x4.mul(load4(at(vector, d), full), tanh4(f32x4.add(load4(at(q, d), full), load4(at(k, d), full))));
          if (full) sum = f32x4.add(sum, term);
          else tail += f32x4.extract_lane(term, 0);
          d += full ? 4 : 1;
        }
        store<f32>(at(o, s), across(sum) + tail);
      }
    }
  }
}

/**
 * The additive score's backward: with u = tanh(q + k), ∂v += ∂e·u and ∂q, ∂k += ∂e · v ⊙ (1 − u²), each gradient
 * skipped when given as 0.
 */
export function attentionScoresAdditiveBackward(
  queryGradient: usize, keyGradient: usize, vectorGradient: usize, scoreGradient: usize, query: usize, keys: usize, vector: usize,
  steps: i32, rows: i32, sources: i32, depth: i32, lengths: usize,
): void {
  // Per query row, one group of depth lanes at a time over every source: the row's ∂q and ∂v sums stay in registers
  // (the other order, a source at a time over every lane group, stored and reloaded them per source: 3.4 times as
  // long, measured at T·B·S·D = 2 M).
  const one = f32x4.splat(1);
  for (let t = 0; t < steps; t++) {
    for (let b = 0; b < rows; b++) {
      const length = lengthAt(lengths, b, sources);
      const row = (t * rows + b) * depth;
      const q = at(query, row);
      const e = at(scoreGradient, (t * rows + b) * sources);
      for (let d = 0; d < depth; ) {
        const full = d + 4 <= depth;
        const qd = load4(at(q, d), full);
        const vd = load4(at(vector, d), full);
        let dq = f32x4.splat(0);
        let dv = f32x4.splat(0);
        for (let s = 0; s < length; s++) {
          const de = v128.load32_splat(at(e, s));
          const u = tanh4(f32x4.add(qd, load4(at(keys, (s * rows + b) * depth + d), full)));
          dv = f32x4.add(dv, f32x4.mul(de, u));
          const pre = f32x4.mul(f32x4.mul(de, vd), f32x4.sub(one, f32x4.mul(u, u)));
          dq = f32x4.add(dq, pre);
          if (keyGradient != 0) {
            const g = at(keyGradient, (s * rows + b) * depth + d);
            store4(g, f32x4.add(load4(g, full), pre), full);
          }
        }
        if (queryGradient != 0) store4(at(queryGradient, row + d), f32x4.add(load4(at(queryGradient, row + d), full), dq), full);
        if (vectorGradient != 0) store4(at(vectorGradient, d), f32x4.add(load4(at(vectorGradient, d), full), dv), full);
        d += full ? 4 : 1;
      }
    }
  }
}
