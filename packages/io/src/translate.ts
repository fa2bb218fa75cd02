/**
 * What training recorded in a weight file's metadata, applied: raw named values in, model inputs out (normalised
 * as training normalised them), and model outputs back to named values in real units; text in, token ids out
 * (split as training split it, unknown pieces counted, not hidden), and ids back to text. So a program that
 * embeds the runtime does not re-implement normalisation or vocabulary lookup, and cannot de-normalise a target
 * with another column's statistics.
 *
 * The metadata fields read (written by `weft train`; see metadata.ts): `columns`, `targetColumns`,
 * `normalisation` { mean, deviation } and `targetTransform` { kind, mean, deviation } for values models; `vocabulary` and `tokens` ('characters' | 'words') for
 * token models; `classes` for classifiers; `missing` (missing.ts) for a model that takes missing readings: a stream
 * model's missing reading (a marker, or NaN) carries the column's last value, and a 0/1 flag follows the columns for
 * each column that had holes in training. Call `checkMetadata` first on a file you did not make.
 */
import { WeftError, fail } from '@weft/core';
import { missingTest } from './data/missing.js';
import type { MissingRecord } from './data/missing.js';
import { forecastMissing } from './forecast-metadata.js';

/** The token of ids a vocabulary has no other id for (the first entry of every vocabulary weft makes). */
export const UNKNOWN_TOKEN = '<unknown>';

/**
 * Turns named raw values and text into a model's inputs, and its outputs back into named values in real units, from a
 * weight file's metadata.
 */
export interface Translator {
  /** The named input columns a values model reads, in order (empty for token models). */
  readonly inputNames: readonly string[];
  /** The names of the outputs: target columns (forecasts), classes (classifiers) or the vocabulary (next token). */
  readonly outputNames: readonly string[];
  /** How the model takes missing readings (metadata `missing`), or null when it takes none. */
  readonly missing: MissingRecord | null;
  /**
   * A row of raw values by column name → the model's input numbers (normalised; a stream model's missing readings
   * carried and flagged), written into `into` if given.
   */
  inputs(row: Readonly<Record<string, number | string>>, into?: Float32Array, where?: string): Float32Array;
  /**
   * Model outputs of one step (normalised targets) → the targets by name, in real units. A model trained on a
   * target transform (differences, log returns) forecasts a change; its level is the change applied to the
   * target's value in `from` (the row the forecast is made at), by default the last row given to `inputs`.
   */
  outputs(values: ArrayLike<number>, from?: Readonly<Record<string, number | string>>): Record<string, number>;
  /**
   * As `outputs`, the targets written into `into` in the order of `outputNames` (values models), allocating
   * nothing: with `inputs(row, into)` and a runtime stream, a reading goes in and out without making an array.
   */
  outputsInto(values: ArrayLike<number>, into: { [index: number]: number; readonly length: number }, from?: Readonly<Record<string, number | string>>): void;
  /**
   * As `inputs`, the row given as numbers in the order of `inputNames` (NaN a missing reading, for a model that takes
   * them), allocating nothing (a row of named numbers costs the engine a box per number it reads).
   */
  inputsFromNumbers(values: ArrayLike<number>, into: Float32Array): Float32Array;
  /** One piece (a character or word, as the model was trained) → its token id, the unknown token's for a piece not in the vocabulary; allocates nothing. */
  tokenId(piece: string): number;
  /** Text → token ids (as training split text); `unknown` counts the pieces not in the vocabulary. */
  tokenIds(text: string): {
    /** The token id of each piece (the unknown token's id for a piece not in the vocabulary). */
    readonly ids: Int32Array;
    /** The pieces the text was split into (characters or words, as the model was trained). */
    readonly pieces: readonly string[];
    /** How many pieces are not in the vocabulary. */
    readonly unknown: number;
  };
  /** A token id → its text. */
  tokenText(id: number): string;
}

interface Normalisation {
  readonly mean: readonly number[];
  readonly deviation: readonly number[];
}

interface TargetTransform extends Normalisation {
  readonly kind: 'differences' | 'log-returns';
}

const strings = (value: unknown): readonly string[] => (Array.isArray(value) && value.every((v) => typeof v === 'string') ? value : []);

function bad(path: string, expected: string, received: string): WeftError {
  return new WeftError({ code: 'bad_data', path, expected, received });
}

