/** @weft/cells: recurrent cells (plain, LSTM, GRU, your own), sequence layers and the model description. */
export type { CellMode, CellStep, FusedSequence, NamedParameter, RecurrentCell, SequenceResult, StateSlot } from './cell.js';
export { hasFusedSequence } from './cell.js';
export type { LstmOptions } from './lstm.js';
export { LstmCell } from './lstm.js';
export type { GruOptions } from './gru.js';
export { GruCell } from './gru.js';
export type { PlainActivation, PlainOptions } from './plain.js';
export { PlainCell } from './plain.js';
export { fillIdentity, fillOrthogonal, fillUniform, glorotBound, orthogonalMatrix } from './init.js';
export { allActive, holdInactiveRows, isActive, lastSteps, reverseWithinLengths, stackSteps, timeStep, zeroBeyondLengths } from './sequence-ops.js';
export type { SequenceOptions } from './layer.js';
export { checkLengths, runBidirectional, runSequence } from './layer.js';
export type { BuiltInCellKind, EmbeddingInput, LayerDescription, ModelDescription, ReadoutDescription, ValuesInput } from './description.js';
export { checkDescription, describeProblems } from './description.js';
export type { BuildOptions, CellMaker, CellRequest, ModelLayer, ModelRunOptions, ModelRunResult, ModelStateSlot, TokenBatch } from './model.js';
export { SequenceModel, buildModel } from './model.js';
export * as stepKernels from './kernels/index.js';
