/**
 * Checkpoints: a weight file (weights stored f32, so exact for f32 models) carrying the trainer's state in its
 * `training` field: optimiser state, generator state, schedule position (the step), data cursor, carried stream
 * state and the early-stopping record. A checkpoint is also a valid weight file for the runtime. Resuming from
 * one continues bit for bit as if training had not stopped.
 */
import { WeftError, fail, isRecord } from '@weft/core';
import type { Problem, TrainingState } from '@weft/core';
import type { SavedModel } from './model-file.js';
import { modelTensors } from './model-file.js';
import type { ReadOptions, WeightFile, WeightMetadata } from './weight-file.js';
import { readWeightFile, respellVersionOneName, writeWeightFile } from './weight-file.js';

/** What a checkpoint is written from: anything that gives its training state (a `Trainer`). */
export interface TrainingStateSource {
  /** The whole training state now, as plain data. */
  snapshot(): TrainingState;
}

/** A checkpoint's text: the model's weights (f32) with the trainer's snapshot in the `training` field. */
export async function writeCheckpoint(trainer: TrainingStateSource, model: SavedModel, metadata: WeightMetadata = {}): Promise<string> {
  // The weights travel as the file's tensors; the rest of the snapshot is the training state.
  const training: Record<string, unknown> = { ...trainer.snapshot() };
  delete training.parameters;
  return writeWeightFile(model.description, modelTensors(model), { dtype: 'f32', metadata, training });
}

/** A checkpoint after reading. */
export interface Checkpoint {
  /** The weight file it is (the runtime can run it). */
  readonly file: WeightFile;
  /** The trainer's state, with the parameters taken from the file's tensors; `Trainer.restore` takes it. */
  readonly snapshot: TrainingState;
}

/** Reads and checks a checkpoint: the weight file, then every field of its training state, all problems at once. */
export async function readCheckpoint(text: string, options: ReadOptions = {}): Promise<Checkpoint> {
  const file = await readWeightFile(text, options);
  const training = file.training;
  const problems: Problem[] = [];
  const add = (path: string, expected: string, received: unknown): void => {
    problems.push({
      code: 'bad_weight_file',
      path: `training.${path}`,
      expected,
      received: typeof received === 'object' ? (JSON.stringify(received)?.slice(0, 60) ?? 'null') : String(received),
    });
  };
  if (!isRecord(training))
    fail(
      'bad_weight_file',
      'training',
      'the training state of a checkpoint',
      training === undefined ? 'none (a weight file, not a checkpoint)' : typeof training,
    );
  const whole = (v: unknown) => typeof v === 'number' && Number.isInteger(v) && v >= 0;
  if (!whole(training.step)) add('step', 'a whole number ≥ 0', training.step);
  if (!isRecord(training.cursor) || !whole(training.cursor.epoch) || !whole(training.cursor.index))
    add('cursor', '{ epoch, index } whole numbers', training.cursor);
  if (!isRecord(training.optimizer) || typeof training.optimizer.kind !== 'string' || !isRecord(training.optimizer.slots))
    add('optimizer', 'an optimiser state { kind, steps, slots }', training.optimizer);
  if (!isRecord(training.random)) add('random', 'a generator state', training.random);
  if (
    training.carried !== null &&
    !(Array.isArray(training.carried) && training.carried.every((row) => Array.isArray(row) && row.every((v) => typeof v === 'number')))
  ) {
    add('carried', 'null or arrays of numbers', training.carried);
  }
  if (!isRecord(training.best)) add('best', 'the early-stopping record', training.best);
  if (problems.length > 0) throw new WeftError(problems);
  // Names are data: a null-prototype object, so no tensor name (not even __proto__) reaches a prototype.
  const parameters = Object.create(null) as Record<string, number[]>;
  for (const t of file.tensors) parameters[t.name] = Array.from(t.values);
  const snapshot = { ...(training as unknown as Omit<TrainingState, 'parameters'>), parameters } as TrainingState;
  const best = snapshot.best as { parameters: Record<string, number[]> | null };
  if (file.version === 1 && isRecord(best.parameters)) {
    // A version-1 checkpoint keeps the best weights under the old spelling of their names, as its tensors did.
    const respelled = Object.create(null) as Record<string, number[]>;
    for (const [name, values] of Object.entries(best.parameters)) respelled[respellVersionOneName(name)] = values;
    best.parameters = respelled;
  }
  // JSON has no Infinity: an early-stopping record with no validation yet was written as null.
  if ((snapshot.best as { loss: number | null }).loss === null) (snapshot.best as { loss: number }).loss = Infinity;
  return { file, snapshot };
}
