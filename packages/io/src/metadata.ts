/**
 * The metadata a weight file carries, checked against its model: what the CLI, the runtime helpers and a user's
 * program read from it must agree with the model they run, or they would print "undefined", pick from classes
 * that do not exist, or divide by a zero deviation. Only the fields weft writes are checked, each when present;
 * every problem is collected. The Node loaders (`@weft/io/node`), `loadModel` and the `weft` command check every file
 * they read; the runtime entries leave it out of their bundles (the runtime reads no metadata), so a program that
 * reads a file's metadata itself calls `checkMetadata` on it.
 *
 *   vocabulary     strings, one per token id of an embedding input (and per output of a next-token model)
 *   classes        strings, one per output of the model
 *   columns        strings, one per input number of a values model
 *   targetColumns  strings among `columns`, one per output of a forecast model
 *   normalisation  { mean, deviation }: finite numbers, one per input number; deviations > 0
 *   horizon        a whole number ≥ 1
 *   task           'forecast' needs a values input and columns, targetColumns, normalisation, horizon;
 *                  'next-token' an embedding input and a vocabulary; 'classification' classes
 */
import { WeftError } from '@weft/core';
import type { Problem } from '@weft/core';
import type { ModelDescription } from '@weft/cells/description';
import { isEncoderDecoder, modelLayout } from '@weft/cells/description';
import type { WeightFile } from './weight-file.js';
import { forecastPanel, seriesMetadata } from './forecast-metadata.js';

function describe(value: unknown): string {
  if (value === undefined) return 'nothing';
  if (Array.isArray(value)) return `an array of ${value.length}`;
  const text = JSON.stringify(value) ?? String(value);
  return text.length > 80 ? `${text.slice(0, 80)}… (${text.length} characters)` : text;
}

const isStrings = (value: unknown): value is string[] => Array.isArray(value) && value.every((v) => typeof v === 'string');
const isNumbers = (value: unknown): value is number[] => Array.isArray(value) && value.every((v) => typeof v === 'number');

/**
 * The problems of a file's metadata against its model (vocabulary length, normalisation widths, class count, field
 * types); empty when it fits.
 */
export function metadataProblems(metadata: Readonly<Record<string, unknown>>, model: ModelDescription): Problem[] {
  if (metadata.panel !== undefined) return panelProblems(metadata, model);
  const problems: Problem[] = [];
  const check: MetadataCheck = {
    metadata,
    input: model.input,
    outputs: modelLayout(model).outputWidth,
    has: (field) => Object.hasOwn(metadata, field) && metadata[field] !== undefined,
    add: (field, expected, received) => {
      problems.push({ code: 'bad_weight_file', path: `metadata.${field}`, expected, received: describe(received) });
    },
    ...readWidthOf(metadata, model.input),
  };
  tokenProblems(check);
  const columns = columnProblems(check);
  targetProblems(check, columns, memberCount(check));
  normalisationProblems(check);
  if (check.has('horizon')) {
    const value = metadata.horizon;
    if (typeof value !== 'number' || !Number.isInteger(value) || value < 1) check.add('horizon', 'a whole number ≥ 1', value);
  }
  taskProblems(check);
  return problems;
}

/** What the checks of one series' metadata share. */
interface MetadataCheck {
  readonly metadata: Readonly<Record<string, unknown>>;
  readonly input: ModelDescription['input'];
  /** The model's output width. */
  readonly outputs: number;
  /** The columns the model reads: its input width less the inputs weft adds (or 1 for a model over tokens). */
  readonly readWidth: number;
  /** How that width is described in an error. */
  readonly widthWords: string;
  readonly has: (field: string) => boolean;
  readonly add: (field: string, expected: string, received: unknown) => void;
}

/** A model of many series: each series' metadata, as one series' (its own fields named under panel.series[i]). */
function panelProblems(metadata: Readonly<Record<string, unknown>>, model: ModelDescription): Problem[] {
  let ids: readonly string[];
  try {
    ids = forecastPanel(metadata)?.ids ?? [];
  } catch (error) {
    if (error instanceof WeftError) return [...error.problems];
    throw error;
  }
  return ids.flatMap((id, i) => {
    const own = seriesMetadata(metadata, id);
    return metadataProblems(own, model).map((p) => ({
      ...p,
      path: p.path.replace(/^metadata\.(normalisation|window|missing|split|season)\b/, `metadata.panel.series[${i}].$1`),
    }));
  });
}

/**
 * The width of the columns a windowed forecast model reads: its input width less one smoothing forecast per target
 * (window.hybrid), a sine and cosine per calendar position (window.calendar), a 0/1 "was missing" input per column
 * with holes (missing.flagged) and, one series of many, a 0/1 input per series (seriesInput).
 */
function readWidthOf(metadata: Readonly<Record<string, unknown>>, input: ModelDescription['input']): { readWidth: number; widthWords: string } {
  const window = metadata.window as { hybrid?: unknown; calendar?: unknown } | undefined;
  const flagged = (metadata.missing as { flagged?: unknown } | undefined)?.flagged;
  const seriesInputs = Number((metadata.seriesInput as { count?: unknown } | undefined)?.count ?? 0) || 0;
  const extra =
    (Array.isArray(window?.hybrid) ? window.hybrid.length : 0) +
    (Array.isArray(window?.calendar) ? 2 * window.calendar.length : 0) +
    (Array.isArray(flagged) ? flagged.length : 0) +
    seriesInputs;
  const readWidth = input.kind === 'values' ? input.width - extra : 1;
  const widthWords =
    extra > 0
      ? `the model's input width less its ${extra} smoothing, calendar, missing-value and series input${extra === 1 ? '' : 's'}`
      : "the model's input width";
  return { readWidth, widthWords };
}

