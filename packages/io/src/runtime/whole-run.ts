/**
 * One sequence run whole through a runtime's layers (reverse and bidirectional layers included) into buffers made
 * once for sequences of up to `maxSteps` steps, so running one allocates nothing: each direction's input row, cell
 * buffers, outputs and final state are made here (a step's row is copied into an array of the backend's own, since
 * a view of its memory made per step would be an allocation, and its kernels find arrays by address). The encoder of a `Decoding` uses it
 * where its layers do not all run forward (a forward-only encoder streams instead). One row (batch 1).
 */
import { joinFeatures, reverseRows } from '@weft/cells/description';
import type { LayerBuffers, RuntimeCell } from '@weft/cells/description';
import type { Runtime } from './runtime.js';

/** One direction of one layer: its cell, buffers, per-step input views and the outputs it writes. */
interface Direction {
  readonly cell: RuntimeCell;
  readonly buffers: LayerBuffers;
  /** The step's input row, copied in (an array of the backend's own, not a view: its kernels read it by address). */
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

/** A whole-sequence run of one row through a runtime, allocation-free after it is made. */
export class WholeRun {
  /** Longest sequence it runs. */
  readonly maxSteps: number;
  /** The readout's outputs [maxSteps, outputWidth]; the first `steps` rows after a run. */
  readonly outputs: Float32Array;
  /** Each cell's final state slots after a run, layer by layer (a layer's forward cell, then its backward one). */
  readonly finals: readonly Float32Array[];
  private readonly runtime: Runtime;
  private readonly embedded: Float32Array;
  /** The rows as given, before they are reversed into `embedded`. */
  private readonly given: Float32Array;
  private readonly layers: readonly Layer[];
  private readonly shape = { steps: 0, rows: 1, width: 0 };

  constructor(runtime: Runtime, maxSteps: number, allocate: (length: number) => Float32Array) {
    this.runtime = runtime;
    this.maxSteps = maxSteps;
    const list = runtime.layerList();
    const finals: Float32Array[] = [];
    let input = allocate(maxSteps * list[0].forward.inputWidth);
    this.embedded = input;
    this.given = allocate(input.length);
    const direction = (cell: RuntimeCell, from: Float32Array, backward: boolean): Direction => {
      const width = cell.inputWidth;
      const reversed = backward ? allocate(maxSteps * width) : null;
      const read = reversed ?? from;
      const buffers = cell.buffers(1, allocate);
      for (const slot of cell.slotWidths) finals.push(allocate(slot));
      return {
        cell,
        buffers,
        x: allocate(width),
        read,
        reversed,
        outputs: allocate(maxSteps * cell.hidden),
        ordered: backward ? allocate(maxSteps * cell.hidden) : null,
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
        output: directions.length === 2 ? allocate(maxSteps * layer.width) : (directions[0].ordered ?? directions[0].outputs),
      };
      input = made.output;
      return made;
    });
    this.finals = finals;
    this.outputs = allocate(maxSteps * runtime.outputWidth);
  }

  /**
   * Runs `tokens` (or numbers, `inputWidth` per step) of `steps` steps, fed in reverse order when `reverse` is true
   * (the rows are embedded first, then reversed); outputs and final states as the fields say.
   */
  run(input: Int32Array | Float32Array | readonly number[], steps: number, reverse: boolean): void {
    const shape = this.shape;
    shape.steps = steps;
    if (reverse) {
      this.runtime.embed(input, steps, 'encode.source', this.given);
      shape.width = this.layers[0].inputWidth;
      reverseRows(this.embedded, this.given, shape, null);
    } else {
      this.runtime.embed(input, steps, 'encode.source', this.embedded);
    }
    let final = 0;
    for (const layer of this.layers) {
      for (const d of layer.directions) {
        const cell = d.cell;
        for (const slot of d.buffers.state) slot.fill(0);
        if (d.reversed !== null) {
          shape.width = layer.inputWidth;
          reverseRows(d.reversed, layer.input, shape, null);
        }
        const width = cell.inputWidth;
        for (let t = 0; t < steps; t++) {
          for (let j = 0; j < width; j++) d.x[j] = d.read[t * width + j];
          cell.step(d.x, d.buffers, 1, null, t);
          d.outputs.set(d.buffers.state[0], t * cell.hidden);
        }
        if (d.ordered !== null) {
          shape.width = cell.hidden;
          reverseRows(d.ordered, d.outputs, shape, null);
        }
        for (const slot of d.buffers.state) this.finals[final++].set(slot);
      }
      if (layer.directions.length === 2) {
        const [ahead, behind] = layer.directions;
        joinFeatures(layer.output, ahead.outputs, behind.ordered as Float32Array, ahead.cell.hidden, behind.cell.hidden);
      }
    }
    const last = this.layers[this.layers.length - 1];
    this.runtime.readout(last.output, steps, this.outputs, null, 1);
  }
}
