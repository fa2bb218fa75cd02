/**
 * Agreement of the WebAssembly backend's kernels with their JavaScript twins (the reference), f32: every kernel
 * the WebAssembly table implements, on seeded random arrays of sizes with and without SIMD tails, every transpose
 * form, ragged lengths, absent (null) gradients and peepholes. Each case runs the WebAssembly kernel on arrays in
 * the backend's memory and the JavaScript kernel on copies of them in ordinary arrays, then compares every array
 * the kernel may have written: exactly where the twin's comment promises bit-for-bit agreement (sums, products,
 * the update rules), else within |a − b| ≤ 1e-5·max(1, |a|, |b|) (tests/helpers/close.ts form).
 */
import { describe, expect, it } from 'vitest';
import { MessageChannel } from 'node:worker_threads';
import { compiledKernels, createWebAssemblyBackend, javascriptKernels, useCompiledKernels, webAssemblyUnavailable } from '@weft/core';
import type { KernelTable } from '@weft/core';
import type { Spec } from './twins.js';
import { agreeWithTwin, twinArrays } from './twins.js';
import { transposedOf } from '@weft/core/kernels';

const available = webAssemblyUnavailable() === null;
const backend = available ? createWebAssemblyBackend({ memoryBytes: 64 * 1048576 }) : null;

const agree = (specs: readonly Spec[], run: (k: KernelTable, x: (Float32Array | null)[]) => void, exact: boolean, seed = 1, low = -2, high = 2): number =>
  agreeWithTwin(backend!, specs, run, exact, seed, low, high);

