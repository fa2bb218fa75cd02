/**
 * Attention's kernels against outside references: the forward kernels against the same equations written with
 * mathjs's matrices (a general-purpose library: a row's keys as a matrix, its scores as a matrix–vector product, the
 * softmax by mathjs's exp and sum), and the backward kernels against central finite differences of the forward ones
 * (the definition of the derivative).
 */
import { describe, expect, it } from 'vitest';
import { add, dotMultiply, exp, map, matrix, multiply, sum, tanh } from 'mathjs';
import type { Matrix } from 'mathjs';
import { Random, kernels } from '@weft/core';
import { numericGradient, uniform, weighted } from './finite-differences.js';

const { attentionContext, attentionContextBackward, attentionScores, attentionScoresAdditive, attentionScoresAdditiveBackward } = kernels;
const { attentionScoresBackward, attentionShape, softmaxWithinLengths, softmaxWithinLengthsBackward } = kernels;

/** Three query steps, rows of lengths 5, 2, 0 and 4 over at most 5 sources; depth 3, width 6. */
const shape = attentionShape(3, 4, 5, 3, 6, Int32Array.of(5, 2, 0, 4));
const { steps, rows, sources, depth, width } = shape;
const lengths = shape.lengths as Int32Array;

/** Row b's part of a time-major [positions, B, n] array, as a mathjs matrix [positions, n]. */
function rowMatrix(array: Float64Array, positions: number, b: number, n: number): Matrix {
  return matrix(Array.from({ length: positions }, (_, p) => Array.from(array.subarray((p * rows + b) * n, (p * rows + b + 1) * n))));
}

function vectorOf(array: Float64Array, at: number, n: number): Matrix {
  return matrix(Array.from(array.subarray(at, at + n)));
}

function inputs(seed: string) {
  const random = new Random(seed);
  return {
    query: uniform(random, steps * rows * depth),
    keys: uniform(random, sources * rows * depth),
    values: uniform(random, sources * rows * width),
    vector: uniform(random, depth),
  };
}

/** The forward chain on the dot or additive score: the context [T, B, H] and the weights [T, B, S]. */
function forward(x: ReturnType<typeof inputs>, additive: boolean): { context: Float64Array; weights: Float64Array } {
  const weights = new Float64Array(steps * rows * sources);
  if (additive) attentionScoresAdditive(weights, { query: x.query, keys: x.keys, vector: x.vector }, shape);
  else attentionScores(weights, x.query, x.keys, shape);
  softmaxWithinLengths(weights, weights, shape);
  const context = new Float64Array(steps * rows * width);
  attentionContext(context, weights, x.values, shape);
  return { context, weights };
}

describe('attention kernels, forward', () => {
  for (const additive of [false, true]) {
    it(`give the ${additive ? 'additive' : 'dot'} score's weights and context that mathjs computes from the same equations, row by row`, () => {
      const x = inputs(`attention-forward-${additive}`);
      const { context, weights } = forward(x, additive);
      for (let t = 0; t < steps; t++) {
        for (let b = 0; b < rows; b++) {
          const length = lengths[b];
          const row = t * rows + b;
          const a = weights.subarray(row * sources, (row + 1) * sources);
          const c = context.subarray(row * width, (row + 1) * width);
          if (length === 0) {
            // A row with no sources: zero weights and a zero context (the kernels' statement).
            expect(Array.from(a)).toEqual(new Array(sources).fill(0));
            expect(Array.from(c)).toEqual(new Array(width).fill(0));
            continue;
          }
          const keys = rowMatrix(x.keys, length, b, depth);
          const q = vectorOf(x.query, row * depth, depth);
          // e = K q (dot), or e_s = v · tanh(q + k_s) (additive).
          const scores = additive
            ? matrix(
                Array.from({ length }, (_, s) =>
                  sum(
                    dotMultiply(
                      vectorOf(x.vector, 0, depth),
                      map(add(q, vectorOf(x.keys, (s * rows + b) * depth, depth)) as Matrix, (value: number) => tanh(value)),
                    ) as Matrix,
                  ),
                ),
              )
            : (multiply(keys, q) as Matrix);
          const list = scores.toArray() as number[];
          const top = Math.max(...list);
          const shifted = list.map((value) => exp(value - top));
          const total = sum(shifted);
          const e = shifted.map((value) => value / total);
          const expectedContext = multiply(matrix([e]), rowMatrix(x.values, length, b, width)) as Matrix;
          for (let s = 0; s < sources; s++) expect(Math.abs(a[s] - (s < length ? e[s] : 0))).toBeLessThan(1e-14);
          const ec = (expectedContext.toArray() as number[][])[0];
          for (let j = 0; j < width; j++) expect(Math.abs(c[j] - ec[j])).toBeLessThan(1e-14);
        }
      }
    });
  }

  it('never overflows: scores of ±1000 give weights that sum to 1 within each row', () => {
    const scores = new Float64Array(steps * rows * sources).map((_, i) => (i % 2 === 0 ? 1000 : -1000));
    const weights = softmaxWithinLengths(new Float64Array(scores.length), scores, shape);
    for (let row = 0; row < steps * rows; row++) {
      const length = lengths[row % rows];
      const total = Array.from(weights.subarray(row * sources, row * sources + length)).reduce((n: number, w: number) => n + w, 0);
      expect(total).toBeCloseTo(length === 0 ? 0 : 1, 14);
      for (const w of weights.subarray(row * sources, (row + 1) * sources)) expect(Number.isFinite(w)).toBe(true);
    }
  });

  it('leave the scores past a row length unwritten', () => {
    const x = inputs('attention-unwritten');
    const scores = new Float64Array(steps * rows * sources).fill(7);
    attentionScores(scores, x.query, x.keys, shape);
    for (let t = 0; t < steps; t++) {
      for (let b = 0; b < rows; b++) for (let s = lengths[b]; s < sources; s++) expect(scores[(t * rows + b) * sources + s]).toBe(7);
    }
  });
});

