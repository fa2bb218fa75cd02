import { describe, expect, it } from 'vitest';
import { corpusBleu, exactMatchRate, tokenAccuracy } from '../../src/data/transduction.js';

const words = (text: string) =>
  text
    .toLowerCase()
    .replace(/[.]/g, '')
    .split(/\s+/)
    .filter((w) => w !== '');

// Papineni, Roukos, Ward & Zhu 2002, §2.1 (examples 1 and 2; values from memory, each recounted by hand below).
const references = [
  words('It is a guide to action that ensures that the military will forever heed Party commands.'),
  words('It is the guiding principle which guarantees the military forces always being under the command of the Party.'),
  words('It is the practical guide for the army always to heed the directions of the party.'),
];
const candidate1 = words('It is a guide to action which ensures that the military always obeys the commands of the party.');
const candidate2 = words('It is to insure the troops forever hearing the activity guidebook that party direct.');

describe('corpus BLEU (Papineni et al. 2002)', () => {
  it('gives the paper\'s modified unigram precisions: 17/18 and 8/14 for its two candidates, 2/7 for "the" seven times', () => {
    expect(corpusBleu([candidate1], [references], 1).counts[0]).toEqual({ matched: 17, total: 18 });
    expect(corpusBleu([candidate2], [references], 1).counts[0]).toEqual({ matched: 8, total: 14 });
    const the = words('the the the the the the the');
    expect(corpusBleu([the], [[words('The cat is on the mat.'), words('There is a cat on the mat.')]], 1).counts[0]).toEqual({ matched: 2, total: 7 });
  });

  it("gives the paper's modified bigram precisions: 10/17 and 1/13", () => {
    expect(corpusBleu([candidate1], [references], 2).counts[1]).toEqual({ matched: 10, total: 17 });
    expect(corpusBleu([candidate2], [references], 2).counts[1]).toEqual({ matched: 1, total: 13 });
  });

  it('sums counts over the corpus before dividing, and applies the brevity penalty with the closest reference lengths (worked by hand)', () => {
    // Candidate A "a b c d" against "a b c d e": every n-gram matches; c = 4, r = 5.
    // Candidate B "x y" against "x y": all match; c = 2, r = 2. Corpus c = 6, r = 7: BP = e^(1 − 7/6).
    const score = corpusBleu(
      [
        ['a', 'b', 'c', 'd'],
        ['x', 'y'],
      ],
      [[['a', 'b', 'c', 'd', 'e']], [['x', 'y']]],
    );
    expect(score.counts).toEqual([
      { matched: 6, total: 6 },
      { matched: 4, total: 4 },
      { matched: 2, total: 2 },
      { matched: 1, total: 1 },
    ]);
    expect([score.candidateLength, score.referenceLength]).toEqual([6, 7]);
    expect(Math.abs(score.brevityPenalty - Math.exp(1 - 7 / 6))).toBeLessThan(1e-15);
    expect(Math.abs(score.bleu - Math.exp(1 - 7 / 6))).toBeLessThan(1e-15);
  });

  it('is the geometric mean of the four precisions times BP, and 0 with no 4-gram match (no smoothing)', () => {
    // "the cat sat on a mat" against "the cat sat on the mat": p1 = 5/6, p2 = 3/5, p3 = 2/4, p4 = 1/3; c = r = 6, BP = 1.
    const score = corpusBleu([words('the cat sat on a mat')], [[words('the cat sat on the mat')]]);
    expect(score.precisions).toEqual([5 / 6, 3 / 5, 2 / 4, 1 / 3]);
    expect(Math.abs(score.bleu - ((5 / 6) * (3 / 5) * (2 / 4) * (1 / 3)) ** 0.25)).toBeLessThan(1e-15);
    expect(corpusBleu([words('the cat on mat')], [[words('the cat sat on the mat')]]).bleu).toBe(0);
  });
});

describe('token accuracy and exact match', () => {
  it('count positions right and whole sequences right', () => {
    const candidates = [
      ['2', '0', '2', '6'],
      ['1', '2'],
    ];
    const refs = [
      ['2', '0', '2', '6'],
      ['1', '3', '4'],
    ];
    expect(tokenAccuracy(candidates, refs)).toBe(5 / 7);
    expect(exactMatchRate(candidates, refs)).toBe(0.5);
  });
});