describe.skipIf(!available)('the WebAssembly kernels against their JavaScript twins', () => {
  it('agree on the matrix product in all four transpose forms, accumulating or not, at every edge shape', () => {
    // f32 accumulation (the SIMD kernel) against f64 accumulation rounded once (the twin): each entry within the
    // forward error bound of an f32 dot product, γ_k·Σ|a||b| with γ_k = k·u/(1 − k·u), u = 2⁻²⁴ (Higham, "Accuracy
    // and Stability of Numerical Algorithms", 2nd ed. 2002, §3.1), plus one rounding of each result.
    const shapes = [
      [32, 192, 512],
      [5, 7, 9],
      [1, 32, 256],
      [3, 17, 13],
      [33, 65, 129],
      [2, 5, 3],
      [4, 8, 8],
      [1, 1, 1],
      [7, 1, 19],
      [6, 40, 1],
    ];
    const u = 2 ** -24;
    let worstRatio = 0;
    for (const [rows, inner, cols] of shapes) {
      for (const transposeA of [false, true]) {
        for (const transposeB of [false, true]) {
          for (const accumulate of [false, true]) {
            const { wasm, js } = twinArrays(backend!, [rows * cols, rows * inner, inner * cols], rows * 131 + inner * 7 + cols);
            const [outW, a, b] = wasm as Float32Array[];
            const [outJ, a2, b2] = js as Float32Array[];
            const start = Float64Array.from(outJ);
            const shape = { rows, inner, cols, transposed: transposedOf(transposeA, transposeB) };
            backend!.kernels[accumulate ? 'matmulInto' : 'matmul'](outW, a, b, shape);
            javascriptKernels[accumulate ? 'matmulInto' : 'matmul'](outJ, a2, b2, shape);
            const k = inner + (accumulate ? 1 : 0);
            const gamma = (k * u) / (1 - k * u);
            for (let r = 0; r < rows; r++) {
              for (let c = 0; c < cols; c++) {
                let magnitude = accumulate ? Math.abs(start[r * cols + c]) : 0;
                for (let i = 0; i < inner; i++) {
                  const x = transposeA ? a2[i * rows + r] : a2[r * inner + i];
                  const y = transposeB ? b2[c * inner + i] : b2[i * cols + c];
                  magnitude += Math.abs(x * y);
                }
                const bound = gamma * magnitude + 2 * u * Math.abs(outJ[r * cols + c]) + 1e-30;
                const ratio = Math.abs(outW[r * cols + c] - outJ[r * cols + c]) / bound;
                if (!(ratio <= worstRatio)) worstRatio = ratio;
              }
            }
          }
        }
      }
    }
    console.log(`matmul: worst difference is ${worstRatio.toFixed(4)} of the f32 error bound`);
    expect(worstRatio).toBeLessThanOrEqual(1);
  });

  it('agree bit for bit on sums, differences, products, scaled sums, bias rows and column sums (lengths 1 to 37)', () => {
    for (const n of [1, 3, 4, 5, 16, 37]) {
      agree([n, n, n], (k, [o, a, b]) => k.add(o!, a!, b!, n), true, n);
      agree([n, n, n], (k, [o, a, b]) => k.subtract(o!, a!, b!, n), true, n + 1);
      agree([n, n, n], (k, [o, a, b]) => k.multiply(o!, a!, b!, n), true, n + 2);
      agree([n, n], (k, [o, a]) => k.addInto(o!, a!, n), true, n + 3);
      agree([n, n, n], (k, [o, a, b]) => k.multiplyInto(o!, a!, b!, n), true, n + 4);
      agree([n, n], (k, [o, a]) => k.scale(o!, a!, 0.3, n), true, n + 5);
      agree([n, n], (k, [o, a]) => k.addScaledInto(o!, a!, -1.7, n), true, n + 6);
      agree([n], (k, [o]) => k.add(o!, o!, o!, n), true, n + 7); // out aliasing both inputs
      for (const rows of [1, 3, 8]) {
        agree([rows * n, rows * n, n], (k, [o, a, r]) => k.addRow(o!, a!, r!, rows, n), true, rows + n);
        agree([n, rows * n], (k, [o, a]) => k.sumRows(o!, a!, rows, n), true, rows * n);
        agree([n, rows * n], (k, [o, a]) => k.sumRowsInto(o!, a!, rows, n), true, rows * n + 1);
      }
    }
  });

  it('agree on the activations and their gradients, in place and not', () => {
    for (const n of [1, 7, 64, 1001]) {
      for (const kernel of ['sigmoid', 'tanh', 'exp'] as const) {
        agree([n, n], (k, [o, a]) => k[kernel](o!, a!, n), false, n, -30, 30);
        agree([n], (k, [a]) => k[kernel](a!, a!, n), false, n + 1, -30, 30);
      }
      agree([n, n, n], (k, [g, d, y]) => k.sigmoidGradientInto(g!, d!, y!, n), false, n + 2, 0, 1);
      agree([n, n, n], (k, [g, d, y]) => k.tanhGradientInto(g!, d!, y!, n), false, n + 3, -1, 1);
    }
  });

  it('agree on the LSTM step forward and backward: peepholes or not, ragged rows, absent gradients', () => {
    for (const [rows, size] of [
      [3, 8],
      [1, 5],
      [4, 13],
    ]) {
      for (const peephole of [false, true]) {
        for (const lengths of [null, Int32Array.from({ length: rows }, (_, b) => b % 3)]) {
          const p = peephole ? 3 * size : null;
          const n = rows * size;
          agree(
            [n, n, 4 * n, n, n, n, p],
            (k, [h, c, gates, tanhCell, hp, cp, pp]) => {
              k.lstmStepForward({ h: h!, c: c!, gates: gates!, tanhCell: tanhCell! }, { h: hp!, c: cp! }, pp, { rows, hidden: size, lengths, step: 1 });
            },
            false,
            rows * size,
          );
          for (const absent of [false, true]) {
            agree(
              [4 * n, n, absent ? null : n, p, n, absent ? null : n, 4 * n, n, n, n, p],
              (k, [gg, hpg, cpg, pg, hg, cg, gates, tc, cp, c, pp]) => {
                const gradients = { gates: gg!, hPrevious: hpg, cPrevious: cpg, peephole: pg };
                k.lstmStepBackward(
                  gradients,
                  { h: hg, c: cg },
                  { gates: gates!, tanhCell: tc!, cPrevious: cp!, c: c!, peephole: pp },
                  { rows, hidden: size, lengths, step: 1 },
                );
              },
              false,
              rows + size,
              -1,
              1,
            );
          }
        }
      }
    }
  });

  it('agree on the GRU step pieces in both reset forms, forward and backward, ragged rows included', () => {
    for (const [rows, size] of [
      [3, 8],
      [2, 5],
    ]) {
      const n = rows * size;
      for (const lengths of [null, Int32Array.from({ length: rows }, (_, b) => b)]) {
        agree([3 * n, 4 * 3 * n, 2 * n], (k, [gates, projected, product]) => k.gruUpdateReset(gates!, projected!, 3 * n, product!, rows, size), false, n);
        agree([n, 3 * n, n], (k, [rh, gates, hp]) => k.gruResetHidden(rh!, gates!, hp!, rows, size), true, n + 1);
        for (const resetAfter of [false, true]) {
          agree(
            [n, 3 * n, 2 * 3 * n, n, n],
            (k, [h, gates, projected, candidate, hp]) => {
              const inputs = { projected: projected!, projectedOffset: 3 * n, candidate: candidate!, hPrevious: hp! };
              k.gruStepFinish({ h: h!, gates: gates! }, inputs, resetAfter ? 'resetAfter' : 'resetBefore', { rows, hidden: size, lengths, step: 1 });
            },
            false,
            n + 2,
          );
          agree(
            [2 * n, n, n, n, n, 3 * n, n, n],
            (k, [ur, cg, pg, hpg, hg, gates, candidate, hp]) => {
              const gradients = { updateReset: ur!, candidate: cg!, product: pg!, hPrevious: hpg };
              const saved = { gates: gates!, candidate: candidate!, hPrevious: hp! };
              k.gruBackwardCandidate(gradients, hg!, saved, resetAfter ? 'resetAfter' : 'resetBefore', { rows, hidden: size, lengths, step: 1 });
            },
            false,
            n + 3,
            -1,
            1,
          );
        }
        agree(
          [2 * n, n, n, 3 * n, n],
          (k, [ur, hpg, rhg, gates, hp]) => {
            const gradients = { updateReset: ur!, candidate: ur!, product: ur!, hPrevious: hpg };
            k.gruBackwardReset(gradients, rhg!, { gates: gates!, candidate: hp!, hPrevious: hp! }, { rows, hidden: size, lengths, step: 1 });
          },
          false,
          n + 4,
          -1,
          1,
        );
      }
    }
  });

  it('agree on the plain step, tanh and ReLU, forward and backward', () => {
    for (const activation of ['tanh', 'relu'] as const) {
      for (const lengths of [null, Int32Array.of(2, 0, 1)]) {
        const at = { rows: 3, hidden: 6, lengths, step: 1 };
        agree([3 * 6, 3 * 6], (k, [h, hp]) => k.plainStepForward(h!, hp!, activation, at), false, 5);
        agree([18, 18, 18, 18], (k, [pg, hpg, hg, h]) => k.plainStepBackward({ pre: pg!, hPrevious: hpg }, hg!, h!, activation, at), false, 6, -1, 1);
      }
    }
  });

  it("agree bit for bit on the Adam and SGD updates (f64 arithmetic in the twin's order)", () => {
    for (const n of [1, 2, 5, 37, 1001]) {
      agree(
        [n, n, n, n],
        (k, [values, gradient, m, v]) => {
          for (let i = 0; i < n; i++) v![i] = Math.abs(v![i]);
          const constants = {
            beta1: 0.9,
            beta2: 0.999,
            correction1: 1 - 0.9 ** 3,
            correction2: 1 - 0.999 ** 3,
            rate: 0.01,
            decay: 0.001,
            kappa: 0.0001,
            epsilon: 1e-8,
          };
          k.adamUpdate({ values: values!, gradient: gradient!, firstMoment: m!, secondMoment: v! }, n, constants);
        },
        true,
        n,
      );
      for (const rule of ['sgdUpdate', 'nesterovUpdate'] as const) {
        const constants = { rate: 0.05, decay: 0.001, mu: 0.9, kappa: 0.0001 };
        agree(
          [n, n, n],
          (k, [values, gradient, velocity]) => k[rule]({ values: values!, gradient: gradient!, velocity: velocity! }, n, constants),
          true,
          n + 1,
        );
      }
    }
  });
});

describe.skipIf(!available)('the compiled kernels handed to another thread', () => {
  it('are one module, compiled once, that survives a trip through a message port', async () => {
    const module = compiledKernels();
    expect(module).toBeInstanceOf(WebAssembly.Module);
    expect(compiledKernels()).toBe(module);
    const { port1, port2 } = new MessageChannel();
    const received = new Promise<unknown>((resolve) => port2.once('message', resolve));
    port1.postMessage(module);
    const copy = await received;
    port1.close();
    port2.close();
    expect(copy).toBeInstanceOf(WebAssembly.Module);
    // Already compiled here: the module in use stays the one compiled first.
    useCompiledKernels(copy as WebAssembly.Module);
    expect(compiledKernels()).toBe(module);
    expect(WebAssembly.Module.exports(copy as WebAssembly.Module).map((e) => e.name)).toEqual(WebAssembly.Module.exports(module).map((e) => e.name));
  });

  it('refuse anything that is not a compiled module, in one line', () => {
    expect(() => useCompiledKernels('kernels' as unknown as WebAssembly.Module)).toThrowError(
      'Invalid argument at useCompiledKernels.module: expected a WebAssembly.Module (from compiledKernels), received string',
    );
  });
});
