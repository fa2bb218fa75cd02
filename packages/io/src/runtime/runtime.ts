/**
 * The inference runtime: a model rebuilt from a weight file on the step kernels alone (no tape, no optimiser, no
 * trainer). Two ways to run it:
 *
 * - `streams(count)`: `count` independent streams stepped together, one sample each per `step`, state carried;
 *   every buffer is made when the streams are made, so stepping allocates nothing. Streams can be reset one by
 *   one, and their state read out and restored. (A bidirectional layer needs the whole sequence, so models with
 *   one run only in whole-sequence mode.)
 * - `run(...)`: a whole batch of sequences in weft's time-major layout, ragged lengths allowed, any model.
 *
 * Why one file of this length: Runtime and Streams share one preallocated buffer layout (weights, per-layer state
 * and scratch); keeping them together keeps that layout in one place.
 */
import { WeftError, fail, productShape, refill } from '@weft/core/base';
import type { Problem } from '@weft/core/base';
import type { ForwardBackend } from '@weft/core/forward/javascript';
import { isEncoderDecoder, layerPath, modelLayout, planOf, runtimeCell, zeroBeyond } from '@weft/cells/description';
import type { CellPlan, CellPlans, LayerBuffers } from '@weft/cells/description';
import { layoutProblems } from '../layout-check.js';
import { defaultForward } from './forward-default.js';
import type { ModelDescription } from '@weft/cells/description';
import type { WeightFile, WeightMetadata } from '../weight-file.js';
import type { ReadOptions } from '../weight-file.js';
import type { WeightSource } from './source.js';
import { weightFileFrom } from './source.js';
import { WholeRun } from './whole-run.js';
import type { RuntimeLayer } from './whole-run.js';

/** Counts the arrays the runtime creates, so tests can prove the steady state creates none. */
export const runtimeCounts: {
  /** Arrays the runtime has made since the program started (or since a test reset it). */
  arrays: number;
} = { arrays: 0 };

/**
 * The inference runtime of one sequence model: its weights copied once into the forward backend's memory, then streams
 * and whole sequences run with no allocation per step.
 */
export class Runtime {
  /** The model description from the weight file. */
  readonly model: ModelDescription;
  /** The weight file's metadata (vocabulary, normalisation, classes, …). */
  readonly metadata: WeightMetadata;
  /** Numbers per step for a values model; 0 for a token model. */
  readonly inputWidth: number;
  /** Token ids accepted, for a token model; 0 otherwise. */
  readonly vocabularySize: number;
  /** Numbers each step outputs (logits for a token model or classifier, values for a forecaster). */
  readonly outputWidth: number;
  /** True when every layer runs forward in time only, so streaming works. */
  readonly streamable: boolean;
  /** The forward kernels and the memory this runtime computes in. */
  readonly backend: ForwardBackend;
  /**
   * True (the default) to refuse a NaN or infinite input value at the boundary, naming its place, before it can
   * poison a stream's state for good. A program whose inputs are finite by construction may set it false to skip
   * the check on a hot path; a non-finite value then flows into the state unchecked.
   */
  checksFinite = true;
  private readonly embedding: Float32Array | null;
  private readonly embeddingWidth: number;
  private readonly layers: readonly RuntimeLayer[];
  private readonly readoutWeights: Float32Array | null;
  private readonly readoutBias: Float32Array | null;
  private readonly featureWidth: number;
  /** The readout's size record, refilled per call. */
  private readonly product = productShape(0, 0, 0);
  /** The weights copied into the backend's memory, given back by `close`. */
  private readonly owned: Float32Array[] = [];
  private closedBy = false;

