/**
 * `@weft/optim/node`: training on worker threads in Node (`startTrainingThreads`; give the result to a Trainer as
 * `workers`). Node-only, so an entry of its own: `@weft/optim` itself stays browser-safe.
 */
export { startTrainingThreads } from './threads.js';
export type { TrainingThreadOptions } from './threads.js';
