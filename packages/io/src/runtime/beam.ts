/**
 * Beam search over an encoder-decoder's output (common practice; as in Sutskever,
 * Vinyals & Le 2014, §3.2): keep the `width` best partial outputs by total log-probability, extend each by every
 * token, keep the best `width` again; an output that emits the end token is finished. Finished outputs are ranked
 * by length-normalised score, log P / length^α (α = `lengthPenalty`, default 1: the mean log-probability per
 * token; 0 ranks by total log-probability). The search goes on until no partial output is left or `maxLength`
 * (with α = 0 it stops once no partial output can beat the `width` best finished ones); outputs that reached
 * `maxLength` unfinished come after every finished one.
 */
import { fail, logSumExp } from '@weft/core/base';

/** What beam search steps: a decoding of `width` rows over one source (a Decoding, decoding.ts). */
export interface BeamDecoding {
  /** Encodes the source and puts every row at the start. */
  start(source: readonly number[] | Int32Array): void;
  /** One step of every row; the logits [rows, vocabulary]. */
  step(tokens: Int32Array): Float32Array;
  /** Keeps, in row r, the row `parents[r]` was (the surviving beams). */
  keepRows(parents: readonly number[]): void;
  /** Gives its buffers back. */
  close(): void;
}

/** What beam search decodes with (an EncoderDecoderRuntime, decoding.ts). */
export interface BeamDecoder {
  /** The target vocabulary's size (logits per step). */
  readonly outputWidth: number;
  /** The decoder: the token ids it reads. */
  readonly decoder: { readonly vocabularySize: number };
  /** A decoding of `rows` rows over sources of up to `maxSourceLength` tokens. */
  decoding(options: { readonly rows: number; readonly maxSourceLength: number }): BeamDecoding;
}

/** How beam search decodes. */
export interface BeamOptions {
  /** How many partial outputs to keep (1 is greedy decoding). Default 4. */
  readonly width?: number;
  /** Token the decoder starts from. */
  readonly startToken: number;
  /** Token that ends an output. */
  readonly endToken: number;
  /** Longest output, in tokens (the end token included). */
  readonly maxLength: number;
  /** α in log P / length^α. Default 1. */
  readonly lengthPenalty?: number;
}

/** One decoded output. */
export interface BeamResult {
  /** Output tokens, without the start token; with the end token when it finished. */
  readonly tokens: number[];
  /** Total log-probability. */
  readonly logProbability: number;
  /** log P / length^α, the ranking score. */
  readonly score: number;
  /** True when it ended with the end token (false when it reached `maxLength`). */
  readonly finished: boolean;
}

/** The best outputs of `runtime` for one source sequence, best first (at most `width` of them). */
export function searchBeams(runtime: BeamDecoder, source: readonly number[] | Int32Array, options: BeamOptions): BeamResult[] {
  const width = options.width ?? 4;
  const alpha = options.lengthPenalty ?? 1;
  const vocabulary = runtime.outputWidth;
  if (!Number.isInteger(width) || width < 1) fail('invalid_option', 'beamSearch.width', 'a whole number ≥ 1', String(width));
  checkTokens(options, runtime, 'beamSearch');
  const decoding = runtime.decoding({ rows: width, maxSourceLength: Math.max(1, source.length) });
  try {
    decoding.start(source);
    return search(decoding, vocabulary, width, alpha, options);
  } finally {
    decoding.close();
  }
}

function search(decoding: BeamDecoding, vocabulary: number, width: number, alpha: number, options: BeamOptions): BeamResult[] {
  let beams: { tokens: number[]; logProbability: number }[] = [{ tokens: [], logProbability: 0 }];
  const finished: BeamResult[] = [];
  const input = new Int32Array(width);
  const score = (logProbability: number, length: number) => logProbability / length ** alpha;
  for (let step = 0; step < options.maxLength && beams.length > 0; step++) {
    beams.forEach((beam, i) => (input[i] = beam.tokens.length === 0 ? options.startToken : beam.tokens[beam.tokens.length - 1]));
    for (let i = beams.length; i < width; i++) input[i] = options.startToken;
    const logits = decoding.step(input);
    const candidates: { parent: number; token: number; logProbability: number }[] = [];
    beams.forEach((beam, i) => {
      const logSoftmax = logSoftmaxRow(logits, i * vocabulary, vocabulary);
      for (let v = 0; v < vocabulary; v++) candidates.push({ parent: i, token: v, logProbability: beam.logProbability + logSoftmax[v] });
    });
    candidates.sort((a, b) => b.logProbability - a.logProbability || a.parent - b.parent || a.token - b.token);
    const next: { tokens: number[]; logProbability: number; parent: number }[] = [];
    for (const candidate of candidates) {
      const tokens = [...beams[candidate.parent].tokens, candidate.token];
      if (candidate.token === options.endToken) {
        finished.push({ tokens, logProbability: candidate.logProbability, score: score(candidate.logProbability, tokens.length), finished: true });
      } else {
        next.push({ tokens, logProbability: candidate.logProbability, parent: candidate.parent });
        if (next.length === width) break;
      }
    }
    // Stop early only when nothing alive can still win: with α = 0 a score only falls as an output grows, so once
    // `width` finished outputs all score above the best alive one, no longer output can beat them. With α > 0 a
    // longer output can still score higher (its mean can rise), so the search goes on to the end or maxLength
    // (stopping at the first `width` finished outputs returned short, wrong ones ahead of better ones still alive).
    if (alpha === 0 && finished.length >= width && next.length > 0) {
      const worstKept = finished.map((f) => f.score).sort((a, b) => b - a)[width - 1];
      if (worstKept >= next[0].logProbability) break;
    }
    // Each surviving output continues from its parent's decoder state.
    decoding.keepRows(next.map((n) => n.parent));
    beams = next;
  }
  const byScore = (a: BeamResult, b: BeamResult) => b.score - a.score;
  const unfinished: BeamResult[] = beams.map((b) => ({
    tokens: b.tokens,
    logProbability: b.logProbability,
    score: score(b.logProbability, Math.max(1, b.tokens.length)),
    finished: false,
  }));
  return [...finished.sort(byScore), ...unfinished.sort(byScore)].slice(0, width);
}

function logSoftmaxRow(logits: Float32Array, offset: number, width: number): Float64Array {
  const shift = logSumExp(logits, offset, width);
  const out = new Float64Array(width);
  for (let j = 0; j < width; j++) out[j] = logits[offset + j] - shift;
  return out;
}

/** The start token (a decoder input), the end token (an output) and the length limit of a decode, checked. */
export function checkTokens(
  options: { readonly startToken: number; readonly endToken: number; readonly maxLength: number },
  runtime: Pick<BeamDecoder, 'outputWidth' | 'decoder'>,
  where: string,
): void {
  if (!Number.isInteger(options.maxLength) || options.maxLength < 1)
    fail('invalid_option', `${where}.maxLength`, 'a whole number ≥ 1', String(options.maxLength));
  for (const [key, limit] of [
    ['startToken', runtime.decoder.vocabularySize],
    ['endToken', runtime.outputWidth],
  ] as const) {
    const id = options[key];
    if (!Number.isInteger(id) || id < 0 || id >= limit) fail('invalid_option', `${where}.${key}`, `a token id in [0, ${limit})`, String(id));
  }
}