describe('attention kernels, backward', () => {
  for (const additive of [false, true]) {
    it(`give the ${additive ? 'additive' : 'dot'} form's gradients that central finite differences of the forward kernels give`, () => {
      const x = inputs(`attention-backward-${additive}`);
      const arriving = uniform(new Random(`attention-arriving-${additive}`), steps * rows * width);
      const objective = () => weighted(forward(x, additive).context, arriving);
      const { weights } = forward(x, additive);
      // ∂a from the context, then ∂e through the softmax, then the score's own backward.
      const gradient = { query: new Float64Array(x.query.length), keys: new Float64Array(x.keys.length), values: new Float64Array(x.values.length) };
      const vectorGradient = new Float64Array(depth);
      const scoreGradient = new Float64Array(weights.length);
      attentionContextBackward(scoreGradient, gradient.values, arriving, weights, x.values, shape);
      softmaxWithinLengthsBackward(scoreGradient, scoreGradient, weights, shape);
      if (additive) {
        attentionScoresAdditiveBackward(
          { query: gradient.query, keys: gradient.keys, vector: vectorGradient },
          scoreGradient,
          { query: x.query, keys: x.keys, vector: x.vector },
          shape,
        );
      } else {
        attentionScoresBackward(gradient.query, gradient.keys, scoreGradient, x.query, x.keys, shape);
      }
      const checks: [Float64Array, Float64Array][] = [
        [gradient.query, x.query],
        [gradient.keys, x.keys],
        [gradient.values, x.values],
      ];
      if (additive) checks.push([vectorGradient, x.vector]);
      for (const [analytic, input] of checks) {
        const numeric = numericGradient(objective, input);
        let worst = 0;
        for (let i = 0; i < input.length; i++) worst = Math.max(worst, Math.abs(analytic[i] - numeric[i]));
        expect(worst).toBeLessThan(1e-8);
      }
    });
  }

  it('add into the gradients they are given, and skip the ones given as null', () => {
    const x = inputs('attention-accumulate');
    const { weights } = forward(x, false);
    const arriving = uniform(new Random('attention-accumulate-arriving'), steps * rows * width);
    const fresh = new Float64Array(x.values.length);
    const started = new Float64Array(x.values.length).fill(0.5);
    const gw = new Float64Array(weights.length);
    attentionContextBackward(gw, fresh, arriving, weights, x.values, shape);
    attentionContextBackward(gw, started, arriving, weights, x.values, shape);
    for (let i = 0; i < fresh.length; i++) expect(started[i]).toBeCloseTo(fresh[i] + 0.5, 14);
    const queryGradient = new Float64Array(x.query.length);
    attentionScoresBackward(queryGradient, null, gw, x.query, x.keys, shape);
    expect(queryGradient.some((g) => g !== 0)).toBe(true);
  });
});
