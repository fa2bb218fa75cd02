/**
 * Encoder-decoder models in the runtime. The encoder runs once over a source (whole-sequence mode, so bidirectional
 * encoders work); a `Decoding` then steps the decoder for one or more rows (greedy, sampled, or the partial outputs
 * of a beam), every row starting from the encoder's final state. With attention (Luong, Pham & Manning 2015, §3.1;
 * the equations are in @weft/cells' encoder-decoder.ts) each step scores the encoder's outputs against the decoder's
 * top state, weighs them into a context, and reads out tanh(W_c [c; h]). Every buffer a step touches is made when
 * the Decoding is made, so stepping allocates nothing; the step's attention weights stay readable until the next.
 *
 * Why one file of this length: the runtime and its Decoding share the attention weights' layout and the encoder's
 * outputs in the source's order; beam search (beam.ts) is apart because it only steps a Decoding.
 */
import { WeftError, attentionShape, fail, productShape, refill } from '@weft/core/base';
import type { AdditiveInputs, AttentionShape } from '@weft/core/base';
import type { AttentionForm, EncoderDecoderDescription, CellPlans } from '@weft/cells/description';
import { attentionLayout, isEncoderDecoder } from '@weft/cells/description';
import type { ForwardBackend } from '@weft/core/forward/javascript';
import { forwardAttentionKernels } from '@weft/core/forward/javascript';
import type { WeightMetadata } from '../weight-file.js';
import { layoutProblems } from '../layout-check.js';
import type { BeamOptions, BeamResult } from './beam.js';
import { checkTokens, searchBeams } from './beam.js';
import type { WeightFile } from '../weight-file.js';
import { Runtime, runtimeCounts } from './runtime.js';
import { WholeRun } from './whole-run.js';
import type { Streams } from './runtime.js';
import type { SamplingOptions, UniformSource } from './sampling.js';
import { greedy, sample } from './sampling.js';

/** How a `Decoding` is made. */
export interface DecodingOptions {
  /** Rows decoded together from the same source (beam width); default 1. */
  readonly rows?: number;
  /** Longest source it takes, in tokens (its buffers are sized for it); default 256. */
  readonly maxSourceLength?: number;
}

/** What the encoder makes of one source. */
export interface EncodedSource {
  /** The decoder's initial state, in the decoder's `Runtime.stateWidths()` order, one row each. */
  readonly state: Float32Array;
  /** The encoder's top outputs [S, encodedWidth], in the source's order. */
  readonly outputs: Float32Array;
}

/** How `decode` chooses each token. */
export interface DecodeOptions extends SamplingOptions {
  /** Token the decoder starts from. */
  readonly startToken: number;
  /** Token that ends an output. */
  readonly endToken: number;
  /** Longest output, in tokens (the end token included). */
  readonly maxLength: number;
  /** Draw each token from the softmax with this generator (see `sample`); absent: the most likely token. */
  readonly random?: UniformSource;
}

/** One decoded output, with what attention looked at for each of its tokens. */
export interface DecodedOutput {
  /** Output tokens, without the start token; with the end token when it finished. */
  readonly tokens: number[];
  /** Per output token, the attention weights over the source tokens; empty without attention. */
  readonly attention: Float32Array[];
}

interface AttentionWeights {
  readonly form: AttentionForm;
  readonly keys: Float32Array | null;
  readonly query: Float32Array | null;
  readonly vector: Float32Array | null;
  readonly combine: Float32Array;
  readonly readoutWeights: Float32Array;
  readonly readoutBias: Float32Array;
}

function part(file: WeightFile, side: 'encoder' | 'decoder', description: EncoderDecoderDescription): WeightFile {
  const prefix = `${side}.`;
  // With attention the decoder's readout reads tanh(W_c [c; h]), so the decoder runs without it.
  const keepReadout = side === 'encoder' || description.attention === undefined || description.attention === null;
  return {
    ...file,
    model: keepReadout ? description[side] : { ...description[side], readout: null },
    tensors: file.tensors
      .filter((t) => t.name.startsWith(prefix) && (keepReadout || !t.name.startsWith(`${prefix}readout.`)))
      .map((t) => ({ ...t, name: t.name.slice(prefix.length) })),
  };
}

/**
 * The runtime of an encoder-decoder: the encoder runs over a source, then the decoder decodes greedily, by sampling,
 * or by beam search (`beamSearch` in beam.ts), with attention when the model has it.
 */
