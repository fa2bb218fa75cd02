/**
 * Scores of a transduction (a sequence in, a sequence out: dates normalised, units converted, words transliterated):
 * token accuracy, exact-match rate, and corpus BLEU (Papineni, Roukos, Ward & Zhu 2002, "BLEU: a method for
 * automatic evaluation of machine translation", ACL): the geometric mean of the modified n-gram precisions for
 * n = 1 … 4, each n-gram's count clipped to the most times it occurs in any one reference, with the counts summed over
 * the whole corpus before dividing (§2.1.1), times the brevity penalty BP = 1 if c > r, else e^(1 − r/c), where c is
 * the candidates' total length and r the sum of each candidate's best-match reference length (§2.2.1). No smoothing:
 * a corpus with no matching n-gram of some order scores 0, as in the paper.
 */

/** One n-gram order's counts over a corpus. */
export interface NgramCounts {
  /** Candidate n-grams matched, each clipped to its most frequent count in any one reference. */
  readonly matched: number;
  /** Candidate n-grams. */
  readonly total: number;
}

/** Corpus BLEU with its parts. */
export interface BleuScore {
  /** BP · exp(Σ_n (1/N) log p_n), in [0, 1]. */
  readonly bleu: number;
  /** The modified n-gram precision p_n for n = 1 … N, as fractions of counts summed over the corpus. */
  readonly precisions: readonly number[];
  /** Clipped matches and candidate n-grams per order, summed over the corpus (the numerators and denominators). */
  readonly counts: readonly NgramCounts[];
  /** The brevity penalty. */
  readonly brevityPenalty: number;
  /** c: the candidates' total length in tokens. */
  readonly candidateLength: number;
  /** r: the sum over candidates of the reference length closest to each candidate's (the shorter on a tie). */
  readonly referenceLength: number;
}

function ngramCounts(tokens: readonly string[], n: number): Map<string, number> {
  const counts = new Map<string, number>();
  for (let i = 0; i + n <= tokens.length; i++) {
    // A unit separator joins the tokens: no token of text contains it, so distinct n-grams get distinct keys.
    const key = tokens.slice(i, i + n).join('\u001f');
    counts.set(key, (counts.get(key) ?? 0) + 1);
  }
  return counts;
}

/**
 * Corpus BLEU of `candidates` (one token list each) against `references` (one or more token lists per candidate),
 * up to n-grams of `maxOrder` (4 in the paper).
 */
export function corpusBleu(candidates: readonly (readonly string[])[], references: readonly (readonly (readonly string[])[])[], maxOrder = 4): BleuScore {
  const counts = Array.from({ length: maxOrder }, () => ({ matched: 0, total: 0 }));
  let candidateLength = 0;
  let referenceLength = 0;
  candidates.forEach((candidate, k) => {
    const refs = references[k] ?? [];
    candidateLength += candidate.length;
    let best = Infinity;
    for (const ref of refs) {
      const gap = Math.abs(ref.length - candidate.length);
      const bestGap = Math.abs(best - candidate.length);
      if (gap < bestGap || (gap === bestGap && ref.length < best)) best = ref.length;
    }
    referenceLength += best === Infinity ? 0 : best;
    for (let n = 1; n <= maxOrder; n++) {
      const mine = ngramCounts(candidate, n);
      const most = new Map<string, number>();
      for (const ref of refs) for (const [key, count] of ngramCounts(ref, n)) most.set(key, Math.max(most.get(key) ?? 0, count));
      for (const [key, count] of mine) {
        counts[n - 1].matched += Math.min(count, most.get(key) ?? 0);
        counts[n - 1].total += count;
      }
    }
  });
  const precisions = counts.map((c) => (c.total === 0 ? 0 : c.matched / c.total));
  const brevityPenalty = candidateLength === 0 ? 0 : candidateLength > referenceLength ? 1 : Math.exp(1 - referenceLength / candidateLength);
  const bleu = precisions.some((p) => p === 0) ? 0 : brevityPenalty * Math.exp(precisions.reduce((s, p) => s + Math.log(p), 0) / maxOrder);
  return { bleu, precisions, counts, brevityPenalty, candidateLength, referenceLength };
}

/** Share of reference positions the candidate gets right, position by position (a shorter candidate misses the rest). */
export function tokenAccuracy(candidates: readonly (readonly string[])[], references: readonly (readonly string[])[]): number {
  let right = 0;
  let total = 0;
  candidates.forEach((candidate, k) => {
    const ref = references[k];
    total += ref.length;
    for (let i = 0; i < ref.length; i++) if (candidate[i] === ref[i]) right++;
  });
  return total === 0 ? 0 : right / total;
}

/** Share of candidates equal to their reference, token for token. */
export function exactMatchRate(candidates: readonly (readonly string[])[], references: readonly (readonly string[])[]): number {
  if (candidates.length === 0) return 0;
  let same = 0;
  candidates.forEach((candidate, k) => {
    const ref = references[k];
    if (candidate.length === ref.length && candidate.every((t, i) => t === ref[i])) same++;
  });
  return same / candidates.length;
}
