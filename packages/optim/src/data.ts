/**
 * Training data in the shapes the trainer consumes, as batches in weft's time-major layout. Every source is
 * deterministic: batch `index` of epoch `epoch` is a pure function of the source, its seed and those two
 * numbers, so a data cursor { epoch, index } is all a checkpoint needs to resume exactly.
 *
 * - `streamBatches`: one long stream, or a corpus cut into B parallel streams (stream b is the b-th contiguous
 *   slice), read in windows of T steps; consecutive windows continue each stream, so the model's state carries
 *   across them (detached: truncated backpropagation through time, Williams & Peng 1990, with k1 = T new steps per
 *   update). With `lookback` L > 0 each window also re-reads the L steps before it, without loss on them, so the
 *   reverse sweep reaches k2 = T + L steps back (their algorithm BPTT(k2; k1) with k2 > k1); the state carried on
 *   is then the one L steps before the window's end. The tail that does not fill a whole window is left out.
 * - `sequenceBatches`: independent sequences of different lengths, sorted by length and cut into batches of
 *   similar lengths (so little padding), padded and masked; the batch order is shuffled each epoch by the seeded
 *   generator, and the state starts afresh for each batch.
 *
 * This file holds the batch shapes every source shares; the sources are in
 * data/streams.ts and data/sequences.ts, the buffer recycling in data/buffers.ts.
 */
export type { Batch, BatchTargets, DataSource } from './data/batch-types.js';
export type { StreamOptions, TokenStreamOptions, ValueStreamOptions, WholeStreamOptions } from './data/streams.js';
export { streamBatches, wholeStream } from './data/streams.js';
export type { LabelledSequence, SequenceSetOptions } from './data/sequences.js';
export { sequenceBatches } from './data/sequences.js';
export type { PairSetOptions, TokenPair } from './data/pairs.js';
export { pairBatches } from './data/pairs.js';
