/** The batch shapes every data source shares (data.ts says how the sources make them), as types. */
import type { Tensor } from '@weft/core';
import type { TokenBatch } from '@weft/cells';

/** What the model must predict for a batch. */
export type BatchTargets =
  /** A class per step ([T·B], time-major) or per sequence ([B]); weights (1 real, 0 padding) per target. */
  | {
      /** Class targets (cross-entropy loss). */
      readonly kind: 'classes';
      /** True for a target at every step, false for one per sequence (read at its last valid step). */
      readonly perStep: boolean;
      /** The target class ids. */
      readonly classes: Int32Array;
      /** A weight per target (0 for padding); null when every target counts once. */
      readonly weights: Float64Array | null;
    }
  /** Values per step ([T·B, width]) or per sequence ([B, width]); weights per row or per value. */
  | {
      /** Value targets (mean squared error). */
      readonly kind: 'values';
      /** True for targets at every step, false for one row per sequence. */
      readonly perStep: boolean;
      /** Values per target row. */
      readonly width: number;
      /** The target values, one row per target. */
      readonly values: Tensor;
      /**
       * A weight per target row (0 for padding), or per target value (rows × width; 0 for a value never observed);
       * null when every row counts once.
       */
      readonly weights: Float64Array | null;
    };

/** One batch, as a data source hands it to the trainer. */
export interface Batch {
  /** The inputs: numbers [T, B, features], or token ids (time-major). */
  readonly input: Tensor | TokenBatch;
  /** Time steps T. */
  readonly steps: number;
  /** Batch rows B. */
  readonly batch: number;
  /** Each row's length for a padded batch of sequences; null when every row runs T steps. */
  readonly lengths: Int32Array | null;
  /** What the model must predict. */
  readonly targets: BatchTargets;
  /** Real (unpadded) positions, for tokens per second. */
  readonly positions: number;
  /**
   * For streams with a lookback: after how many leading steps the state to carry into the next batch is taken
   * (absent: after the last step).
   */
  readonly carryAfter?: number;
  /**
   * The sources of a batch of pairs (an encoder-decoder's; see pairBatches): token ids, time-major, and each row's
   * length. `input` is then the decoder's input.
   */
  readonly source?: {
    /** The source token ids [S, B], padded. */
    readonly tokens: TokenBatch;
    /** Each row's source length. */
    readonly lengths: Int32Array;
  };
}

/**
 * Where a trainer gets its batches: a fixed number per epoch, each addressed by epoch and index so a resumed run gets
 * the same batches.
 */
export interface DataSource {
  /** Batches in one epoch. */
  readonly batchesPerEpoch: number;
  /** True when the state after one batch is the starting state of the next (streams). */
  readonly carriesState: boolean;
  /**
   * One batch. The sources made here recycle: a batch's tensors are valid until the same source's next `batch()`
   * call, which gives their buffers back to their pool for the new batch (see data/buffers.ts).
   */
  batch(epoch: number, index: number): Batch;
}
