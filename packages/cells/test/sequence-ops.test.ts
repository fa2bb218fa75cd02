import { describe, expect, it } from 'vitest';
import { Tape, checkGradients, multiply, sum, tensor, trainable } from '@weft/core';
import { lastSteps } from '@weft/cells';
import { copyLastSteps } from '@weft/cells/internal';

// A time-major batch [T = 3, B = 3, F = 2] whose entry (t, b, j) is 100·t + 10·b + j, so every value says where it
// came from.
const steps = 3;
const rows = 3;
const width = 2;
const data = Float64Array.from({ length: steps * rows * width }, (_, i) => {
  const t = Math.floor(i / (rows * width));
  const b = Math.floor(i / width) % rows;
  return 100 * t + 10 * b + (i % width);
});

describe('the last valid step of each row', () => {
  it('copies step L − 1 of each row, zeros for a row of length 0, and step T − 1 for all when lengths are absent', () => {
    // Hand-worked from the layout rule (t·B + b)·F: row 0 has length 3 → t = 2; row 1 length 1 → t = 0; row 2 length 0.
    const out = copyLastSteps(new Float64Array(rows * width), data, Int32Array.of(3, 1, 0), steps, rows, width);
    expect(Array.from(out)).toEqual([200, 201, 10, 11, 0, 0]);
    expect(Array.from(copyLastSteps(new Float64Array(rows * width), data, null, steps, rows, width))).toEqual([200, 201, 210, 211, 220, 221]);
  });

  it('is what the tape operation computes, and the operation passes gradients back to those steps only (finite differences)', () => {
    const lengths = Int32Array.of(2, 3, 1);
    const sequence = trainable(
      tensor(
        Array.from(data, (v) => v / 100),
        [steps, rows, width],
        'f64',
      ),
      'sequence',
    );
    const picked = lastSteps(new Tape({ recording: false }), sequence, lengths);
    expect(Array.from(picked.data)).toEqual(Array.from(copyLastSteps(new Float64Array(rows * width), sequence.data, lengths, steps, rows, width)));
    const report = checkGradients(
      (tape) => {
        const last = lastSteps(tape, sequence, lengths);
        return sum(tape, multiply(tape, last, last));
      },
      [sequence],
    );
    expect(report.passed).toBe(true);
  });
});
