/**
 * What a forecast model's metadata says about how to run it, read and checked (each problem a one-line error naming
 * the field): the window of a model trained on sliding windows, the rows ahead of its outputs, and its prediction
 * intervals. createRowForecaster applies them.
 */
import { fail } from '@weft/core';
import type { SmoothingParameters } from './data/smoothing.js';
import type { CalendarPosition } from './data/calendar.js';
import type { ForecastIntervals } from './data/series-types.js';
import type { MissingRecord } from './data/missing.js';

/** What a windowed forecast model records in its metadata (`window`). */
export interface ForecastWindow {
  /** Rows in a window. */
  readonly rows: number;
  /** Per input column, the deviation of one-row changes over the training rows (inputs are divided by it). */
  readonly deviation: readonly number[];
  /** Per target (and row ahead, rows ahead outer), the deviation of the change forecast (outputs are multiplied by it). */
  readonly targetDeviation: readonly number[];
  /**
   * Per target, an exponential smoothing method (the hybrid): its forecast made at each row is read as one more
   * input per target (relative to the window's last row, over that target's deviation), and the model's output is
   * the correction to the smoothing forecast made at the last row instead of the change from that row.
   */
  readonly hybrid?: readonly SmoothingParameters[];
  /** Calendar positions read from the time column (metadata `timeColumn`), a sine and cosine each, last. */
  readonly calendar?: readonly CalendarPosition[];
  /** Per column, true where its logarithm is read (and, for a target, forecast: the output comes back through exp). */
  readonly log?: readonly boolean[];
}

/** The window a forecast model's metadata records, or null for a model trained on streams (checked when present). */
export function forecastWindow(metadata: Readonly<Record<string, unknown>>, columns: number, targets: number, steps = 1): ForecastWindow | null {
  const window = metadata.window as Partial<ForecastWindow> | undefined;
  if (window === undefined) return null;
  const positive = (v: unknown, n: number) => Array.isArray(v) && v.length === n && v.every((x) => typeof x === 'number' && x > 0 && Number.isFinite(x));
  if (typeof window !== 'object' || window === null || !Number.isInteger(window.rows) || (window.rows as number) < 1)
    fail('bad_weight_file', 'metadata.window.rows', 'a whole number ≥ 1', JSON.stringify(window?.rows));
  if (!positive(window.deviation, columns))
    fail(
      'bad_weight_file',
      'metadata.window.deviation',
      `${columns} finite numbers > 0 (one per column)`,
      JSON.stringify(window.deviation)?.slice(0, 80) ?? 'nothing',
    );
  if (!positive(window.targetDeviation, targets * steps))
    fail(
      'bad_weight_file',
      'metadata.window.targetDeviation',
      `${targets * steps} finite numbers > 0 (one per target${steps > 1 ? ` and row ahead, rows ahead outer` : ''})`,
      JSON.stringify(window.targetDeviation)?.slice(0, 80) ?? 'nothing',
    );
  if (window.hybrid !== undefined) {
    const methods = ['simple', 'holt', 'damped', 'additive', 'multiplicative'];
    const finite = (v: unknown) => typeof v === 'number' && Number.isFinite(v);
    const sound = (p: Partial<SmoothingParameters>) =>
      typeof p === 'object' &&
      p !== null &&
      methods.includes(p.method as string) &&
      Number.isInteger(p.season) &&
      (p.season as number) >= 1 &&
      [p.alpha, p.beta, p.gamma, p.phi, p.level, p.trend].every(finite) &&
      Array.isArray(p.seasonal) &&
      p.seasonal.every(finite) &&
      (p.method === 'additive' || p.method === 'multiplicative' ? p.seasonal.length === p.season : true);
    if (!Array.isArray(window.hybrid) || window.hybrid.length !== targets || !window.hybrid.every(sound)) {
      fail(
        'bad_weight_file',
        'metadata.window.hybrid',
        `${targets} smoothing records (method, season, alpha, beta, gamma, phi, level, trend, seasonal), one per target`,
        JSON.stringify(window.hybrid)?.slice(0, 80) ?? 'nothing',
      );
    }
  }
  if (window.log !== undefined && !(Array.isArray(window.log) && window.log.length === columns && window.log.every((l) => typeof l === 'boolean'))) {
    fail('bad_weight_file', 'metadata.window.log', `${columns} true or false (one per column)`, JSON.stringify(window.log)?.slice(0, 80) ?? 'nothing');
  }
  if (window.calendar !== undefined) {
    const known = ['month of year', 'quarter of year', 'week of year', 'day of week', 'day of year', 'time of day'];
    if (!Array.isArray(window.calendar) || !window.calendar.every((c) => known.includes(c)))
      fail(
        'bad_weight_file',
        'metadata.window.calendar',
        `calendar positions among ${known.join(', ')}`,
        JSON.stringify(window.calendar)?.slice(0, 80) ?? 'nothing',
      );
    if (typeof metadata.timeColumn !== 'string')
      fail(
        'bad_weight_file',
        'metadata.timeColumn',
        'the name of the time column the calendar inputs are read from',
        JSON.stringify(metadata.timeColumn) ?? 'nothing',
      );
  }
  return window as ForecastWindow;
}