export class EncoderDecoderRuntime {
  /** The model description from the weight file. */
  readonly description: EncoderDecoderDescription;
  /** The encoder's runtime. */
  readonly encoder: Runtime;
  /** The decoder's runtime (without its readout when the model has attention: the Decoding reads out). */
  readonly decoder: Runtime;
  /** Logits per decoding step: the target vocabulary. */
  readonly outputWidth: number;
  /** The encoder's output width (hidden × directions of its last layer): what attention weighs. */
  readonly encodedWidth: number;
  private readonly weights: AttentionWeights | null;

  /** The weight file's metadata (vocabularies, tokens), as `Runtime.metadata` gives a sequence model's. */
  get metadata(): WeightMetadata {
    return this.encoder.metadata;
  }

  /** The forward kernels and memory it computes in (the encoder's and the decoder's), as `Runtime.backend`. */
  get backend(): ForwardBackend {
    return this.decoder.backend;
  }

  constructor(file: WeightFile, backend?: ForwardBackend, plans?: CellPlans) {
    if (!isEncoderDecoder(file.model)) {
      fail('bad_weight_file', 'model.kind', '"encoder-decoder" (use createRuntime for a sequence model)', 'a sequence model');
    }
    const description = file.model;
    this.description = description;
    const form = description.attention ?? null;
    const layout = attentionLayout(description);
    const own = file.tensors.filter((t) => !t.name.startsWith('encoder.') && !t.name.startsWith('decoder.'));
    const problems = layoutProblems(own, layout);
    if (problems.length > 0) throw new WeftError(problems);
    this.encoder = new Runtime(part(file, 'encoder', description), backend, plans);
    this.decoder = new Runtime(part(file, 'decoder', description), this.encoder.backend, plans);
    const top = description.encoder.layers[description.encoder.layers.length - 1];
    this.encodedWidth = top.hidden * (top.bidirectional === true ? 2 : 1);
    this.outputWidth = (description.decoder.readout as { width: number }).width;
    if (form === null) {
      this.weights = null;
      return;
    }
    const memory = this.encoder.backend;
    const byName = new Map(file.tensors.map((t) => [t.name, t]));
    const load = (name: string, matrix: boolean): Float32Array => {
      const t = byName.get(name) as WeightFile['tensors'][number];
      if (matrix) return memory.matrix(t.values, t.shape[0], t.shape[1]);
      const copy = memory.floats(t.values.length);
      copy.set(t.values);
      return copy;
    };
    const has = (name: string) => layout.some((p) => p.name === name);
    this.weights = {
      form,
      keys: has('attention.keys') ? load('attention.keys', true) : null,
      query: has('attention.query') ? load('attention.query', true) : null,
      vector: has('attention.vector') ? load('attention.vector', false) : null,
      combine: load('attention.combine', true),
      readoutWeights: load('decoder.readout.weights', true),
      readoutBias: load('decoder.readout.bias', false),
    };
  }

  /**
   * Gives every weight back to the backend's memory (the encoder's, the decoder's and attention's); every later call,
   * and every step of a decoding made from it, is refused; closing again does nothing. Close decodings first to
   * give their buffers back too.
   */
  close(): void {
    if (this.decoder.closed) return;
    const w = this.weights;
    if (w !== null) {
      for (const array of [w.keys, w.query, w.vector, w.combine, w.readoutWeights, w.readoutBias]) if (array !== null) this.decoder.backend.release(array);
    }
    this.encoder.close();
    this.decoder.close();
  }

  /** True once `close` has run. */
  get closed(): boolean {
    return this.decoder.closed;
  }

  /** The attention form, or null for a model without attention. */
  get attention(): AttentionForm | null {
    return this.weights?.form ?? null;
  }

  /**
   * Runs the encoder over one source (tokens in the source's own order; reversed here when the model reads it
   * reversed). Returns the decoder's initial state (`Runtime.stateWidths()` order of the decoder, one row) and the
   * encoder's top outputs [S, encodedWidth] in the source's order.
   */
  encodeAll(source: readonly number[] | Int32Array): EncodedSource {
    const length = source.length;
    if (length === 0) fail('invalid_argument', 'encode.source', 'at least one token', 'none');
    const reversed = this.description.reverseSource === true;
    const fed = reversed ? Array.from(source).reverse() : source;
    const finals: Float32Array[] = [];
    const outputs = this.encoder.run(fed, length, 1, null, finals);
    if (reversed) {
      const width = this.encodedWidth;
      const ordered = new Float32Array(outputs.length);
      for (let s = 0; s < length; s++) ordered.set(outputs.subarray((length - 1 - s) * width, (length - s) * width), s * width);
      outputs.set(ordered);
    }
    // Per encoder layer, its last cell's slots (the backward cell of a bidirectional or reverse layer).
    const picked: Float32Array[] = [];
    let at = 0;
    for (const layer of this.encoder.layerList()) {
      const cells = layer.reverse || layer.backward === null ? 1 : 2;
      const slots = layer.forward.slotWidths.length;
      at += cells * slots;
      picked.push(...finals.slice(at - slots, at));
    }
    const state = new Float32Array(picked.reduce((n, s) => n + s.length, 0));
    let offset = 0;
    for (const slot of picked) {
      state.set(slot, offset);
      offset += slot.length;
    }
    return { state, outputs };
  }

