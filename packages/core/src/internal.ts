/**
 * `@weft/core/internal`: the package's working parts that its index does not offer users: the sibling packages and
 * the tests import them from here. Nothing here is part of the public surface; names may change between releases.
 */
export type { Allocate, PoolCounts } from './pool.js';
export { sharedPool } from './pool.js';
export { MAX_FAILED_SHOWN, NOISE_GROWTH } from './gradient-check.js';
export { requireBackend } from './ops/checks.js';
export type { AttentionShape } from './kernels/attention.js';
export { attentionShape } from './kernels/attention.js';