/** The rows ahead of each block of a forecast model's outputs, from its metadata (`horizon`, `rowsAhead`). */
export function forecastRowsAhead(metadata: Readonly<Record<string, unknown>>): number[] {
  const horizon = Number(metadata.horizon ?? 1);
  const all = metadata.rowsAhead === 'all';
  if (metadata.rowsAhead !== undefined && !all)
    fail(
      'bad_weight_file',
      'metadata.rowsAhead',
      '"all" (every row up to the horizon) or no entry (the horizon alone)',
      JSON.stringify(metadata.rowsAhead).slice(0, 80),
    );
  return all ? Array.from({ length: horizon }, (_, i) => i + 1) : [horizon];
}

/** The prediction intervals a forecast model's metadata records (checked), or null. */
export function forecastIntervals(metadata: Readonly<Record<string, unknown>>, count: number): ForecastIntervals | null {
  const intervals = metadata.intervals as { level?: unknown; halfWidth?: unknown } | undefined;
  if (intervals === undefined) return null;
  const level = intervals?.level;
  if (typeof level !== 'number' || !(level > 0 && level < 1))
    fail('bad_weight_file', 'metadata.intervals.level', 'a share between 0 and 1', JSON.stringify(level) ?? 'nothing');
  const half = intervals.halfWidth;
  if (!Array.isArray(half) || half.length !== count || !half.every((h) => h === null || (typeof h === 'number' && h >= 0 && Number.isFinite(h)))) {
    fail(
      'bad_weight_file',
      'metadata.intervals.halfWidth',
      `${count} half-widths ≥ 0 (null for none), one per row ahead and target`,
      JSON.stringify(half)?.slice(0, 80) ?? 'nothing',
    );
  }
  return { level, halfWidth: half.map((h: number | null) => (h === null ? Infinity : h)) };
}

/** How a forecast model handles missing readings (metadata `missing`, checked), or null for a model without the record. */
export function forecastMissing(metadata: Readonly<Record<string, unknown>>, columns: number): MissingRecord | null {
  const missing = metadata.missing as Partial<MissingRecord> | undefined;
  if (missing === undefined) return null;
  const where = (field: string) => `metadata.missing.${field}`;
  if (typeof missing !== 'object' || missing === null || !['interpolate', 'carry', 'segments'].includes(missing.rule as string))
    fail('bad_weight_file', where('rule'), 'interpolate, carry or segments', JSON.stringify(missing?.rule) ?? 'nothing');
  if (!(Number.isInteger(missing.gapLimit) && (missing.gapLimit as number) >= 1))
    fail('bad_weight_file', where('gapLimit'), 'a whole number of rows ≥ 1', JSON.stringify(missing.gapLimit) ?? 'nothing');
  const flagged = missing.flagged;
  if (!Array.isArray(flagged) || !flagged.every((j, i) => Number.isInteger(j) && j >= 0 && j < columns && (i === 0 || j > flagged[i - 1]))) {
    fail('bad_weight_file', where('flagged'), `indexes of input columns in [0, ${columns}), increasing`, JSON.stringify(flagged)?.slice(0, 80) ?? 'nothing');
  }
  if (!Array.isArray(missing.fallback) || missing.fallback.length !== columns || !missing.fallback.every((v) => typeof v === 'number' && Number.isFinite(v))) {
    fail('bad_weight_file', where('fallback'), `${columns} finite numbers (one per column)`, JSON.stringify(missing.fallback)?.slice(0, 80) ?? 'nothing');
  }
  if (!Array.isArray(missing.markers) || !missing.markers.every((m) => typeof m === 'string'))
    fail('bad_weight_file', where('markers'), 'an array of strings', JSON.stringify(missing.markers)?.slice(0, 80) ?? 'nothing');
  return missing as MissingRecord;
}