  /** The decoder's initial state for one source, in the decoder's `Runtime.stateWidths()` order (one row each). */
  encode(source: readonly number[] | Int32Array): Float32Array {
    return this.encodeAll(source).state;
  }

  /** The best outputs for one source sequence, best first (at most `width` of them); see beam.ts. */
  beamSearch(source: readonly number[] | Int32Array, options: BeamOptions): BeamResult[] {
    return searchBeams(this, source, options);
  }

  /** A decoder for `rows` rows over sources of up to `maxSourceLength` tokens; see Decoding. */
  decoding(options: DecodingOptions = {}): Decoding {
    return new Decoding(this, options.rows ?? 1, options.maxSourceLength ?? 256, this.weights);
  }

  /**
   * One output for one source: each step's token the most likely one, or drawn by `options.random`; with the
   * attention weights of every step.
   */
  decode(source: readonly number[] | Int32Array, options: DecodeOptions): DecodedOutput {
    checkTokens(options, this, 'decode');
    const decoding = this.decoding({ maxSourceLength: Math.max(1, source.length) });
    try {
      decoding.start(source);
      const tokens: number[] = [];
      const attention: Float32Array[] = [];
      const input = new Int32Array(1);
      const scratch = new Float64Array(this.outputWidth);
      input[0] = options.startToken;
      for (let step = 0; step < options.maxLength; step++) {
        const logits = decoding.step(input);
        const token =
          options.random === undefined ? greedy(logits, 0, this.outputWidth) : sample(logits, 0, this.outputWidth, options.random, options, scratch);
        tokens.push(token);
        if (this.weights !== null) attention.push(decoding.weights.slice(0, source.length));
        if (token === options.endToken) break;
        input[0] = token;
      }
      return { tokens, attention };
    } finally {
      decoding.close();
    }
  }
}

/**
 * The decoder of an encoder-decoder stepping `rows` rows over one source at a time: `start(source)` encodes it and
 * puts every row at the encoder's final state; each `step(tokens)` feeds one token per row and returns the logits
 * [rows, outputWidth]; `weights` then holds each row's attention weights over the source ([rows, maxSourceLength],
 * row r's first `sourceLength` entries). Steps allocate nothing.
 */
export class Decoding {
  /** Rows stepped together. */
  readonly rows: number;
  /** Longest source `start` takes. */
  readonly maxSourceLength: number;
  /** The last step's attention weights, [rows, maxSourceLength]; zeros without attention. */
  readonly weights: Float32Array;
  private length = 0;
  private readonly runtime: EncoderDecoderRuntime;
  private readonly attention: AttentionWeights | null;
  private readonly streams: Streams;
  private readonly allocated: Float32Array[] = [];
  private readonly values: Float32Array;
  private readonly keys: Float32Array;
  private readonly queries: Float32Array;
  private readonly joined: Float32Array;
  private readonly attentional: Float32Array;
  private readonly logits: Float32Array;
  private readonly zeros: Float32Array;
  /** The affine maps' size record, refilled per call. */
  private readonly product = productShape(0, 0, 0);
  /** Attention's size record: `rows` query steps over one source row of `sourceLength` positions (set by start). */
  private readonly attentionShape: AttentionShape;
  private readonly context: Float32Array;
  /** The additive form's inputs (the projected queries and keys, and v), or null for the dot forms. */
  private readonly additiveInputs: AdditiveInputs | null;
  private readonly state: Float32Array;
  private readonly gathered: Float32Array;
  // An encoder whose layers all run forward is streamed token by token into buffers made once; one with a layer
  // reading backward runs whole, also into buffers made once (whole-run.ts): start() makes nothing either way.
  private readonly encoderStreams: Streams | null;
  private readonly wholeRun: WholeRun | null;
  private readonly encoderState: Float32Array | null;
  private readonly encoded: Float32Array;
  private readonly widths: readonly number[];
  private readonly token = new Int32Array(1);

