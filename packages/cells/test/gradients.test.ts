/**
 * Gradients of every built-in cell, fused and composed, against central finite differences in f64
 * (checkGradients; the external reference is the definition of the derivative), worst relative error < 1e-6,
 * over a ragged batch with a given initial state.
 */
import { describe, expect, it } from 'vitest';
import { Random, type Tape, checkGradients } from '@weft/core';
import type { GradientReport, Tensor } from '@weft/core';
import { runSequence } from '@weft/cells';
import type { CellMode } from '@weft/cells';
import { cellCases, f64Input, plus, shakeBiases, weighted } from './helpers.js';

const T = 5;
const B = 3;
const I = 3;
const H = 4;
const lengths = Int32Array.of(5, 3, 1);

function expectPass(report: GradientReport): void {
  if (!report.passed) throw new Error(report.text());
  for (const check of report.tensors) expect(check.worstRelativeError).toBeLessThan(1e-6);
}

describe('cell gradients (f64 finite differences, ragged lengths 5, 3, 1)', () => {
  for (const { label, make } of cellCases) {
    for (const mode of ['fused', 'composed'] as CellMode[]) {
      it(`${label}, ${mode}`, () => {
        const cell = make(mode, I, H, 11);
        shakeBiases(cell, 12);
        const random = new Random(`${label}-${mode}`);
        const inputs = f64Input(random, [T, B, I], 'inputs');
        const state = cell.state.map((slot) => f64Input(random, [B, slot.width], `initial ${slot.name}`, -0.5, 0.5));
        const outputWeights = f64Input(random, [T, B, H], 'w');
        const stateWeights = cell.state.map((slot) => f64Input(random, [B, slot.width], 'v'));
        const loss = (tape: Tape): Tensor => {
          const result = runSequence(tape, cell, inputs, { lengths, initialState: state });
          let total = weighted(tape, result.outputs, outputWeights);
          result.state.forEach((s, i) => {
            total = plus(tape, total, weighted(tape, s, stateWeights[i]));
          });
          return total;
        };
        const tensors = [
          ...cell.parameters().map((p) => {
            p.tensor.name = p.name;
            return p.tensor;
          }),
          inputs,
          ...state,
        ];
        expectPass(checkGradients(loss, tensors, { directions: 2 }));
      });
    }
  }
});
