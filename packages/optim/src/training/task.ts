/**
 * The task's loss and the positions it is taken over, by the kind of target: softmax cross-entropy against classes
 * or mean squared error against values, at every step (per-step targets, padding weighted 0) or at each row's last
 * valid step (one target per sequence). Training and evaluation both read their outputs through `taskRows`.
 */
import { crossEntropyAtTargets, fail, meanSquaredError, reshape } from '@weft/core';
import type { Tape, Tensor } from '@weft/core';
import { lastSteps } from '@weft/cells';
import type { Batch } from '../data.js';

/** The rows the loss is taken over: every step for per-step targets, each row's last valid step otherwise. */
export function taskRows(tape: Tape, outputs: Tensor, batch: Batch): { rows: number; outputs: Tensor; weights: Float64Array | null } {
  const width = outputs.shape[2];
  const targets = batch.targets;
  if (targets.perStep) {
    const rows = batch.steps * batch.batch;
    let weights = targets.weights;
    if (weights === null && batch.lengths !== null) {
      const lengths = batch.lengths;
      weights = Float64Array.from({ length: rows }, (_, i) => (Math.floor(i / batch.batch) < lengths[i % batch.batch] ? 1 : 0));
    }
    return { rows, outputs: reshape(tape, outputs, [rows, width]), weights };
  }
  return { rows: batch.batch, outputs: lastSteps(tape, outputs, batch.lengths), weights: targets.weights };
}

/** The batch's loss, recorded on `tape`. */
export function taskLoss(tape: Tape, outputs: Tensor, batch: Batch): Tensor {
  const { rows, outputs: picked, weights } = taskRows(tape, outputs, batch);
  const targets = batch.targets;
  if (targets.kind === 'classes') {
    if (targets.classes.length !== rows) {
      fail('shape_mismatch', 'trainer.batch.targets', `${rows} classes`, `${targets.classes.length}`);
    }
    return crossEntropyAtTargets(tape, picked, targets.classes, weights === null ? {} : { weights });
  }
  if (picked.shape[1] !== targets.width) {
    fail('shape_mismatch', 'trainer.model.outputs', `${targets.width} values per step (the target width)`, `${picked.shape[1]}`);
  }
  return meanSquaredError(tape, picked, targets.values, weights === null ? {} : { weights });
}
