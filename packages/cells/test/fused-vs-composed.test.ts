/**
 * The fused step kernels against the composed reference built from core operations: values and gradients agree
 * to 1e-12 in f64 (the two differ only in summation order), on a ragged batch with a given initial state.
 */
import { describe, expect, it } from 'vitest';
import { Random, Tape, resetGradients, trainable } from '@weft/core';
import type { Tensor } from '@weft/core';
import { runSequence } from '@weft/cells';
import type { CellMode } from '@weft/cells';
import { worstGap } from '../../../tests/helpers/close.js';
import { cellCases, f64Input, plus, shakeBiases, weighted } from './helpers.js';

const T = 7;
const B = 4;
const I = 5;
const H = 6;
const lengths = Int32Array.of(7, 4, 0, 2);

function run(label: string, make: (typeof cellCases)[number]['make'], mode: CellMode) {
  const cell = make(mode, I, H, 21);
  shakeBiases(cell, 22);
  const random = new Random('fused-vs-composed');
  const inputs = trainable(f64Input(random, [T, B, I], 'inputs'));
  const state = cell.state.map((slot) => trainable(f64Input(random, [B, slot.width], slot.name, -0.5, 0.5)));
  const outputWeights = f64Input(random, [T, B, H], 'w');
  const stateWeights = cell.state.map((slot) => f64Input(random, [B, slot.width], 'v'));
  const tape = new Tape();
  const result = runSequence(tape, cell, inputs, { lengths, initialState: state });
  let total = weighted(tape, result.outputs, outputWeights);
  result.state.forEach((s, i) => {
    total = plus(tape, total, weighted(tape, s, stateWeights[i]));
  });
  const tensors: Tensor[] = [...cell.parameters().map((p) => p.tensor), inputs, ...state];
  resetGradients(tensors);
  tape.reverseSweep(total);
  return {
    kinds: tape.kinds(),
    outputs: Float64Array.from(result.outputs.data),
    finalState: result.state.map((s) => Float64Array.from(s.data)),
    gradients: tensors.map((t) => Float64Array.from(t.gradient!)),
    label,
  };
}

describe('fused cells agree with their composed reference', () => {
  for (const { label, make } of cellCases) {
    it(`${label}: values and gradients within 1e-12`, () => {
      const fused = run(label, make, 'fused');
      const composed = run(label, make, 'composed');
      // The fused run really records one node per step of its own kind, and no per-gate nodes.
      expect(fused.kinds.filter((k) => k.endsWith('Step')).length).toBe(T);
      expect(fused.kinds).not.toContain('sigmoid');
      expect(composed.kinds).toContain('timeStep');
      expect(worstGap(fused.outputs, composed.outputs)).toBeLessThanOrEqual(1e-12);
      fused.finalState.forEach((s, i) => expect(worstGap(s, composed.finalState[i])).toBeLessThanOrEqual(1e-12));
      fused.gradients.forEach((g, i) => expect(worstGap(g, composed.gradients[i])).toBeLessThanOrEqual(1e-12));
    });
  }
});
