/**
 * `@weft/cells/internal`: the package's working parts that its index does not offer users: the sibling packages and
 * the tests import them from here. Nothing here is part of the public surface; names may change between releases.
 */
export { hasFusedSequence } from './cell.js';
export { allActive, copyLastSteps, holdInactiveRows, isActive, timeStep } from './sequence-ops.js';
export { hiddenProblem } from './description.js';
export type { StepTensors } from './plan-cell.js';
export { initialisePlanParameters, stepTensors } from './plan-cell.js';
export { cellLayout, layerDirections } from './layout.js';
export { decoderStart, reverseTokens } from './encoder-decoder.js';
export { stackMembers, stackedDescription } from './ensemble.js';
export { cutForSequence } from './plan-cell.js';
export type { SequenceCut } from './plan-cell.js';
