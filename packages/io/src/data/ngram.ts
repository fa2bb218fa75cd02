/**
 * A token n-gram model with interpolated Kneser–Ney smoothing (Chen & Goodman, "An empirical study of smoothing
 * techniques for language modeling", Harvard TR-10-98, 1998, §3.5 eq. 17, with one discount per order,
 * D_n = n₁ / (n₁ + 2 n₂) from the counts of n-grams seen once and twice, their eq. 26): the language-model
 * baseline a practitioner expects beside a recurrent next-token model.
 *
 *   P_n(w | h) = max(c_n(h w) − D_n, 0) / c_n(h) + D_n · N₁₊(h •) / c_n(h) · P_{n−1}(w | h′)
 *
 * where h′ is h without its oldest token, c_n is the raw count at the highest order and the continuation count
 * N₁₊(• h w) (how many distinct tokens precede h w) at lower orders, c_n(h) = Σ_w c_n(h w), and N₁₊(h •) the number
 * of distinct w with c_n(h w) > 0. An unseen history falls through to the next lower order; below the unigram
 * level is the uniform distribution over the vocabulary, so every token (an unknown one included) has a
 * probability > 0 and the probabilities over the vocabulary sum to 1.
 */

/** Counts of one order: n-gram → count, history → (sum of counts, distinct followers). */
interface OrderCounts {
  readonly grams: Map<string, number>;
  readonly histories: Map<string, { total: number; followers: number }>;
  readonly discount: number;
}

const key = (tokens: ArrayLike<number>, from: number, to: number): string => {
  let s = '';
  for (let i = from; i < to; i++) s += `${tokens[i]},`;
  return s;
};

/** An interpolated Kneser–Ney n-gram model over token ids. */
export class KneserNeyModel {
  /** counts[n − 1]: the counts of n-grams. */
  private readonly counts: OrderCounts[] = [];

  /** The highest order counted. */
  readonly order: number;
  /** How many distinct ids there are (the uniform floor is 1 / vocabulary). */
  readonly vocabulary: number;

  /** Counts n-grams of orders 1 … `order` in `tokens` (ids below `vocabulary`). */
  constructor(tokens: ArrayLike<number>, order: number, vocabulary: number) {
    this.order = order;
    this.vocabulary = vocabulary;
    const raw: Map<string, number>[] = [];
    const left: Map<string, Set<number>>[] = [];
    for (let n = 1; n <= order; n++) {
      const grams = new Map<string, number>();
      const preceding = new Map<string, Set<number>>();
      for (let i = 0; i + n <= tokens.length; i++) {
        const k = key(tokens, i, i + n);
        grams.set(k, (grams.get(k) ?? 0) + 1);
        if (n < order && i > 0) {
          let set = preceding.get(k);
          if (set === undefined) {
            set = new Set();
            preceding.set(k, set);
          }
          set.add(tokens[i - 1]);
        }
      }
      raw.push(grams);
      left.push(preceding);
    }
    for (let n = 1; n <= order; n++) {
      // The highest order counts occurrences; lower orders count distinct left neighbours.
      const grams = n === order ? raw[n - 1] : new Map([...left[n - 1]].map(([k, set]) => [k, set.size] as [string, number]));
      const histories = new Map<string, { total: number; followers: number }>();
      let once = 0;
      let twice = 0;
      for (const [k, c] of grams) {
        if (c === 1) once++;
        if (c === 2) twice++;
        const h = k.slice(0, k.lastIndexOf(',', k.length - 2) + 1);
        const entry = histories.get(h) ?? { total: 0, followers: 0 };
        entry.total += c;
        entry.followers++;
        histories.set(h, entry);
      }
      const discount = once + 2 * twice > 0 && once > 0 ? once / (once + 2 * twice) : 0.5;
      this.counts.push({ grams, histories, discount });
    }
  }

  /** P(w | the tokens [from, to) of `context`), using at most order − 1 of the latest of them. */
  probability(context: ArrayLike<number>, from: number, to: number, w: number): number {
    const length = Math.min(this.order - 1, to - from);
    let p = 1 / this.vocabulary;
    for (let n = 1; n <= length + 1; n++) {
      const { grams, histories, discount } = this.counts[n - 1];
      const h = key(context, to - (n - 1), to);
      const entry = histories.get(h);
      if (entry === undefined) continue;
      const c = grams.get(`${h}${w},`) ?? 0;
      p = Math.max(c - discount, 0) / entry.total + ((discount * entry.followers) / entry.total) * p;
    }
    return p;
  }

  /** Mean negative log-likelihood (nats) of tokens[from … to) each given the tokens before it in `tokens`. */
  crossEntropy(tokens: ArrayLike<number>, from: number, to = tokens.length): number {
    let sum = 0;
    for (let i = from; i < to; i++) sum -= Math.log(this.probability(tokens, 0, i, tokens[i]));
    return sum / Math.max(1, to - from);
  }
}

/** The order chosen and the cross-entropy of each order tried. */
export interface NgramOrderChoice {
  /** The order with the lowest cross-entropy. */
  readonly order: number;
  /** Cross-entropy (nats per token) of orders 1 … most, in order. */
  readonly crossEntropy: readonly number[];
}

/** The n-gram order (1 … most) with the lowest cross-entropy on `validation` tokens, counted on `training`. */
export function chooseNgramOrder(training: ArrayLike<number>, validation: ArrayLike<number>, vocabulary: number, most: number): NgramOrderChoice {
  const joined = new Int32Array(training.length + validation.length);
  joined.set(Array.from(training));
  joined.set(Array.from(validation), training.length);
  const crossEntropy: number[] = [];
  for (let n = 1; n <= most; n++) crossEntropy.push(new KneserNeyModel(training, n, vocabulary).crossEntropy(joined, training.length));
  let best = 0;
  for (let n = 1; n < crossEntropy.length; n++) if (crossEntropy[n] < crossEntropy[best]) best = n;
  return { order: best + 1, crossEntropy };
}

/** The text baselines' perplexities on the tokens from `testStart` on. */
export interface TextBaselines {
  /** Add-one unigram model counted on the tokens before `testStart`. */
  readonly unigram: number;
  /** The interpolated Kneser–Ney model of the chosen order, counted on the tokens before `testStart`. */
  readonly ngram: number;
  /** The order chosen. */
  readonly order: number;
  /** Cross-entropy (nats) of each order 1 … most on the tokens [validationFrom, testStart), counted before them. */
  readonly orderLosses: readonly number[];
}

/**
 * The baselines a next-token model is judged against, on tokens [testStart, end): a unigram model with add-one
 * counts and a Kneser–Ney model whose order (1 … most) is chosen on tokens [validationFrom, testStart), both then
 * counted on every token before `testStart`.
 */
export function textBaselines(ids: Int32Array, validationFrom: number, testStart: number, vocabulary: number, most: number): TextBaselines {
  const { order, crossEntropy } = chooseNgramOrder(ids.subarray(0, validationFrom), ids.subarray(validationFrom, testStart), vocabulary, most);
  const fitted = ids.subarray(0, testStart);
  const counts = new Float64Array(vocabulary).fill(1);
  for (const id of fitted) counts[id]++;
  let total = 0;
  for (const c of counts) total += c;
  let unigram = 0;
  for (let i = testStart; i < ids.length; i++) unigram -= Math.log(counts[ids[i]] / total);
  const scored = Math.max(1, ids.length - testStart);
  return {
    unigram: Math.exp(unigram / scored),
    ngram: Math.exp(new KneserNeyModel(fitted, order, vocabulary).crossEntropy(ids, testStart)),
    order,
    orderLosses: crossEntropy,
  };
}