/** Splits text into tokens as `weft train` does: characters (code points) or whitespace-separated words. */
export function splitTokens(text: string, mode: 'characters' | 'words'): string[] {
  return mode === 'characters' ? [...text] : (text.match(/\S+/g) ?? []);
}

/** A translator for the model a weight file's metadata describes. */
export function createTranslator(metadata: Readonly<Record<string, unknown>>): Translator {
  return new MetadataTranslator(metadata);
}

/** The translator of one weight file's metadata: its columns, targets, vocabulary and scalings, read once. */
class MetadataTranslator implements Translator {
  readonly inputNames: readonly string[];
  readonly outputNames: readonly string[];
  readonly missing: MissingRecord | null;
  private readonly targets: readonly string[];
  private readonly vocabulary: readonly string[];
  private readonly mode: 'characters' | 'words';
  private readonly normalisation: Normalisation;
  private readonly targetIndexes: readonly number[];
  private readonly index: Map<string, number>;
  private readonly unknownId: number;
  private readonly transform: TargetTransform | undefined;
  /** The targets' raw values in the last row given to inputs(), for undoing a transform. */
  private readonly lastLevels: Float64Array;
  private readonly isMissing: ((text: string) => boolean) | null;
  /** Missing readings: the columns whose "was missing" flags follow the columns. */
  private readonly flagged: readonly number[];
  /** Missing readings: each column's last value (its fallback before any). */
  private readonly carried: Float64Array;
  private readonly width: number;
  /** Per column, its place among the targets (−1 for none), found once. */
  private readonly targetOf: readonly number[];

  constructor(metadata: Readonly<Record<string, unknown>>) {
    const columns = strings(metadata.columns);
    const targets = strings(metadata.targetColumns);
    const vocabulary = strings(metadata.vocabulary);
    const classes = strings(metadata.classes);
    this.inputNames = columns;
    this.targets = targets;
    this.vocabulary = vocabulary;
    this.mode = metadata.tokens === 'words' ? 'words' : 'characters';
    this.normalisation = (metadata.normalisation ?? { mean: [], deviation: [] }) as Normalisation;
    this.targetIndexes = targets.map((t) => columns.indexOf(t));
    this.index = new Map(vocabulary.map((v, i) => [v, i]));
    this.unknownId = this.index.get(UNKNOWN_TOKEN) ?? 0;
    this.outputNames = targets.length > 0 ? targets : classes.length > 0 ? classes : vocabulary;
    this.transform = metadata.targetTransform as TargetTransform | undefined;
    this.lastLevels = new Float64Array(targets.length).fill(Number.NaN);
    this.missing = metadata.missing === undefined ? null : forecastMissing(metadata, columns.length);
    this.isMissing = this.missing === null ? null : missingTest(this.missing.markers);
    this.flagged = this.missing === null || metadata.window !== undefined ? [] : this.missing.flagged;
    this.carried = Float64Array.from(this.missing?.fallback ?? []);
    this.width = columns.length + this.flagged.length;
    this.targetOf = columns.map((name) => targets.indexOf(name));
  }

  inputs(row: Readonly<Record<string, number | string>>, into?: Float32Array, where = 'row'): Float32Array {
    const { inputNames: columns, isMissing, flagged } = this;
    const out = into ?? new Float32Array(this.width);
    if (out.length !== this.width) fail('shape_mismatch', `${where} (into)`, `${this.width} numbers`, String(out.length));
    for (let j = 0; j < columns.length; j++) {
      const name = columns[j];
      if (!Object.hasOwn(row, name)) throw bad(`${where}.${name}`, `a value for column ${JSON.stringify(name)}, which the model reads`, 'nothing');
      const raw = row[name];
      let value = typeof raw === 'number' ? raw : raw.trim() === '' ? Number.NaN : Number(raw);
      if (isMissing !== null && (typeof raw === 'number' ? Number.isNaN(raw) : isMissing(raw))) value = this.carried[j];
      else if (!Number.isFinite(value))
        throw bad(`${where}.${name}`, isMissing === null ? 'a finite number' : 'a finite number or a missing-reading marker', JSON.stringify(raw));
      else if (this.missing !== null) this.carried[j] = value;
      out[j] = this.scaled(value, j);
    }
    for (let i = 0; i < flagged.length; i++) {
      const raw = row[columns[flagged[i]]];
      out[columns.length + i] = (typeof raw === 'number' ? Number.isNaN(raw) : isMissing!(raw)) ? 1 : 0;
    }
    return out;
  }

