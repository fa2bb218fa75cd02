/**
 * The custom cell shown in the package README: the README carries the example file verbatim, and its gradients
 * pass the finite-difference check (f64, worst relative error < 1e-6) inside the generic layer path, ragged and
 * bidirectional, and inside a described model.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { Random, Tape, checkGradients, multiply, randomUniform, sum } from '@weft/core';
import { buildModel, runBidirectional, runSequence } from '@weft/cells';
import { MinimalGatedCell } from '../../../examples/custom-cell/minimal-gated-cell.js';

describe('a cell of your own', () => {
  it('is the code the README shows', () => {
    const readme = readFileSync(new URL('../README.md', import.meta.url), 'utf8');
    const source = readFileSync(new URL('../../../examples/custom-cell/minimal-gated-cell.ts', import.meta.url), 'utf8');
    expect(readme).toContain(`\`\`\`ts\n${source}\`\`\``);
  });

  it('passes the gradient check over a ragged batch in one and in both directions', () => {
    const cell = new MinimalGatedCell(3, 4, 'f64', 1);
    const back = new MinimalGatedCell(3, 4, 'f64', 2);
    const inputs = randomUniform([6, 2, 3], new Random(1), -1, 1, 'f64');
    inputs.name = 'inputs';
    const weights = randomUniform([6, 2, 8], new Random(2), -1, 1, 'f64');
    const one = checkGradients(
      (tape) => {
        const { outputs } = runSequence(tape, cell, inputs, { lengths: [6, 4] });
        return sum(tape, multiply(tape, outputs, outputs));
      },
      [...cell.parameters().map((p) => p.tensor), inputs],
    );
    if (!one.passed) throw new Error(one.text());
    const both = checkGradients(
      (tape) => {
        const { outputs } = runBidirectional(tape, cell, back, inputs, { lengths: [3, 6] });
        return sum(tape, multiply(tape, outputs, weights));
      },
      [...cell.parameters().map((p) => p.tensor), ...back.parameters().map((p) => p.tensor), inputs],
    );
    if (!both.passed) throw new Error(both.text());
    for (const check of [...one.tensors, ...both.tensors]) expect(check.worstRelativeError).toBeLessThan(1e-6);
  });

  it('runs inside a described model when registered by its kind', () => {
    const model = buildModel(
      {
        input: { kind: 'values', width: 3 },
        layers: [
          { cell: 'minimal-gated', hidden: 5 },
          { cell: 'lstm', hidden: 2 },
        ],
      },
      { cells: { 'minimal-gated': (request) => new MinimalGatedCell(request.inputWidth, request.hidden, request.dtype) } },
    );
    expect(
      model
        .parameters()
        .map((p) => p.name)
        .slice(0, 2),
    ).toEqual(['layers[0].forward.inputGate', 'layers[0].forward.recurrentGate']);
    const result = model.run(new Tape(), randomUniform([4, 2, 3], new Random(3)));
    expect(result.outputs.shape).toEqual([4, 2, 2]);
  });
});
