/**
 * Members stacked into one model compute, side by side, what each member computes alone (checked by running the
 * members one by one, in f64 so summation order cannot hide a misplaced weight), and their median is the median
 * mathjs computes (a general-purpose reference library from npm).
 */
import { describe, expect, it } from 'vitest';
import { median } from 'mathjs';
import { Random, Tape, tensor } from '@weft/core';
import { buildModel, medianOfMembers } from '@weft/cells';
import { stackMembers, stackedDescription } from '@weft/cells/internal';
import type { ModelDescription } from '@weft/cells';

const descriptions: Record<string, ModelDescription> = {
  'LSTMs with peepholes': { input: { kind: 'values', width: 3 }, layers: [{ cell: 'lstm', hidden: 4, peepholes: true }], readout: { width: 2 } },
  'GRUs resetting after the product': {
    input: { kind: 'values', width: 2 },
    layers: [{ cell: 'gru', hidden: 3, resetAfterProduct: true }],
    readout: { width: 1 },
  },
  'two-layer stacks of a plain layer and an LSTM': {
    input: { kind: 'values', width: 2 },
    layers: [
      { cell: 'plain', hidden: 3 },
      { cell: 'lstm', hidden: 2 },
    ],
    readout: { width: 2 },
  },
};

describe('members stacked into one model', () => {
  for (const [label, description] of Object.entries(descriptions)) {
    it(`compute each member's outputs in the member's block: ${label}`, () => {
      const members = [1, 2, 3].map((seed) => buildModel(description, { seed, dtype: 'f64' }));
      const stacked = stackMembers(members);
      expect(stacked.description).toEqual(stackedDescription(description, 3));
      const steps = 5;
      const batch = 2;
      const width = description.input.width;
      const random = new Random('inputs');
      const values = Array.from({ length: steps * batch * width }, () => random.uniform() * 2 - 1);
      const inputs = () => tensor(values, [steps, batch, width], 'f64');
      const together = stacked.run(new Tape({ recording: false }), inputs()).outputs.data;
      const out = members[0].outputWidth;
      members.forEach((member, k) => {
        const alone = member.run(new Tape({ recording: false }), inputs()).outputs.data;
        for (let row = 0; row < steps * batch; row++) {
          for (let j = 0; j < out; j++) expect(together[row * 3 * out + k * out + j]).toBeCloseTo(alone[row * out + j], 12);
        }
      });
    });
  }

  it('are refused when the members differ, or over tokens, or two-way', () => {
    const a = buildModel(descriptions['LSTMs with peepholes'], { seed: 1 });
    const b = buildModel(descriptions['GRUs resetting after the product'], { seed: 1 });
    expect(() => stackMembers([a, b])).toThrowError(/members\[1\]\.description/);
    expect(() => stackMembers([])).toThrowError(/at least one model/);
    expect(() => stackedDescription({ input: { kind: 'embedding', vocabulary: 5, width: 2 }, layers: [{ cell: 'gru', hidden: 2 }] }, 2)).toThrowError(
      /numeric inputs only/,
    );
    expect(() => stackedDescription({ input: { kind: 'values', width: 1 }, layers: [{ cell: 'gru', hidden: 2, bidirectional: true }] }, 2)).toThrowError(
      /one-way layers only/,
    );
    expect(() => stackedDescription(descriptions['LSTMs with peepholes'], 0)).toThrowError(/whole number ≥ 1/);
  });
});

describe('the median of members', () => {
  it('is the median mathjs computes, for odd and even counts, without allocating', () => {
    const random = new Random('median');
    for (const members of [1, 2, 3, 4, 5, 8]) {
      const width = 3;
      const values = Array.from({ length: 2 + members * width }, () => Math.round(random.uniform() * 20) / 4);
      const out = new Float64Array(width);
      medianOfMembers(values, 2, members, width, out, new Float64Array(members));
      for (let j = 0; j < width; j++) {
        const column = Array.from({ length: members }, (_, k) => values[2 + k * width + j]);
        expect(out[j]).toBe(median(column) as number);
      }
    }
  });
});
