/**
 * `@weft/optim/internal`: the package's working parts that its index does not offer users: the sibling packages and
 * the tests import them from here. Nothing here is part of the public surface; names may change between releases.
 */
export type { ComputeHere, PlainBatch, ShardJob, ShardOutcome } from './training/shards.js';
export { batchOf, computeJob, lossWeight, shardGradients, shardOf, shardRanges, shardSeed } from './training/shards.js';
export type { ShardEndpoint, ShardThread } from './training/thread-group.js';
export { canShareMemory, serveShards } from './training/thread-group.js';
export type { OutputRows, SourceRunOptions } from './training/evaluation.js';
export { figuresOn, forEachOutputBatch } from './training/evaluation.js';
