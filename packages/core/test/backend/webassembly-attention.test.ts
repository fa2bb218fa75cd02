/**
 * The WebAssembly backend's attention kernels (webassembly-attention.ts) against their JavaScript twins: shapes with
 * and without SIMD tails (depths and widths that are and are not multiples of 4 and 16, source counts that are and
 * are not multiples of 4), ragged rows including an empty one, absent gradients; within the backends' bound
 * |a − b| ≤ 1e-5·max(1, |a|, |b|). Ordinary arrays run the JavaScript kernel, bit for bit.
 */
import { describe, expect, it } from 'vitest';
import { createWebAssemblyBackend, javascriptKernels, webAssemblyUnavailable } from '@weft/core';
import { kernels } from '@weft/core';
import { agreeWithTwin } from './twins.js';

const available = webAssemblyUnavailable() === null;

describe.skipIf(!available)('the WebAssembly attention kernels', () => {
  const backend = createWebAssemblyBackend({ memoryBytes: 32 * 1048576 });
  const cases = [
    { steps: 3, rows: 4, sources: 9, depth: 32, width: 48 },
    { steps: 1, rows: 1, sources: 3, depth: 5, width: 7 },
    { steps: 5, rows: 2, sources: 8, depth: 18, width: 20 },
    { steps: 21, rows: 3, sources: 24, depth: 128, width: 128 },
  ];

  it('agree with their JavaScript twins on the dot and additive scores, the context and every backward kernel, ragged rows and absent gradients included', () => {
    let worst = 0;
    for (const { steps, rows, sources, depth, width } of cases) {
      for (const lengths of [null, Int32Array.from({ length: rows }, (_, b) => (b * 5 + sources) % (sources + 1))]) {
        const shape = kernels.attentionShape(steps, rows, sources, depth, width, lengths);
        const seed = `${steps}-${rows}-${sources}-${depth}-${width}-${lengths === null}`;
        const scoreCount = steps * rows * sources;
        worst = Math.max(
          worst,
          agreeWithTwin(
            backend,
            [scoreCount, steps * rows * depth, sources * rows * depth],
            (k, [e, q, key]) => k.attentionScores(e!, q!, key!, shape),
            false,
            seed,
          ),
          agreeWithTwin(
            backend,
            [steps * rows * width, scoreCount, sources * rows * width],
            (k, [c, a, v]) => k.attentionContext(c!, a!, v!, shape),
            false,
            seed,
            0,
            1,
          ),
        );
        const additive = [scoreCount, steps * rows * depth, sources * rows * depth, depth];
        worst = Math.max(
          worst,
          agreeWithTwin(backend, additive, (k, [e, q, key, v]) => k.attentionScoresAdditive(e!, { query: q!, keys: key!, vector: v! }, shape), false, seed),
        );
        for (const absent of [false, true]) {
          const gradients = [absent ? null : steps * rows * depth, sources * rows * depth, absent ? null : depth];
          worst = Math.max(
            worst,
            agreeWithTwin(
              backend,
              [...gradients, scoreCount, ...additive.slice(1)],
              (k, [gq, gk, gv, ge, q, key, v]) =>
                k.attentionScoresAdditiveBackward({ query: gq, keys: gk, vector: gv }, ge!, { query: q!, keys: key!, vector: v! }, shape),
              false,
              seed,
            ),
            worst,
            agreeWithTwin(
              backend,
              [scoreCount, absent ? null : sources * rows * width, steps * rows * width, scoreCount, sources * rows * width],
              (k, [gw, gv, g, a, v]) => k.attentionContextBackward(gw!, gv, g!, a!, v!, shape),
              false,
              seed,
            ),
            agreeWithTwin(
              backend,
              [steps * rows * depth, absent ? null : sources * rows * depth, scoreCount, steps * rows * depth, sources * rows * depth],
              (k, [gq, gk, ge, q, key]) => k.attentionScoresBackward(gq, gk, ge!, q!, key!, shape),
              false,
              seed,
            ),
          );
        }
      }
    }
    console.log(`attention kernels: worst relative gap ${worst.toExponential(2)}`);
  });

  it('run the JavaScript kernel, bit for bit, on ordinary arrays', () => {
    const shape = kernels.attentionShape(2, 2, 4, 8, 8, null);
    const query = Float32Array.from({ length: 32 }, (_, i) => Math.sin(i));
    const keys = Float32Array.from({ length: 64 }, (_, i) => Math.cos(i));
    const ordinary = new Float32Array(16);
    const reference = new Float32Array(16);
    backend.kernels.attentionScores(ordinary, query, keys, shape);
    javascriptKernels.attentionScores(reference, query, keys, shape);
    expect(Array.from(ordinary)).toEqual(Array.from(reference));
  });
});
