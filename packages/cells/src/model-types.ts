/**
 * The options and results of a model built from a description (model.ts), as types.
 */
import type { DType, Random, Tensor } from '@weft/core';
import type { CellMode, RecurrentCell, StateSlot } from './cell.js';
import type { LayerDescription } from './description-types.js';
import type { CellPlans } from './plans/index.js';

/** What a registered cell maker receives. */
export interface CellRequest {
  /** The layer's description, as written (its `cell` word and any options of your own). */
  readonly layer: LayerDescription;
  /** Features per batch row that the cell reads at each step. */
  readonly inputWidth: number;
  /** The layer's `hidden`: the width of the cell's output. */
  readonly hidden: number;
  /** The element type the model is built in. */
  readonly dtype: DType;
  /** The model's seeded generator, for the cell's initial weights. */
  readonly random: Random;
  /** The cell's path, for messages and parameter names (`layers[0].forward`). */
  readonly name: string;
}

/** Makes a cell of your own for one layer (and direction) of a model. */
export type CellMaker = (request: CellRequest) => RecurrentCell;

/** How `buildModel` builds a model from its description. */
export interface BuildOptions {
  /** Seed for the initial parameters. Default 0. */
  readonly seed?: number | string;
  /** Element type of the parameters: `f32` (default) or `f64` (for gradient checks). */
  readonly dtype?: DType;
  /** How built-in cells run. Default `fused`. */
  readonly mode?: CellMode;
  /** Cells of your own made by makers (training only), by the kind named in `layers[i].cell`. */
  readonly cells?: Readonly<Record<string, CellMaker>>;
  /** Cells of your own as plans (plans/plan.ts), by kind: they also run in the runtime and travel in weight files. */
  readonly plans?: CellPlans;
}

/** Token ids in time-major order: tokens[t·batch + b]. */
export interface TokenBatch {
  /** The ids, `steps × batch` of them. */
  readonly tokens: Int32Array;
  /** Time steps (T). */
  readonly steps: number;
  /** Batch rows (B). */
  readonly batch: number;
}

/** How `SequenceModel.run` runs a batch. */
export interface ModelRunOptions {
  /**
   * Each row's length, for ragged batches (outputs beyond it are zero, its state is held); absent: every row runs T
   * steps.
   */
  readonly lengths?: Int32Array | readonly number[] | null;
  /** The model's state slots in `stateSlots()` order; absent means zeros. */
  readonly initialState?: readonly Tensor[];
  /** Training applies dropout between layers, drawing masks from `random`. Default false. */
  readonly training?: boolean;
  /** The generator dropout masks come from when `training` is true. */
  readonly random?: Random;
  /**
   * False: output the last layer's features and leave the readout to the caller (attention reads them first);
   * default true.
   */
  readonly readout?: boolean;
}

/** What a model's run over a batch gives. */
export interface ModelRunResult {
  /** [T, B, readout width] (or the last layer's features when there is no readout). */
  readonly outputs: Tensor;
  /** The final state, in `stateSlots()` order. */
  readonly state: readonly Tensor[];
}

/** One layer's cells. */
export interface ModelLayer {
  /** The cell that reads forward in time; null for a reverse layer. */
  readonly forward: RecurrentCell | null;
  /** The cell that reads backward in time, for a bidirectional or a reverse layer; else null. */
  readonly backward: RecurrentCell | null;
}

export interface ModelStateSlot extends StateSlot {
  /** Path of the slot: `layers[0].forward.h`. */
  readonly path: string;
}
