/** What reading and preparing a pairs file gives (pairs.ts), as types. */
import type { EncoderDecoderModel } from '@weft/cells';
import type { DataSource } from '@weft/optim';
import type { WeightMetadata } from '@weft/io';
import type { HeldOutReport } from './datasets.js';

/** How a pairs file is read. */
export interface PairsReadOptions {
  readonly sourceColumn: string;
  readonly targetColumn: string;
  readonly tokens: 'characters' | 'words';
  /** Longest target, in tokens (the decoder writes at most this many, then the end token). */
  readonly maxTarget: number;
}

/** The pairs of a file, as token texts, with the line each came from. */
export interface TextPairs {
  readonly sources: string[][];
  readonly targets: string[][];
  readonly lines: number[];
}

/** What `weft train --task pairs` trains on. */
export interface PairsPrepared {
  readonly task: 'pairs';
  readonly train: DataSource;
  readonly validation: DataSource;
  readonly metadata: WeightMetadata;
  readonly notes: readonly string[];
  readonly sourceVocabulary: readonly string[];
  readonly targetVocabulary: readonly string[];
  /** Which pairs are held out: their indices among the file's rows (0 = the first row after the header). */
  readonly heldOutRows: readonly number[];
  /** The model (greedy decoding) and the copy baseline on the held-out pairs. */
  readonly heldOut: (model: EncoderDecoderModel) => HeldOutReport;
}

/** How pairs are prepared for training. */
export interface PairsPrepareOptions extends PairsReadOptions {
  readonly validationShare: number;
  readonly testShare: number;
  readonly batch: number;
  readonly seed: string;
}

/** What a transduction model's metadata says, checked enough to use. */
export interface TransductionMeta {
  readonly tokens: 'characters' | 'words';
  readonly sourceVocabulary: readonly string[];
  readonly targetVocabulary: readonly string[];
  readonly maxTarget: number;
  readonly sourceColumn: string;
  readonly targetColumn: string;
}