  outputs(values: ArrayLike<number>, from?: Readonly<Record<string, number | string>>): Record<string, number> {
    const named: Record<string, number> = {};
    for (let k = 0; k < this.targets.length; k++) named[this.targets[k]] = this.target(values, k, from);
    return named;
  }

  outputsInto(values: ArrayLike<number>, into: { [index: number]: number; readonly length: number }, from?: Readonly<Record<string, number | string>>): void {
    const { targets, targetIndexes, normalisation } = this;
    if (into.length < targets.length) fail('shape_mismatch', 'outputsInto.into', `room for ${targets.length} targets`, String(into.length));
    for (let k = 0; k < targets.length; k++) {
      const j = targetIndexes[k];
      into[k] = this.transform === undefined ? values[k] * (normalisation.deviation[j] ?? 1) + (normalisation.mean[j] ?? 0) : this.target(values, k, from);
    }
  }

  inputsFromNumbers(values: ArrayLike<number>, into: Float32Array): Float32Array {
    const { inputNames: columns, isMissing, flagged } = this;
    if (values.length !== columns.length)
      fail('shape_mismatch', 'inputsFromNumbers.values', `${columns.length} numbers (${columns.join(', ')})`, String(values.length));
    if (into.length !== this.width) fail('shape_mismatch', 'inputsFromNumbers.into', `${this.width} numbers`, String(into.length));
    for (let j = 0; j < columns.length; j++) {
      let value = values[j];
      if (Number.isNaN(value) && isMissing !== null) value = this.carried[j];
      else if (!Number.isFinite(value))
        throw bad(`values[${j}] (${columns[j]})`, isMissing === null ? 'a finite number' : 'a finite number, or NaN for a missing reading', String(value));
      else if (this.missing !== null) this.carried[j] = value;
      into[j] = this.scaled(value, j);
    }
    for (let i = 0; i < flagged.length; i++) into[columns.length + i] = Number.isNaN(values[flagged[i]]) ? 1 : 0;
    return into;
  }

  tokenId(piece: string): number {
    return this.index.get(piece) ?? this.unknownId;
  }

  tokenIds(text: string): { ids: Int32Array; pieces: string[]; unknown: number } {
    const pieces = splitTokens(text, this.mode);
    let unknown = 0;
    const ids = Int32Array.from(pieces, (p) => {
      const id = this.index.get(p);
      if (id === undefined) {
        unknown++;
        return this.unknownId;
      }
      return id;
    });
    return { ids, pieces, unknown };
  }

  tokenText(id: number): string {
    const vocabulary = this.vocabulary;
    if (!(Number.isInteger(id) && id >= 0 && id < vocabulary.length)) throw bad('tokenText.id', `a token id in [0, ${vocabulary.length})`, String(id));
    return vocabulary[id];
  }

  /** Column j's reading as the model reads it (normalised), noted as its target's last level when it is one. */
  private scaled(value: number, j: number): number {
    if (this.targetOf[j] >= 0) this.lastLevels[this.targetOf[j]] = value;
    return (value - (this.normalisation.mean[j] ?? 0)) / (this.normalisation.deviation[j] ?? 1);
  }

  /** Target k in real units from the model's output (loops and no closures: nothing is made per reading). */
  private target(values: ArrayLike<number>, k: number, from: Readonly<Record<string, number | string>> | undefined): number {
    const j = this.targetIndexes[k];
    const transform = this.transform;
    if (transform === undefined) return values[k] * (this.normalisation.deviation[j] ?? 1) + (this.normalisation.mean[j] ?? 0);
    const name = this.targets[k];
    const level = from === undefined ? this.lastLevels[k] : Number(from[name]);
    if (!Number.isFinite(level))
      throw bad(
        `outputs.from.${name}`,
        `the value of ${JSON.stringify(name)} now (the model forecasts its change)`,
        from === undefined ? 'no row given to inputs() yet' : JSON.stringify(from[name]),
      );
    const change = values[k] * (transform.deviation[k] ?? 1) + (transform.mean[k] ?? 0);
    return transform.kind === 'log-returns' ? level * Math.exp(change) : level + change;
  }
}
