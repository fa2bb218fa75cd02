/**
 * Encoder-decoder models in the runtime, and beam search over their output (common practice; as in Sutskever,
 * Vinyals & Le 2014, §3.2): keep the `width` best partial outputs by total log-probability, extend each by every
 * token, keep the best `width` again; an output that emits the end token is finished. Finished outputs are ranked
 * by length-normalised score, log P / length^α (α = `lengthPenalty`, default 1: the mean log-probability per
 * token; 0 ranks by total log-probability).
 */
import { fail, logSumExp } from '@weft/core';
import type { EncoderDecoderDescription } from '@weft/cells/description';
import { isEncoderDecoder } from '@weft/cells/description';
import type { ForwardBackend } from '@weft/core/forward/javascript';
import type { WeightFile } from '../weight-file.js';
import { readWeightFile } from '../weight-file.js';
import { Runtime } from './runtime.js';
import type { RuntimeOptions, Streams } from './runtime.js';

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

function part(file: WeightFile, side: 'encoder' | 'decoder', description: EncoderDecoderDescription): WeightFile {
  const prefix = `${side}.`;
  return {
    ...file,
    model: description[side],
    tensors: file.tensors.filter((t) => t.name.startsWith(prefix)).map((t) => ({ ...t, name: t.name.slice(prefix.length) })),
  };
}

/**
 * The runtime of an encoder-decoder: the encoder runs over a source, then the decoder decodes greedily, by sampling, or
 * by beam search.
 */
export class EncoderDecoderRuntime {
  /** The model description from the weight file. */
  readonly description: EncoderDecoderDescription;
  /** The encoder's runtime. */
  readonly encoder: Runtime;
  /** The decoder's runtime. */
  readonly decoder: Runtime;

  constructor(file: WeightFile, backend?: ForwardBackend) {
    if (!isEncoderDecoder(file.model)) {
      fail('bad_weight_file', 'model.kind', '"encoder-decoder" (use createRuntime for a sequence model)', 'a sequence model');
    }
    this.description = file.model;
    this.encoder = new Runtime(part(file, 'encoder', this.description), backend);
    this.decoder = new Runtime(part(file, 'decoder', this.description), backend);
    const stray = file.tensors.find((t) => !t.name.startsWith('encoder.') && !t.name.startsWith('decoder.'));
    if (stray !== undefined) fail('bad_weight_file', `tensors (${stray.name})`, 'names starting with encoder. or decoder.', stray.name);
  }

  /** The encoder's final state for one source sequence, in `Runtime.stateWidths()` order (one row each). */
  encode(source: readonly number[] | Int32Array): Float32Array {
    if (source.length === 0) fail('invalid_argument', 'encode.source', 'at least one token', 'none');
    const streams = this.encoder.streams(1);
    const token = new Int32Array(1);
    const order = this.description.reverseSource === true ? Array.from(source).reverse() : Array.from(source);
    for (const id of order) {
      token[0] = id;
      streams.step(token);
    }
    const state = streams.readState();
    streams.close();
    return state;
  }

  /** The best outputs for one source sequence, best first (at most `width` of them). */
  beamSearch(source: readonly number[] | Int32Array, options: BeamOptions): BeamResult[] {
    const width = options.width ?? 4;
    const alpha = options.lengthPenalty ?? 1;
    const vocabulary = this.decoder.outputWidth;
    if (!Number.isInteger(width) || width < 1) fail('invalid_option', 'beamSearch.width', 'a whole number ≥ 1', String(width));
    if (!Number.isInteger(options.maxLength) || options.maxLength < 1) fail('invalid_option', 'beamSearch.maxLength', 'a whole number ≥ 1', String(options.maxLength));
    for (const key of ['startToken', 'endToken'] as const) {
      const id = options[key];
      if (!Number.isInteger(id) || id < 0 || id >= Math.max(vocabulary, this.decoder.vocabularySize)) fail('invalid_option', `beamSearch.${key}`, `a token id in [0, ${vocabulary})`, String(id));
    }
    const encoded = this.encode(source);
    const streams = this.decoder.streams(width);
    streams.restoreState(replicate(encoded, this.decoder.stateWidths(), width));
    let beams: { tokens: number[]; logProbability: number }[] = [{ tokens: [], logProbability: 0 }];
    const finished: BeamResult[] = [];
    const input = new Int32Array(width);
    const score = (logProbability: number, length: number) => logProbability / length ** alpha;
    for (let step = 0; step < options.maxLength && beams.length > 0; step++) {
      beams.forEach((beam, i) => (input[i] = beam.tokens.length === 0 ? options.startToken : beam.tokens[beam.tokens.length - 1]));
      for (let i = beams.length; i < width; i++) input[i] = options.startToken;
      const logits = streams.step(input);
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
      if (finished.length >= width) break;
      // Each surviving output continues from its parent's decoder state.
      streams.restoreState(gatherRows(streams.readState(), this.decoder.stateWidths(), width, next.map((n) => n.parent)));
      beams = next;
    }
    streams.close();
    const byScore = (a: BeamResult, b: BeamResult) => b.score - a.score;
    const unfinished: BeamResult[] = beams.map((b) => ({ tokens: b.tokens, logProbability: b.logProbability, score: score(b.logProbability, Math.max(1, b.tokens.length)), finished: false }));
    return [...finished.sort(byScore), ...unfinished.sort(byScore)].slice(0, width);
  }
}

function logSoftmaxRow(logits: Float32Array, offset: number, width: number): Float64Array {
  const shift = logSumExp(logits, offset, width);
  const out = new Float64Array(width);
  for (let j = 0; j < width; j++) out[j] = logits[offset + j] - shift;
  return out;
}

/** One row of state per slot, repeated for `rows` rows ([rows, width] per slot, slot after slot). */
function replicate(state: Float32Array, widths: readonly number[], rows: number): Float32Array {
  const out = new Float32Array(widths.reduce((n, w) => n + w * rows, 0));
  let from = 0;
  let to = 0;
  for (const w of widths) {
    for (let r = 0; r < rows; r++) out.set(state.subarray(from, from + w), to + r * w);
    from += w;
    to += w * rows;
  }
  return out;
}

/** Row `parents[i]` of every slot becomes row i (rows past the list keep row 0). */
function gatherRows(state: Float32Array, widths: readonly number[], rows: number, parents: readonly number[]): Float32Array {
  const out = new Float32Array(state.length);
  let offset = 0;
  for (const w of widths) {
    for (let r = 0; r < rows; r++) {
      const parent = parents[r] ?? 0;
      out.set(state.subarray(offset + parent * w, offset + (parent + 1) * w), offset + r * w);
    }
    offset += w * rows;
  }
  return out;
}

/** An encoder-decoder runtime from weight-file text (read and checked) or from a file already read. */
export async function createEncoderDecoderRuntime(source: string | WeightFile, options: RuntimeOptions = {}): Promise<EncoderDecoderRuntime> {
  return new EncoderDecoderRuntime(typeof source === 'string' ? await readWeightFile(source, options) : source, options.backend);
}

export type { Streams };
