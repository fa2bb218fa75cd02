/**
 * Which part of a file `weft score` scores (scored-part.ts), worked by hand: the training run's own test part when
 * the file is its data, the share asked for otherwise, and a warning that counts the scored items the model was
 * trained on or stopped by.
 */
import { describe, expect, it } from 'vitest';
import { Random } from '@weft/core';
import { scoredCount, scoredItems } from '../src/scored-part.js';

const fields = { all: 'rows', test: 'testRows', fitted: ['trainingRows', 'validationRows'] };
const split = { kind: 'series', rows: 100, trainingRows: 80, validationRows: 10, testRows: 10 };

describe('the part weft score scores', () => {
  it("is the training run's own test part when the file is its data and no share is asked", () => {
    expect(scoredCount(100, { share: undefined, trainedOn: true, split }, 'series', fields)).toEqual({ scored: 10, warning: null, same: true });
  });

  it('is the share asked, or 0.2, on other data, with no warning', () => {
    expect(scoredCount(100, { share: undefined, trainedOn: false, split }, 'series', fields)).toEqual({ scored: 20, warning: null, same: false });
    expect(scoredCount(100, { share: 0.35, trainedOn: false, split: null }, 'series', fields)).toEqual({ scored: 35, warning: null, same: false });
  });

  it('warns how many scored rows of the training file were trained on or used for stopping', () => {
    // The last 30 of 100 rows scored; the first 90 were training and validation rows: 20 of the 30 overlap.
    const { scored, warning } = scoredCount(100, { share: 0.3, trainedOn: true, split }, 'series', fields);
    expect(scored).toBe(30);
    expect(warning).toBe(
      "warning: this is the file the model was trained on (the same SHA-256), and 20 of the 30 scored rows were trained on or used for stopping: the model's figures are optimistic; leave out --test to score its own test part, or score new data",
    );
  });

  it("draws the training run's test sequences again from its seed", () => {
    const sequences = { kind: 'sequences', seed: 'abc', sequences: 50, trainingSequences: 35, validationSequences: 5, testSequences: 10 };
    const chosen = scoredItems(
      50,
      { share: undefined, trainedOn: true, split: sequences },
      'sequences',
      { all: 'sequences', test: 'testSequences', fitted: ['trainingSequences', 'validationSequences'] },
      (seed) => new Random(`${seed}:split`),
    );
    const order = Array.from({ length: 50 }, (_, i) => i);
    new Random('abc:split').shuffle(order);
    expect([...chosen.scored].sort((a, b) => a - b)).toEqual(order.slice(0, 10).sort((a, b) => a - b));
    expect(chosen.same).toBe(true);
  });
});