  /**
   * A runtime for `file` on `backend` (by default the WebAssembly SIMD backend where the platform runs it, else
   * JavaScript; the `@weft/io/runtime/javascript` entry defaults to JavaScript and carries no WebAssembly).
   */
  constructor(file: WeightFile, backend?: ForwardBackend, plans?: CellPlans) {
    const model = file.model;
    if (isEncoderDecoder(model)) {
      fail('bad_weight_file', 'model.kind', 'a sequence model (use createEncoderDecoderRuntime for this file)', '"encoder-decoder"');
    }
    // Every problem of the file against its description's layout, collected, before any memory is taken.
    const problems: Problem[] = [];
    const cellPlans = model.layers.map((layer, i) => {
      const plan = planOf(layer.cell, plans);
      if (plan === null) {
        problems.push({
          code: 'bad_weight_file',
          path: `model.layers[${i}].cell`,
          expected: "a cell with a plan: built in ('lstm', 'gru', 'plain') or given in the runtime's plans",
          received: layer.cell,
        });
      }
      return plan as CellPlan;
    });
    if (problems.length > 0) throw new WeftError(problems);
    const layout = modelLayout(model, plans);
    problems.push(...layoutProblems(file.tensors, layout.parameters));
    if (problems.length > 0) throw new WeftError(problems);

    const tensors = new Map(file.tensors.map((t) => [t.name, t]));
    let weightBytes = 0;
    for (const t of file.tensors) weightBytes += 4 * t.values.length;
    this.backend = backend ?? defaultForward(weightBytes);
    const memory = this.backend;
    const weights = (name: string, shape: readonly number[], matrix = false): Float32Array => {
      const values = (tensors.get(name) as WeightFile['tensors'][number]).values;
      if (matrix) return this.owned[this.owned.push(memory.matrix(values, shape[0], shape[1])) - 1];
      const copy = memory.floats(values.length);
      copy.set(values);
      this.owned.push(copy);
      return copy;
    };
    this.model = model;
    this.metadata = file.metadata;
    const input = model.input;
    if (input.kind === 'embedding') {
      this.embedding = weights('embedding.table', [input.vocabulary, input.width]);
      this.embeddingWidth = input.width;
      this.vocabularySize = input.vocabulary;
      this.inputWidth = 0;
    } else {
      this.embedding = null;
      this.embeddingWidth = 0;
      this.vocabularySize = 0;
      this.inputWidth = input.width;
    }
    const layers: RuntimeLayer[] = [];
    model.layers.forEach((layer, i) => {
      const { inputWidth, outputWidth } = layout.layers[i];
      // A reverse layer's one cell (named `backward`) runs in the forward slot over the sequence reversed.
      const reverse = layer.reverse === true;
      const shape = { inputWidth, hidden: layer.hidden, layer };
      const forward = runtimeCell(cellPlans[i], shape, layerPath(i, reverse ? 'backward' : 'forward'), weights, this.backend.kernels);
      const backward = layer.bidirectional === true ? runtimeCell(cellPlans[i], shape, layerPath(i, 'backward'), weights, this.backend.kernels) : null;
      layers.push({ forward, backward, width: outputWidth, reverse });
    });
    this.layers = layers;
    const width = layers.length > 0 ? layers[layers.length - 1].width : input.width;
    this.featureWidth = width;
    if (model.readout !== undefined && model.readout !== null) {
      this.readoutWeights = weights('readout.weights', [width, model.readout.width], true);
      this.readoutBias = weights('readout.bias', [model.readout.width]);
      this.outputWidth = model.readout.width;
    } else {
      this.readoutWeights = null;
      this.readoutBias = null;
      this.outputWidth = width;
    }
    this.streamable = layers.every((l) => l.backward === null && !l.reverse);
  }

  /** State slots per stream, in order (h, or h and c, per layer), and their widths. */
  stateWidths(): number[] {
    return this.layers.flatMap((l) => [...l.forward.slotWidths]);
  }

