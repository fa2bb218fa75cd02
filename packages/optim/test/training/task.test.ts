import { describe, expect, it } from 'vitest';
import { Tape, tensor } from '@weft/core';
import { taskLoss, taskRows } from '../../src/training/task.js';
import type { Batch } from '../../src/data.js';

// Outputs [T = 2, B = 2, width 2], time-major; row 1 has length 1.
const outputs = () =>
  tensor(
    [
      [
        [1, 0],
        [0, 1],
      ],
      [
        [2, 0],
        [9, 9],
      ],
    ],
    [2, 2, 2],
    'f64',
  );
const lengths = Int32Array.of(2, 1);

describe('the task loss by kind of target', () => {
  it('takes per-step targets at every step, weighting padding 0', () => {
    const batch = {
      steps: 2,
      batch: 2,
      lengths,
      positions: 3,
      input: outputs(),
      targets: { kind: 'classes', perStep: true, classes: Int32Array.of(0, 1, 0, 0), weights: null },
    } as unknown as Batch;
    const rows = taskRows(new Tape(), outputs(), batch);
    expect(rows.rows).toBe(4);
    expect(Array.from(rows.weights!)).toEqual([1, 1, 1, 0]);
    // Softmax cross-entropy of (1, 0) at 0, (0, 1) at 1 and (2, 0) at 0: −log σ(1) twice and −log σ(2) (definition).
    const expected = (2 * Math.log(1 + Math.exp(-1)) + Math.log(1 + Math.exp(-2))) / 3;
    expect(Math.abs(taskLoss(new Tape(), outputs(), batch).data[0] - expected)).toBeLessThan(1e-15);
  });

  it("takes one target per sequence at each row's last valid step, as a mean squared error for values", () => {
    const target = tensor(
      [
        [2, 0],
        [0, 0],
      ],
      [2, 2],
      'f64',
    );
    const batch = {
      steps: 2,
      batch: 2,
      lengths,
      positions: 3,
      input: outputs(),
      targets: { kind: 'values', perStep: false, width: 2, values: target, weights: null },
    } as unknown as Batch;
    // Last valid steps: row 0 at step 1 (2, 0), row 1 at step 0 (0, 1): squared errors 0, 0, 0, 1 over 4.
    expect(taskLoss(new Tape(), outputs(), batch).data[0]).toBe(0.25);
  });

  it('refuses a model whose output width is not the target width, naming both', () => {
    const target = tensor(
      [
        [1, 2, 3],
        [4, 5, 6],
      ],
      [2, 3],
      'f64',
    );
    const batch = {
      steps: 2,
      batch: 2,
      lengths,
      positions: 3,
      input: outputs(),
      targets: { kind: 'values', perStep: false, width: 3, values: target, weights: null },
    } as unknown as Batch;
    expect(() => taskLoss(new Tape(), outputs(), batch)).toThrowError(
      'Shape mismatch at trainer.model.outputs: expected 3 values per step (the target width), received 2',
    );
  });
});