/** Many series' record in a forecast model's metadata (`panel`): the id column and each series' own fields. */
export interface ForecastPanel {
  /** The column naming each series. */
  readonly idColumn: string;
  /** True when the model reads a 0/1 input per series. */
  readonly idInputs: boolean;
  /** The series' ids, in the order the model knows them. */
  readonly ids: readonly string[];
}

/** The fields each series of many records for itself; the rest of the metadata is shared. */
const OWN_FIELDS = ['normalisation', 'window', 'missing', 'split', 'season'];

/** The many-series record of a forecast model's metadata (checked), or null for a model of one series. */
export function forecastPanel(metadata: Readonly<Record<string, unknown>>): ForecastPanel | null {
  const panel = metadata.panel as { idColumn?: unknown; idInputs?: unknown; series?: unknown } | undefined;
  if (panel === undefined) return null;
  if (typeof panel !== 'object' || panel === null || typeof panel.idColumn !== 'string')
    fail('bad_weight_file', 'metadata.panel.idColumn', 'the name of the column naming each series', JSON.stringify(panel?.idColumn) ?? 'nothing');
  const series = panel.series;
  if (
    !Array.isArray(series) ||
    series.length === 0 ||
    !series.every((s) => typeof s === 'object' && s !== null && typeof (s as { id?: unknown }).id === 'string')
  ) {
    fail('bad_weight_file', 'metadata.panel.series', "an array of records, each with the series' id", JSON.stringify(series)?.slice(0, 80) ?? 'nothing');
  }
  const ids = (series as { id: string }[]).map((s) => s.id);
  const twice = ids.findIndex((id, i) => ids.indexOf(id) !== i);
  if (twice >= 0) fail('bad_weight_file', `metadata.panel.series[${twice}].id`, 'ids that differ', `${JSON.stringify(ids[twice])} again`);
  if (metadata.window !== undefined)
    fail('bad_weight_file', 'metadata.window', 'no entry in a model of many series (each series records its own, in metadata.panel.series)', 'an entry');
  return { idColumn: panel.idColumn, idInputs: panel.idInputs === true, ids };
}

/**
 * The metadata one series of many is forecast with, as a model of that series alone: the shared fields, the series'
 * own (its scales, window record, missing-value fill), its block of the intervals' half-widths, and its place among
 * the series inputs (`seriesInput`) when the model reads them. An id the model does not know is an error naming it.
 */
export function seriesMetadata(metadata: Readonly<Record<string, unknown>>, id: string): Record<string, unknown> {
  const panel = forecastPanel(metadata);
  if (panel === null) fail('invalid_argument', 'seriesMetadata.metadata', 'the metadata of a model of many series (metadata.panel)', 'a model of one series');
  const index = panel.ids.indexOf(id);
  if (index < 0)
    fail(
      'bad_data',
      `series ${JSON.stringify(id.slice(0, 80))}`,
      `a series the model was trained on (${panel.ids
        .slice(0, 6)
        .map((s) => JSON.stringify(s))
        .join(', ')}${panel.ids.length > 6 ? `, … ${panel.ids.length} in all` : ''})`,
      'an unknown id',
    );
  const own = (metadata.panel as { series: Record<string, unknown>[] }).series[index];
  const shared = Object.fromEntries(Object.entries(metadata).filter(([key]) => key !== 'panel' && key !== 'intervals' && !OWN_FIELDS.includes(key)));
  const intervals = metadata.intervals as { halfWidth?: unknown } | undefined;
  let block: Record<string, unknown> = {};
  if (intervals !== undefined) {
    const half = intervals.halfWidth;
    if (!Array.isArray(half) || half.length % panel.ids.length !== 0)
      fail(
        'bad_weight_file',
        'metadata.intervals.halfWidth',
        `half-widths for each of the ${panel.ids.length} series in turn`,
        JSON.stringify(half)?.slice(0, 80) ?? 'nothing',
      );
    const per = half.length / panel.ids.length;
    block = { intervals: { ...intervals, halfWidth: half.slice(index * per, (index + 1) * per) } };
  }
  return {
    ...shared,
    ...Object.fromEntries(OWN_FIELDS.flatMap((key) => (own[key] === undefined ? [] : [[key, own[key]]]))),
    ...block,
    ...(panel.idInputs ? { seriesInput: { index, count: panel.ids.length } } : {}),
  };
}