  /** `count` independent streams, each starting from zero state. */
  streams(count: number): Streams {
    this.checkOpen('streams');
    if (!this.streamable)
      fail('invalid_argument', 'Runtime.streams', 'a model whose layers all run forward in time', 'a layer that reads backward (use run() on whole sequences)');
    if (!Number.isInteger(count) || count < 1) fail('invalid_argument', 'Runtime.streams.count', 'a whole number ≥ 1', String(count));
    return new Streams(this, count);
  }

  /**
   * A whole batch: token ids [steps·batch] or numbers [steps·batch·inputWidth], time-major; returns the outputs
   * [steps, batch, outputWidth] (zero beyond each row's length) and leaves nothing behind. When `finalState` is
   * given, each cell's final state is pushed onto it (layer by layer, the forward cell then the backward one; each
   * cell's slots in order, [batch, hidden] each).
   */
  run(
    input: Float32Array | Int32Array | readonly number[],
    steps: number,
    batch: number,
    lengths: Int32Array | readonly number[] | null = null,
    finalState?: Float32Array[],
  ): Float32Array {
    this.checkOpen('run');
    if (!(Number.isInteger(steps) && steps >= 0)) fail('invalid_argument', 'Runtime.run.steps', 'a whole number ≥ 0', String(steps));
    if (!(Number.isInteger(batch) && batch >= 1)) fail('invalid_argument', 'Runtime.run.batch', 'a whole number ≥ 1', String(batch));
    if (lengths !== null) {
      // Checked before conversion: Int32Array.from would turn NaN into 0 and 2.5 into 2 without a word.
      if (lengths.length !== batch) fail('shape_mismatch', 'Runtime.run.lengths', `${batch} lengths`, `${lengths.length}`);
      for (let b = 0; b < lengths.length; b++) {
        const l = lengths[b];
        if (!(Number.isInteger(l) && l >= 0 && l <= steps)) fail('invalid_argument', `Runtime.run.lengths[${b}]`, `a whole number in [0, ${steps}]`, String(l));
      }
    }
    const rowsLengths = lengths === null ? null : Int32Array.from(lengths);
    // Every buffer of a whole run comes from the backend's memory and goes back to it at the end; the result is
    // copied out into an ordinary array the caller keeps.
    const made: Float32Array[] = [];
    const temporary = (length: number): Float32Array => {
      const array = this.backend.floats(length);
      made.push(array);
      return array;
    };
    try {
      const whole = new WholeRun(this, steps, temporary, batch);
      whole.run(input, steps, false, rowsLengths, 'Runtime.run.input');
      if (finalState !== undefined) for (const slots of whole.finals) finalState.push(slots.slice());
      return whole.outputs.slice();
    } finally {
      for (const array of made) this.backend.release(array);
    }
  }

  /** Numbers for the first layer: embedding rows for token ids, or the values as they are (checked). */
  embed(input: Float32Array | Int32Array | readonly number[], positions: number, where: string, into?: Float32Array): Float32Array {
    if (this.embedding !== null) {
      if (input.length !== positions) fail('shape_mismatch', where, `${positions} token ids`, `${input.length}`);
      const out = into ?? new Float32Array(positions * this.embeddingWidth);
      const w = this.embeddingWidth;
      for (let p = 0; p < positions; p++) {
        const id = input[p];
        if (!(id >= 0 && id < this.vocabularySize) || !Number.isInteger(id))
          fail('invalid_argument', `${where}[${p}]`, `a token id in [0, ${this.vocabularySize})`, String(id));
        for (let j = 0; j < w; j++) out[p * w + j] = this.embedding[id * w + j];
      }
      return out;
    }
    if (input.length !== positions * this.inputWidth)
      fail('shape_mismatch', where, `${positions * this.inputWidth} numbers (${positions} × ${this.inputWidth})`, `${input.length}`);
    // A NaN or infinity would poison a stream's state for good: refused at the boundary, naming its place.
    if (this.checksFinite)
      for (let i = 0; i < input.length; i++) if (!Number.isFinite(input[i])) fail('not_finite', `${where}[${i}]`, 'a finite number', String(input[i]));
    if (into !== undefined) {
      for (let i = 0; i < input.length; i++) into[i] = input[i];
      return into;
    }
    return Float32Array.from(input);
  }

