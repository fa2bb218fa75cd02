/**
 * Attention (Bahdanau, Cho & Bengio 2015, additive; Luong, Pham & Manning 2015, dot and general): the weights are the
 * masked softmax of the scores (checked against the definition), and every gradient against central finite
 * differences in f64 (checkGradients), with ragged sources including an empty row.
 */
import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, matmul, reshape } from '@weft/core';
import type { Tensor } from '@weft/core';
import { attend } from '../src/attention.js';
import { f64Input, weighted } from './helpers.js';

const [S, B, H, D] = [5, 3, 4, 3];
const lengths = Int32Array.of(5, 2, 0);

function states(random: Random): Tensor {
  return f64Input(random, [S, B, H], 'encoder states');
}

describe("attention over an encoder's states", () => {
  it("weighs each row's own source positions by the softmax of q·k (dot form), zero beyond its length and for an empty row", () => {
    const random = new Random('attention-values');
    const keys = states(random);
    const query = f64Input(random, [B, H], 'query');
    const { context, weights } = attend(new Tape(), query, keys, keys, null, lengths);
    for (let b = 0; b < B; b++) {
      const scores = Array.from({ length: lengths[b] }, (_, s) => {
        let e = 0;
        for (let j = 0; j < H; j++) e += query.data[b * H + j] * keys.data[(s * B + b) * H + j];
        return e;
      });
      const total = scores.reduce((n, e) => n + Math.exp(e), 0);
      for (let s = 0; s < S; s++) {
        const expected = s < lengths[b] ? Math.exp(scores[s]) / total : 0;
        expect(Math.abs(weights[b * S + s] - expected)).toBeLessThan(1e-15);
      }
      for (let j = 0; j < H; j++) {
        let c = 0;
        for (let s = 0; s < lengths[b]; s++) c += weights[b * S + s] * keys.data[(s * B + b) * H + j];
        expect(Math.abs(context.data[b * H + j] - c)).toBeLessThan(1e-15);
      }
    }
    expect(Array.from(context.data.subarray(2 * H, 3 * H))).toEqual([0, 0, 0, 0]);
  });

  const check = (report: ReturnType<typeof checkGradients>) => {
    if (!report.passed) throw new Error(report.text());
    expect(report.passed).toBe(true);
  };

  it('gives the dot form the gradients of finite differences for the query and the states', () => {
    const random = new Random('attention-dot');
    const keys = states(random);
    const query = f64Input(random, [B, H], 'query');
    const w = f64Input(random, [B, H], 'w');
    check(
      checkGradients((tape) => weighted(tape, attend(tape, query, keys, keys, null, lengths).context, w), [query, keys], { tolerance: 1e-6, directions: 2 }),
    );
  });

  it('gives the general form (q · W k) the gradients of finite differences for the query, W and the states', () => {
    const random = new Random('attention-general');
    const keys = states(random);
    const query = f64Input(random, [B, D], 'query');
    const projection = f64Input(random, [H, D], 'W');
    const w = f64Input(random, [B, H], 'w');
    check(
      checkGradients(
        (tape) => {
          const scored = reshape(tape, matmul(tape, reshape(tape, keys, [S * B, H]), projection), [S, B, D]);
          return weighted(tape, attend(tape, query, scored, keys, null, lengths).context, w);
        },
        [query, projection, keys],
        { tolerance: 1e-6, directions: 2 },
      ),
    );
  });

  it('gives the additive form (v · tanh(W s + U h)) the gradients of finite differences for s, W, U, v and the states', () => {
    const random = new Random('attention-additive');
    const keys = states(random);
    const decoder = f64Input(random, [B, H], 'decoder state');
    const wa = f64Input(random, [H, D], 'W_a');
    const ua = f64Input(random, [H, D], 'U_a');
    const v = f64Input(random, [D], 'v_a');
    const w = f64Input(random, [B, H], 'w');
    check(
      checkGradients(
        (tape) => {
          const q = matmul(tape, decoder, wa);
          const u = reshape(tape, matmul(tape, reshape(tape, keys, [S * B, H]), ua), [S, B, D]);
          return weighted(tape, attend(tape, q, u, keys, v, lengths).context, w);
        },
        [decoder, wa, ua, v, keys],
        { tolerance: 1e-6, directions: 2 },
      ),
    );
  });

  it('refuses keys of another shape than the query and values imply, naming both', () => {
    const random = new Random('attention-shapes');
    const keys = states(random);
    expect(() => attend(new Tape(), f64Input(random, [B, 2], 'q'), keys, keys, null, null)).toThrowError(
      'Shape mismatch at attend.scoreKeys: expected [5, 3, 2], received [5, 3, 4]',
    );
  });
});