  constructor(runtime: EncoderDecoderRuntime, rows: number, maxSourceLength: number, attention: AttentionWeights | null) {
    for (const [name, value] of [
      ['rows', rows],
      ['maxSourceLength', maxSourceLength],
    ] as const) {
      if (!Number.isInteger(value) || value < 1) fail('invalid_option', `decoding.${name}`, 'a whole number ≥ 1', String(value));
    }
    this.runtime = runtime;
    this.rows = rows;
    this.maxSourceLength = maxSourceLength;
    this.attention = attention;
    this.streams = runtime.decoder.streams(rows);
    const memory = runtime.decoder.backend;
    const allocate = (length: number): Float32Array => {
      runtimeCounts.arrays++;
      const array = memory.floats(Math.max(1, length));
      this.allocated.push(array);
      return array;
    };
    const e = runtime.encodedWidth;
    const d = attention === null ? 0 : runtime.decoder.outputWidth;
    const on = attention === null ? 0 : 1;
    this.weights = allocate(rows * maxSourceLength);
    this.values = allocate(on * maxSourceLength * e);
    this.keys = allocate(on * maxSourceLength * d);
    this.queries = allocate(on * rows * d);
    this.joined = allocate(on * rows * (e + d));
    this.context = allocate(on * rows * e);
    this.attentionShape = attentionShape(rows, 1, maxSourceLength, d, e, new Int32Array(1));
    this.additiveInputs = attention?.vector == null ? null : { query: this.queries, keys: this.keys, vector: attention.vector };
    this.attentional = allocate(on * rows * d);
    this.logits = allocate(on * rows * runtime.outputWidth);
    this.zeros = allocate(on * d);
    this.widths = runtime.decoder.stateWidths();
    const total = this.widths.reduce((n, w) => n + w * rows, 0);
    this.state = allocate(total);
    this.gathered = allocate(total);
    this.encoderStreams = runtime.encoder.streamable ? runtime.encoder.streams(1) : null;
    this.encoderState = allocate(this.encoderStreams === null ? this.widths.reduce((n, w) => n + w, 0) : this.encoderStreams.readState().length);
    this.wholeRun = this.encoderStreams === null ? new WholeRun(runtime.encoder, maxSourceLength, allocate) : null;
    this.encoded = allocate(this.encoderStreams === null ? 1 : runtime.encoder.outputWidth);
  }

  /** Tokens of the source last started. */
  get sourceLength(): number {
    return this.length;
  }

  /** Encodes `source` and puts every row at the start of decoding it. */
  start(source: readonly number[] | Int32Array): void {
    if (this.runtime.closed) this.runtime.encoder.checkOpen('decoding.start');
    if (source.length > this.maxSourceLength)
      fail('invalid_argument', 'decoding.start.source', `at most ${this.maxSourceLength} tokens (the decoding's maxSourceLength)`, `${source.length}`);
    this.length = source.length;
    (this.attentionShape.lengths as Int32Array)[0] = source.length;
    const attention = this.attention;
    let state: Float32Array;
    if (this.encoderStreams !== null && this.encoderState !== null) {
      if (source.length === 0) fail('invalid_argument', 'encode.source', 'at least one token', 'none');
      // Token by token, fed in reverse when the model reads its source reversed; each output kept at its source
      // position (as encodeAll orders them).
      const length = source.length;
      const reversed = this.runtime.description.reverseSource === true;
      const e = this.runtime.encodedWidth;
      this.encoderStreams.reset();
      for (let s = 0; s < length; s++) {
        const at = reversed ? length - 1 - s : s;
        this.token[0] = source[at];
        const out = this.encoderStreams.step(this.token, this.encoded);
        if (attention !== null) for (let j = 0; j < e; j++) this.values[at * e + j] = out[j];
      }
      state = this.encoderStreams.readState(this.encoderState);
    } else {
      state = this.runWhole(source);
    }
    let from = 0;
    let to = 0;
    for (const w of this.widths) {
      for (let r = 0; r < this.rows; r++) for (let j = 0; j < w; j++) this.state[to + r * w + j] = state[from + j];
      from += w;
      to += w * this.rows;
    }
    this.streams.restoreState(this.state);
    this.weights.fill(0);
    if (attention === null) return;
    if (attention.keys !== null) {
      const d = this.runtime.decoder.outputWidth;
      this.runtime.decoder.backend.kernels.affineRows(
        this.keys,
        this.values,
        attention.keys,
        this.zeros,
        refill(this.product, source.length, this.runtime.encodedWidth, d),
      );
    }
  }

