/**
 * A batch of sequences run whole through a runtime's layers (reverse and bidirectional layers included, rows ending
 * at their own lengths) into buffers made once for up to `maxSteps` steps of `rows` rows, so running one allocates
 * nothing: each direction's step input, cell buffers, outputs and final state are made here (a step's rows are
 * copied into an array of the backend's own, since a view of its memory made per step would be an allocation, and
 * its kernels find arrays by address). The one walk of a runtime's layers over whole sequences: `Runtime.run` makes
 * one per call, and the encoder of a `Decoding` keeps one (one row) where its layers do not all run forward (a
 * forward-only encoder streams instead). The sequence helpers are training's, tape-free (cells' sequence-rows.ts):
 * reversal within lengths, joined directions, zeros past a row's length.
 */
import { joinFeatures, reverseRows, zeroBeyond } from '@weft/cells/description';
import type { LayerBuffers, RuntimeCell } from '@weft/cells/description';

/** One layer of a runtime: its cells. */
export interface RuntimeLayer {
  /** The cell that runs in the layer's own direction (forward, or backward for a reverse layer). */
  readonly forward: RuntimeCell;
  /** The backward cell of a bidirectional layer. */
  readonly backward: RuntimeCell | null;
  /** Its output width: hidden, or both directions' hidden side by side. */
  readonly width: number;
  /** The layer reads backward in time only. */
  readonly reverse: boolean;
}

/** What a whole run needs of a runtime (`Runtime` is one): its layers, how inputs enter and how outputs leave. */
export interface LayeredRuntime {
  /** Numbers per position after the readout. */
  readonly outputWidth: number;
  /** The layers, first to last. */
  layerList(): readonly RuntimeLayer[];
  /** The first layer's numbers for `positions` inputs (token ids embedded, or values checked), into `into`. */
  embed(input: Float32Array | Int32Array | readonly number[], positions: number, where: string, into: Float32Array): Float32Array;
  /** The readout over `positions` feature rows into `out`, zero past the rows' lengths. */
  readout(features: Float32Array, positions: number, out: Float32Array, lengths: Int32Array | null, batch: number): Float32Array;
}

/** One direction of one layer: its cell, buffers, per-step input and the outputs it writes. */
interface Direction {
  readonly cell: RuntimeCell;
  readonly buffers: LayerBuffers;
  /** The step's input rows, copied in (an array of the backend's own, not a view: its kernels read it by address). */
  readonly x: Float32Array;
  /** What the direction reads: the layer's input, or it reversed. */
  readonly read: Float32Array;
  /** Its input reversed within the sequence (backward directions), else null. */
  readonly reversed: Float32Array | null;
  /** The hidden outputs in the order the cell read them. */
  readonly outputs: Float32Array;
  /** Backward directions: the outputs put back in time order. */
  readonly ordered: Float32Array | null;
}

interface Layer {
  readonly input: Float32Array;
  readonly inputWidth: number;
  readonly directions: readonly Direction[];
  readonly output: Float32Array;
}

/** Whole-sequence runs of a batch through a runtime, allocation-free after it is made. */
export class WholeRun {
  /** Longest sequence it runs. */
  readonly maxSteps: number;
  /** Rows of the batch (sequences run side by side). */
  readonly rows: number;
  /** The readout's outputs [maxSteps, rows, outputWidth]; the first `steps` steps after a run, zero past a row's length. */
  readonly outputs: Float32Array;
  /**
   * Each cell's final state slots after a run, [rows, width] each, layer by layer (a layer's forward cell, then its
   * backward one): a row's state after its last step.
   */
  readonly finals: readonly Float32Array[];
  private readonly runtime: LayeredRuntime;
  private readonly embedded: Float32Array;
  /** The rows as given, before they are reversed into `embedded`. */
  private readonly given: Float32Array;
  private readonly layers: readonly Layer[];
  private readonly shape = { steps: 0, rows: 1, width: 0 };