  /** outputs = features · W + b (or the features themselves without a readout); zero rows beyond lengths. */
  readout(features: Float32Array, positions: number, out: Float32Array, lengths: Int32Array | null, batch: number): Float32Array {
    if (this.readoutWeights === null || this.readoutBias === null) {
      for (let i = 0; i < positions * this.outputWidth; i++) out[i] = features[i];
    } else {
      this.backend.kernels.affineRows(
        out,
        features,
        this.readoutWeights,
        this.readoutBias,
        refill(this.product, positions, this.featureWidth, this.outputWidth),
      );
    }
    if (lengths !== null) zeroBeyond(out, out, { steps: positions / batch, rows: batch, width: this.outputWidth }, lengths);
    return out;
  }

  /**
   * Gives the weights back to the backend's memory (on WebAssembly, blocks of it that later runtimes on the same
   * backend reuse; on JavaScript, to the garbage collector). Every later call of the runtime, and of streams made from
   * it, is refused; closing again does nothing. Close its streams first to give their buffers back too.
   */
  close(): void {
    if (this.closedBy) return;
    this.closedBy = true;
    for (const array of this.owned) this.backend.release(array);
    this.owned.length = 0;
  }

  /** True once `close` has run. */
  get closed(): boolean {
    return this.closedBy;
  }

  /** Refuses a call on a closed runtime. */
  checkOpen(call: string): void {
    if (this.closedBy) fail('invalid_argument', `Runtime.${call}`, 'an open runtime', 'a runtime closed by close() (make a new one with createRuntime)');
  }

  /** The layers, for Streams. */
  layerList(): readonly RuntimeLayer[] {
    return this.layers;
  }
}

/** Several independent streams stepped together; see Runtime. */
export class Streams {
  /** How many streams step together. */
  readonly count: number;
  private readonly runtime: Runtime;
  private readonly buffers: LayerBuffers[];
  private readonly first: Float32Array;
  private readonly output: Float32Array;
  private closed = false;
  /**
   * Steps taken, as the layer steps' step number (no lengths here, so it places nothing): its parity sets which end
   * of the weights a streaming product starts from, so a step starts on those the one before read last (packed.ts).
   */
  private steps = 0;

  constructor(runtime: Runtime, count: number) {
    this.runtime = runtime;
    this.count = count;
    const layers = runtime.layerList();
    const allocate = (length: number): Float32Array => {
      runtimeCounts.arrays++;
      return runtime.backend.floats(length);
    };
    this.buffers = layers.map((l) => l.forward.buffers(count, allocate));
    this.first = allocate(count * layers[0].forward.inputWidth);
    this.output = allocate(count * runtime.outputWidth);
  }

  /**
   * One step of every stream: `input` holds one token id per stream, or `inputWidth` numbers per stream. Writes
   * the outputs ([count, outputWidth]) into `into` when given and returns them; the returned array is reused by
   * the next step.
   */
  step(input: Float32Array | Int32Array | readonly number[], into?: Float32Array): Float32Array {
    this.open('step');
    const runtime = this.runtime;
    // Every check before any state changes: a step that throws leaves every stream as it was.
    if (into !== undefined && into.length !== this.count * runtime.outputWidth)
      fail('shape_mismatch', 'Streams.step.into', `${this.count * runtime.outputWidth} numbers`, `${into.length}`);
    runtime.embed(input, this.count, 'Streams.step.input', this.first);
    const layers = runtime.layerList();
    let x = this.first;
    for (let i = 0; i < layers.length; i++) {
      // Each layer reads the previous layer's h and updates its own state in place.
      layers[i].forward.step(x, this.buffers[i], this.count, null, this.steps);
      x = this.buffers[i].state[0];
    }
    runtime.readout(x, this.count, this.output, null, this.count);
    this.steps = (this.steps + 1) & 0x3fffffff;
    if (into === undefined) return this.output;
    into.set(this.output);
    return into;
  }