  /**
   * Runs an encoder with a layer reading backward over the whole source (fed reversed when the model reads it
   * reversed), its outputs kept at their source positions; returns the decoder's initial state: per encoder layer,
   * its last cell's slots (the backward cell of a bidirectional or reverse layer), as encodeAll picks them.
   */
  private runWhole(source: readonly number[] | Int32Array): Float32Array {
    const run = this.wholeRun as WholeRun;
    const state = this.encoderState as Float32Array;
    const length = source.length;
    if (length === 0) fail('invalid_argument', 'encode.source', 'at least one token', 'none');
    const reversed = this.runtime.description.reverseSource === true;
    run.run(source, length, reversed);
    if (this.attention !== null) {
      const e = this.runtime.encodedWidth;
      for (let s = 0; s < length; s++) {
        const at = reversed ? length - 1 - s : s;
        for (let j = 0; j < e; j++) this.values[at * e + j] = run.outputs[s * e + j];
      }
    }
    let from = 0;
    let to = 0;
    for (const layer of this.runtime.encoder.layerList()) {
      const cells = layer.reverse || layer.backward === null ? 1 : 2;
      const slots = layer.forward.slotWidths.length;
      for (let k = (cells - 1) * slots; k < cells * slots; k++) {
        const slot = run.finals[from + k];
        state.set(slot, to);
        to += slot.length;
      }
      from += cells * slots;
    }
    return state;
  }

  /** One decoding step for every row: `tokens` holds one token per row; returns the logits [rows, outputWidth]. */
  step(tokens: Int32Array | readonly number[]): Float32Array {
    const h = this.streams.step(tokens);
    const attention = this.attention;
    if (attention === null) return h;
    const { rows, weights, values, joined } = this;
    const e = this.runtime.encodedWidth;
    const d = this.runtime.decoder.outputWidth;
    const kernels = this.runtime.decoder.backend.kernels;
    // The attention kernels are one table for both forward backends (they compute on any f32 array).
    const attend = forwardAttentionKernels;
    const additive = attention.form === 'additive';
    const query = additive ? this.queries : h;
    if (additive) kernels.affineRows(this.queries, h, attention.query as Float32Array, this.zeros, refill(this.product, rows, d, d));
    const keys = attention.form === 'dot' ? values : this.keys;
    // Every row attends over the one source: the kernels' layout with one batch row and `rows` query steps.
    const shape = this.attentionShape;
    if (attention.vector === null) attend.attentionScores(weights, query, keys, shape);
    else attend.attentionScoresAdditive(weights, this.additiveInputs as AdditiveInputs, shape);
    attend.softmaxWithinLengths(weights, weights, shape);
    const context = this.context;
    attend.attentionContext(context, weights, values, shape);
    for (let r = 0; r < rows; r++) {
      const row = r * (e + d);
      for (let i = 0; i < e; i++) joined[row + i] = context[r * e + i];
      for (let j = 0; j < d; j++) joined[row + e + j] = h[r * d + j];
    }
    kernels.affineRows(this.attentional, joined, attention.combine, this.zeros, refill(this.product, rows, e + d, d));
    for (let i = 0; i < rows * d; i++) this.attentional[i] = Math.tanh(this.attentional[i]);
    kernels.affineRows(this.logits, this.attentional, attention.readoutWeights, attention.readoutBias, refill(this.product, rows, d, this.runtime.outputWidth));
    return this.logits;
  }

  /** Row i continues from row `parents[i]`'s decoder state (rows past the list keep row 0's); for beam search. */
  keepRows(parents: ArrayLike<number>): void {
    this.streams.readState(this.state);
    let offset = 0;
    for (const w of this.runtime.decoder.stateWidths()) {
      for (let r = 0; r < this.rows; r++) {
        const parent = r < parents.length ? parents[r] : 0;
        this.gathered.set(this.state.subarray(offset + parent * w, offset + (parent + 1) * w), offset + r * w);
      }
      offset += w * this.rows;
    }
    this.streams.restoreState(this.gathered);
  }

  /** Gives every buffer back to the runtime's backend; the decoding must not be used afterwards. */
  close(): void {
    this.streams.close();
    this.encoderStreams?.close();
    for (const array of this.allocated) this.runtime.decoder.backend.release(array);
  }
}