/** The vocabulary's and the class names' lengths against the model. */
function tokenProblems({ metadata, input, outputs, has, add }: MetadataCheck): void {
  if (has('vocabulary')) {
    const vocabulary = metadata.vocabulary;
    if (!isStrings(vocabulary)) add('vocabulary', 'an array of strings', vocabulary);
    else if (input.kind === 'embedding' && vocabulary.length !== input.vocabulary)
      add('vocabulary', `${input.vocabulary} tokens (the embedding's vocabulary)`, vocabulary.length);
    else if (metadata.task === 'next-token' && vocabulary.length !== outputs) add('vocabulary', `${outputs} tokens (the model's outputs)`, vocabulary.length);
  }
  if (has('classes')) {
    const classes = metadata.classes;
    if (!isStrings(classes)) add('classes', 'an array of strings', classes);
    else if (classes.length !== outputs) add('classes', `${outputs} class names (one per output of the model)`, classes.length);
  }
}

/** The column names read, against the read width; the names when they fit, else null. */
function columnProblems({ metadata, input, readWidth, widthWords, has, add }: MetadataCheck): string[] | null {
  if (!has('columns')) return null;
  const value = metadata.columns;
  if (!isStrings(value)) add('columns', 'an array of column names', value);
  else if (input.kind !== 'values') add('columns', 'no columns (the model reads tokens)', value);
  else if (value.length !== readWidth) add('columns', `${readWidth} column names (${widthWords})`, value.length);
  else return value;
  return null;
}

/** Forecast members stacked into one model (metadata.members) output one block of targets each: their count. */
function memberCount({ metadata, outputs, has, add }: MetadataCheck): number {
  if (!has('members')) return 1;
  const value = metadata.members;
  if (typeof value !== 'number' || !Number.isInteger(value) || value < 1 || outputs % value !== 0) {
    add('members', `a whole number ≥ 1 dividing the model's ${outputs} outputs (members stacked into the model)`, value);
    return 1;
  }
  return value;
}

/** The target columns: one per output block (per member and, forecasting every row ahead, per row), among the columns. */
function targetProblems({ metadata, outputs, has, add }: MetadataCheck, columns: string[] | null, members: number): void {
  if (!has('targetColumns')) return;
  const value = metadata.targetColumns;
  // A model forecasting every row up to its horizon (metadata.rowsAhead "all") outputs one block per row ahead.
  const steps =
    metadata.rowsAhead === 'all' && typeof metadata.horizon === 'number' && Number.isInteger(metadata.horizon) && metadata.horizon >= 1 ? metadata.horizon : 1;
  const perTarget = members * steps;
  const words = [members > 1 ? `each of the ${members} members` : '', steps > 1 ? `each of the ${steps} rows ahead` : ''].filter((w) => w !== '').join(' and ');
  if (!isStrings(value)) add('targetColumns', 'an array of column names', value);
  else if (value.length * perTarget !== outputs)
    add(
      'targetColumns',
      perTarget > 1 ? `${outputs / perTarget} column names (one per output of ${words})` : `${outputs} column names (one per output of the model)`,
      value.length,
    );
  else if (columns !== null) {
    const stray = value.find((c) => !columns.includes(c));
    if (stray !== undefined) add('targetColumns', 'names among metadata.columns', stray);
  }
}

/** The normalisation's means and deviations: one finite number per column read, the deviations positive. */
function normalisationProblems({ metadata, readWidth: width, widthWords, has, add }: MetadataCheck): void {
  if (!has('normalisation')) return;
  const value = metadata.normalisation as { mean?: unknown; deviation?: unknown } | null;
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    add('normalisation', '{ "mean": [...], "deviation": [...] }', value);
    return;
  }
  for (const field of ['mean', 'deviation'] as const) {
    const numbers = value[field];
    if (!isNumbers(numbers)) add(`normalisation.${field}`, `${width} numbers`, numbers);
    else if (numbers.length !== width) add(`normalisation.${field}`, `${width} numbers (${widthWords})`, numbers.length);
    else {
      const bad = numbers.findIndex((v) => !Number.isFinite(v) || (field === 'deviation' && !(v > 0)));
      if (bad >= 0) add(`normalisation.${field}[${bad}]`, field === 'deviation' ? 'a finite number > 0' : 'a finite number', numbers[bad]);
    }
  }
}

/** What weft's own tasks need to be run (the CLI reads these), and a task that fits the model's input. */
function taskProblems({ metadata, input, has, add }: MetadataCheck): void {
  const needs: Record<string, readonly string[]> = {
    forecast: ['columns', 'targetColumns', 'normalisation', 'horizon'],
    'next-token': ['vocabulary'],
    classification: ['classes'],
  };
  const task = typeof metadata.task === 'string' ? metadata.task : '';
  for (const field of Object.hasOwn(needs, task) ? needs[task] : []) {
    if (!has(field)) add(field, `a ${field} entry (a ${task} model needs it)`, undefined);
  }
  if (metadata.task === 'forecast' && input.kind !== 'values') add('task', 'a task for a model over tokens (a forecast reads numbers)', metadata.task);
  if (metadata.task === 'next-token' && input.kind !== 'embedding') add('task', 'a task for a model over numbers (next-token reads tokens)', metadata.task);
}

/** Throws one WeftError listing every way `file`'s metadata disagrees with its model (sequence models only). */
export function checkMetadata(file: WeightFile): WeightFile {
  if (isEncoderDecoder(file.model)) return file;
  const problems = metadataProblems(file.metadata, file.model);
  if (problems.length > 0) throw new WeftError(problems);
  return file;
}