  /** Sets one stream's state (or every stream's) back to zero. */
  reset(stream?: number): void {
    this.open('reset');
    if (stream !== undefined && !(Number.isInteger(stream) && stream >= 0 && stream < this.count))
      fail('invalid_argument', 'Streams.reset.stream', `a stream number in [0, ${this.count})`, String(stream));
    for (const layer of this.buffers) {
      for (const slot of layer.state) {
        const width = slot.length / this.count;
        if (stream === undefined) slot.fill(0);
        else slot.fill(0, stream * width, (stream + 1) * width);
      }
    }
  }

  /** Every stream's state, slot after slot (`Runtime.stateWidths()` order), [count, width] each, into one array. */
  readState(into?: Float32Array): Float32Array {
    this.open('readState');
    const total = this.stateLength();
    if (into !== undefined && into.length !== total) fail('shape_mismatch', 'Streams.readState.into', `${total} numbers`, `${into.length}`);
    const out = into ?? new Float32Array(total);
    let offset = 0;
    for (const layer of this.buffers) {
      for (const slot of layer.state) {
        out.set(slot, offset);
        offset += slot.length;
      }
    }
    return out;
  }

  /**
   * Gives the streams' buffers back to the runtime's backend (on WebAssembly they are blocks of its memory, which
   * are reused by later streams). Every later call but `close` is refused; closing again does nothing (the blocks
   * are given back once).
   */
  close(): void {
    if (this.closed) return;
    this.closed = true;
    for (const layer of this.buffers) {
      for (const array of layer.state) this.runtime.backend.release(array);
      for (const array of layer.work) this.runtime.backend.release(array);
    }
    this.runtime.backend.release(this.first);
    this.runtime.backend.release(this.output);
  }

  /** Refuses a call on closed streams (their blocks may already hold other streams' state). */
  private open(call: string): void {
    // The message is made only when it is needed: this runs on every step.
    if (this.runtime.closed) this.runtime.checkOpen(`streams.${call}`);
    if (this.closed) fail('invalid_argument', `Streams.${call}`, 'open streams', 'streams closed by close() (make new ones with runtime.streams())');
  }

  /**
   * Puts back every layer's state from `state` (the layout `readState` gives), to continue streams from a saved point.
   */
  restoreState(state: Float32Array): void {
    this.open('restoreState');
    const total = this.stateLength();
    if (state.length !== total) fail('shape_mismatch', 'Streams.restoreState', `${total} numbers`, `${state.length}`);
    for (let i = 0; i < total; i++) if (!Number.isFinite(state[i])) fail('not_finite', `Streams.restoreState[${i}]`, 'a finite number', String(state[i]));
    // Copied number by number: no view is made, so restoring (as every decoding start does) allocates nothing.
    let offset = 0;
    for (const layer of this.buffers) {
      for (const slot of layer.state) {
        for (let j = 0; j < slot.length; j++) slot[j] = state[offset + j];
        offset += slot.length;
      }
    }
  }

  /** Numbers of every stream's state together. */
  private stateLength(): number {
    let total = 0;
    for (const layer of this.buffers) for (const slot of layer.state) total += slot.length;
    return total;
  }
}

/** How `createRuntime` reads the file and where it runs. */
export interface RuntimeOptions extends ReadOptions {
  /** The forward backend to run on (default: see the Runtime constructor). */
  readonly backend?: ForwardBackend;
}

/**
 * A runtime from a weight file in any form (text, bytes, a Response, a URL, the parsed object: read and checked), or
 * from a file already read.
 */
export async function createRuntime(source: WeightSource, options: RuntimeOptions = {}): Promise<Runtime> {
  const file = await weightFileFrom(source, options);
  return new Runtime(file, options.backend, options.plans);
}
