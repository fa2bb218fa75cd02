/**
 * What a row forecaster (forecaster.ts) is to its caller, and how it reads a row's cells: numbers as they are, text
 * parsed, and, for a model that takes missing readings, a missing-reading marker (missing.ts) or NaN as a missing
 * reading; anything else is a one-line error naming the row and the column.
 */
import { fail } from '@weft/core';
import { missingTest } from './data/missing.js';
import type { ForecastIntervals } from './data/series-types.js';

/** A row's values by column name: numbers, text as read from a file, or (for the time column) a Date. */
export type ForecastRow = Readonly<Record<string, number | string | Date>>;

/** Forecasts row by row. */
export interface RowForecaster {
  /** The columns of numbers it reads, in order. */
  readonly inputNames: readonly string[];
  /** Every column a row must have: the input columns and, for calendar inputs, the time column last. */
  readonly readNames: readonly string[];
  /** The targets it forecasts. */
  readonly outputNames: readonly string[];
  /**
   * The rows ahead each forecast block is for, nearest first: `[horizon]` for a model of one row ahead, `[1, …, H]`
   * for a model forecasting every row up to its horizon at once.
   */
  readonly rowsAhead: readonly number[];
  /** Models trained from different seeds whose median is the forecast (1 for a single model). */
  readonly members: number;
  /**
   * Prediction intervals (metadata `intervals`): forecast ± halfWidth[s × targets + k], Infinity where the
   * validation part was too short for the level; null when the model has none.
   */
  readonly intervals: ForecastIntervals | null;
  /** Rows it needs before its first forecast (1 for a stream, the window's rows for a windowed model). */
  readonly warmUp: number;
  /** True when rows may have missing readings (the model records how to fill them); else every cell must hold a number. */
  readonly takesMissing: boolean;
  /**
   * Takes the next row (raw values by column name; `where` names it in errors) and returns the forecast made at it
   * of the farthest row ahead, by target name in real units, or null while fewer than `warmUp` rows have been given.
   */
  next(row: ForecastRow, where?: string): Record<string, number> | null;
  /**
   * As `next`, writing every forecast into `out` (`out[s × targets + k]`: target k, `rowsAhead[s]` rows ahead) and
   * returning false while warming up.
   */
  nextInto(row: ForecastRow, out: { [index: number]: number; readonly length: number }, where?: string): boolean;
  /**
   * As `nextInto`, the row given as numbers in the order of `readNames`: the input columns and, for a model reading
   * calendar positions, the row's time last, in milliseconds since 1970-01-01 UTC. It allocates nothing: the way to
   * stream a forecaster in a hot loop. NaN is a missing reading, for a model that takes them (`takesMissing`).
   */
  nextValuesInto(values: ArrayLike<number>, out: { [index: number]: number; readonly length: number }): boolean;
  /** Forgets every row given so far. */
  reset(): void;
}

const STANDARD_MISSING = missingTest();

/** The number in a row's cell: a number as it is, text parsed (NaN when it holds no number or is missing). */
function cellNumber(raw: number | string | Date | undefined): number {
  if (typeof raw === 'number') return raw;
  if (raw === undefined || raw instanceof Date) return NaN;
  return raw.trim() === '' ? NaN : Number(raw);
}

/**
 * The reading of column `name` in a row: a finite number, or NaN for a missing reading where `isMissing` is given
 * (a marker, or NaN); anything else is an error naming the row and column.
 */
export function valueAt(row: ForecastRow, name: string, where: string, isMissing: ((text: string) => boolean) | null): number {
  const raw = Object.hasOwn(row, name) ? row[name] : undefined;
  if (isMissing !== null && ((typeof raw === 'string' && isMissing(raw)) || (typeof raw === 'number' && Number.isNaN(raw)))) return NaN;
  const value = cellNumber(raw);
  if (!Number.isFinite(value)) {
    const marker = (typeof raw === 'string' && STANDARD_MISSING(raw)) || (typeof raw === 'number' && Number.isNaN(raw));
    const expected =
      isMissing !== null
        ? 'a finite number or a missing-reading marker'
        : marker
          ? 'a finite number (this model records no rule for missing readings: retrain it with this version)'
          : 'a finite number';
    fail(
      'bad_data',
      `${where}.${name}`,
      raw === undefined ? `a value for column ${JSON.stringify(name)}, which the model reads` : expected,
      raw === undefined ? 'nothing' : raw instanceof Date ? 'a Date' : JSON.stringify(raw),
    );
  }
  return value;
}