  constructor(runtime: LayeredRuntime, maxSteps: number, allocate: (length: number) => Float32Array, rows = 1) {
    this.runtime = runtime;
    this.maxSteps = maxSteps;
    this.rows = rows;
    this.shape.rows = rows;
    const list = runtime.layerList();
    const finals: Float32Array[] = [];
    let input = allocate(maxSteps * rows * list[0].forward.inputWidth);
    this.embedded = input;
    this.given = allocate(input.length);
    const direction = (cell: RuntimeCell, from: Float32Array, backward: boolean): Direction => {
      const width = cell.inputWidth;
      const reversed = backward ? allocate(maxSteps * rows * width) : null;
      const read = reversed ?? from;
      const buffers = cell.buffers(rows, allocate);
      for (const slot of cell.slotWidths) finals.push(allocate(rows * slot));
      return {
        cell,
        buffers,
        x: allocate(rows * width),
        read,
        reversed,
        outputs: allocate(maxSteps * rows * cell.hidden),
        ordered: backward ? allocate(maxSteps * rows * cell.hidden) : null,
      };
    };
    this.layers = list.map((layer) => {
      const directions: Direction[] = [];
      if (!layer.reverse) directions.push(direction(layer.forward, input, false));
      const back = layer.reverse ? layer.forward : layer.backward;
      if (back !== null) directions.push(direction(back, input, true));
      const made: Layer = {
        input,
        inputWidth: layer.forward.inputWidth,
        directions,
        output: directions.length === 2 ? allocate(maxSteps * rows * layer.width) : (directions[0].ordered ?? directions[0].outputs),
      };
      input = made.output;
      return made;
    });
    this.finals = finals;
    this.outputs = allocate(maxSteps * rows * runtime.outputWidth);
  }

  /**
   * Runs `tokens` (or numbers, `inputWidth` per position) of `steps` steps of every row, time-major, fed in reverse
   * order when `reverse` is true (the rows are embedded first, then reversed); rows end at `lengths` (null: all run
   * `steps`); `where` names the input in messages. Outputs and final states as the fields say.
   */
  run(input: Int32Array | Float32Array | readonly number[], steps: number, reverse: boolean, lengths: Int32Array | null = null, where = 'encode.source'): void {
    const { shape, rows } = this;
    shape.steps = steps;
    if (reverse) {
      this.runtime.embed(input, steps * rows, where, this.given);
      shape.width = this.layers[0].inputWidth;
      reverseRows(this.embedded, this.given, shape, lengths);
    } else {
      this.runtime.embed(input, steps * rows, where, this.embedded);
    }
    let final = 0;
    for (const layer of this.layers) {
      for (const d of layer.directions) {
        const cell = d.cell;
        for (const slot of d.buffers.state) slot.fill(0);
        if (d.reversed !== null) {
          shape.width = layer.inputWidth;
          reverseRows(d.reversed, layer.input, shape, lengths);
        }
        const width = rows * cell.inputWidth;
        const hidden = rows * cell.hidden;
        for (let t = 0; t < steps; t++) {
          for (let j = 0; j < width; j++) d.x[j] = d.read[t * width + j];
          cell.step(d.x, d.buffers, rows, lengths, t);
          d.outputs.set(d.buffers.state[0], t * hidden);
        }
        shape.width = cell.hidden;
        // A row's held state is not an output past its length: zeros there, as training gives.
        if (lengths !== null) zeroBeyond(d.outputs, d.outputs, shape, lengths);
        if (d.ordered !== null) reverseRows(d.ordered, d.outputs, shape, lengths);
        for (const slot of d.buffers.state) this.finals[final++].set(slot);
      }
      if (layer.directions.length === 2) {
        const [ahead, behind] = layer.directions;
        joinFeatures(layer.output, ahead.outputs, behind.ordered as Float32Array, ahead.cell.hidden, behind.cell.hidden);
      }
    }
    const last = this.layers[this.layers.length - 1];
    this.runtime.readout(last.output, steps * rows, this.outputs, lengths, rows);
  }
}
