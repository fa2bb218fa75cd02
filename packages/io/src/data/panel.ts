/**
 * Many series, one model (a global model): a long table whose id column names the series (sales per shop, readings
 * per machine) trains one forecaster on the sliding windows of every series. Each series is read on its own scale
 * as one series is (series-windows.ts: every value relative to the window's last row, divided by that series' own
 * deviation of one-row changes), so series of any size share the weights; Salinas, Flunkert, Gasthaus & Januschowski
 * (DeepAR, IJF 36, 2020) scale each series by its own level for the same reason, and we keep our single-series
 * scaling so one series and many are read alike. With `idInputs` the model also reads a 0/1 input per series, so the
 * first layer learns a vector per series (an embedding of the id).
 *
 * Every series is cut into its own three parts in time order (the test part is the end of every series), fitted its
 * own baselines, and scored on its own; the figures overall are means over series of MASE (so series of different
 * sizes count alike), and the verdict compares the model with each baseline method applied to every series.
 *
 * Prediction intervals pool the validation errors of every series, each divided by its series' MASE scale (the
 * in-sample seasonal naive error): the conformal quantile of the pooled scaled errors, times a series' scale, is
 * its half-width. A choice of ours: one series' validation part is too short for a 95% quantile (12 rows of a
 * monthly series), and scaled errors of related series are closer to exchangeable than raw ones; still not
 * exchangeable (series and times differ), so the coverage on the test part is measured and reported.
 *
 * Why one file of this length: finding the id column, reading each series, the shared season and window, and the
 * prepared panel's read-back of its outputs series by series follow one another and share the series as read
 * (SeriesProbe); each step is a function of its own.
 */
import { fail } from '@weft/core';
import { readSeries } from './series.js';
import type { Series } from './series.js';
import { chooseSeason } from './seasonality.js';
import { panelReport, pooledBaselineWidths, pooledHalfWidths } from './panel-report.js';
import { insertSkippedTimes } from './skipped-times.js';
import { interpolated } from './missing.js';
import { seriesParts } from './series-checks.js';
import { columnNamed, decimal, fieldPath } from './table.js';
import type { Table } from './table.js';
import { readTimeColumn } from './time-column.js';
import type { TimeColumn } from './time-column.js';
import type { PreparedSeries, SeriesPreparation, SeriesWindows, WindowExample } from './series-types.js';
import type { PrepareOne, SeriesIdColumn } from './series-types.js';

export type { PrepareOne, SeriesIdColumn } from './series-types.js';

/**
 * The id column of a long table: the one named (`idColumn`), none (`null`), or, when not said, found: with a time
 * column whose times repeat down the table, the first text column under which no series repeats a time.
 */
export function seriesIdColumn(table: Table, time: TimeColumn | null, options: Pick<SeriesPreparation, 'idColumn'>): SeriesIdColumn | null {
  if (options.idColumn === null) return null;
  if (options.idColumn !== undefined) {
    const index = columnNamed(table, options.idColumn, 'for --id-column');
    if (time !== null && index === time.index) fail('invalid_option', '--id-column', 'a column other than the time column', JSON.stringify(options.idColumn));
    return { index, name: table.header[index], found: false };
  }
  if (time === null || time.repeated < 0 || table.rows.length < 4) return null;
  const index = table.header.findIndex((_, c) => {
    if (c === time.index) return false;
    const cells = table.rows.map((row) => row.fields[c].trim());
    if (cells.every((v) => !Number.isNaN(decimal(v)))) return false;
    const seen = new Map<string, Set<number>>();
    return (
      new Set(cells).size > 1 &&
      cells.every((v, r) => {
        const times = seen.get(v) ?? new Set<number>();
        seen.set(v, times);
        if (times.has(time.times[r])) return false;
        times.add(time.times[r]);
        return true;
      })
    );
  });
  return index < 0 ? null : { index, name: table.header[index], found: true };
}

/**
 * The rows of each series of a long table, by id in order of first appearance, each series' rows in time order
 * (series may take turns row by row): an empty id, or a time not after the series' previous one, is an error at
 * its file:line:column.
 */
export function seriesRows(table: Table, id: Pick<SeriesIdColumn, 'index' | 'name'>, time: TimeColumn | null): Map<string, number[]> {
  const groups = new Map<string, number[]>();
  table.rows.forEach((row, r) => {
    const name = row.fields[id.index].trim();
    if (name === '') fail('bad_data', fieldPath(table, r, id.index), `a series name in column ${JSON.stringify(id.name)}`, 'an empty cell');
    const rows = groups.get(name) ?? [];
    if (time !== null && rows.length > 0) {
      const last = rows[rows.length - 1];
      if (!(time.times[r] > time.times[last])) {
        fail(
          'bad_data',
          fieldPath(table, r, time.index),
          `a time after line ${table.rows[last].line}'s ${JSON.stringify(table.rows[last].fields[time.index].trim())} for series ${JSON.stringify(name)} (each series' rows in time order; series may take turns)`,
          JSON.stringify(row.fields[time.index].trim().slice(0, 40)),
        );
      }
    }
    rows.push(r);
    groups.set(name, rows);
  });
  return groups;
}

/** Many series of a long table prepared as one model's data (see the file's comment). */
export function preparePanel(table: Table, time: TimeColumn | null, id: SeriesIdColumn, options: SeriesPreparation, prepareOne: PrepareOne): PreparedSeries {
  if (options.examples === 'streams')
    fail('invalid_option', '--examples', `sliding (a table of many series, by ${JSON.stringify(id.name)}, trains on every series' sliding windows)`, 'streams');
  const short = options.shortSeries ?? 'skip';
  if (short !== 'skip' && short !== 'refuse') fail('invalid_option', '--short-series', 'skip or refuse', String(short));
  const groups = seriesRows(table, id, time);
  if (groups.size < 2)
    fail(
      'bad_data',
      fieldPath(table, 0, id.index),
      `at least two series named in column ${JSON.stringify(id.name)} (one series: leave out --id-column)`,
      `only ${JSON.stringify([...groups.keys()][0])}`,
    );
  const probes = probeSeries(table, groups, time, id, options);
  const { season, seasonCounts } = panelSeason(probes, options);
  const choice = keptSeries(probes, season, options);
  const { window, kept, dropped, need, needWords } = choice;
  if (dropped.length > 0 && short === 'refuse') {
    const p = dropped[0];
    fail(
      'bad_data',
      fieldPath(table, p.rows[0], id.index),
      `at least ${need} rows for series ${JSON.stringify(p.name)} (${needWords}; --short-series skip leaves such series out)`,
      `${p.count} rows`,
    );
  }
  if (kept.length === 0)
    fail(
      'bad_data',
      fieldPath(table, 0, id.index),
      `a series with at least ${need} rows (${needWords})`,
      `${probes.length} series of at most ${Math.max(...probes.map((p) => p.count))} rows`,
    );
  const parts = prepareParts(table, id, kept, { ...options, season, window }, prepareOne);
  const seasonWords =
    options.season !== undefined
      ? `season: ${season === null ? 'none (as asked)' : `${season} rows (as asked)`}`
      : `season: ${season === null ? 'none' : `${season} rows`}, the choice of ${seasonCounts.get(season) ?? 0} of ${probes.length} series (each chosen as for one series; one season for all, so every series reads the same window)`;
  return panelPrepared({ table, id, options, season, probes, choice, parts, seasonWords });
}

/** One series of the table as first read: its rows, its own table and time column, its values and its row count (skipped times put back). */
interface SeriesProbe {
  readonly name: string;
  readonly rows: readonly number[];
  readonly sub: Table;
  readonly subTime: TimeColumn | null;
  readonly read: Series;
  readonly count: number;
}

/** Each series read on its own, as one series would be. */
function probeSeries(table: Table, groups: Map<string, number[]>, time: TimeColumn | null, id: SeriesIdColumn, options: SeriesPreparation): SeriesProbe[] {
  const subTable = (rows: readonly number[]): Table => ({
    file: table.file,
    delimiter: table.delimiter,
    header: table.header,
    rows: rows.map((r) => table.rows[r]),
  });
  return [...groups].map(([name, rows]) => {
    const sub = subTable(rows);
    const subTime = time === null ? null : readTimeColumn(sub, time.name);
    const putBack = subTime === null ? null : insertSkippedTimes(sub, subTime, options.missing === 'refuse');
    const read = readSeries(putBack?.table ?? sub, {
      columns: options.columns,
      targets: options.targets,
      leaveOut: [id.name, ...(time === null ? [] : [time.name])],
      markers: options.missingMarkers,
    });
    return { name, rows, sub, subTime, read, count: (putBack?.table ?? sub).rows.length };
  });
}

/** One season for all: the one most series choose (the smaller on a tie), unless given; and how many chose each. */
function panelSeason(probes: readonly SeriesProbe[], options: SeriesPreparation): { season: number | null; seasonCounts: Map<number | null, number> } {
  const seasonCounts = new Map<number | null, number>();
  if (options.season !== undefined) return { season: options.season, seasonCounts };
  for (const p of probes) {
    const column = p.read.values.map((row) => row[p.read.columns.indexOf(p.read.targets[0])]);
    const fit = p.count - Math.max(1, Math.round(p.count * options.testShare));
    const observed = column.slice(0, fit);
    if (observed.length < 8) continue;
    const choice = chooseSeason(interpolated(observed), p.subTime?.spacing ?? null).season;
    seasonCounts.set(choice, (seasonCounts.get(choice) ?? 0) + 1);
  }
  const season = [...seasonCounts].sort((a, b) => b[1] - a[1] || (a[0] ?? 0) - (b[0] ?? 0))[0]?.[0] ?? null;
  return { season, seasonCounts };
}

/** The window for all series, the series kept and dropped, and what a series needs (in rows and in words). */
interface KeptSeries {
  readonly window: number;
  readonly kept: SeriesProbe[];
  readonly dropped: SeriesProbe[];
  readonly need: number;
  readonly needWords: string;
}

/** A series is kept when its training part holds the windows a model needs (two seasons or 24 rows, and the horizon). */
function keptSeries(probes: readonly SeriesProbe[], season: number | null, options: SeriesPreparation): KeptSeries {
  const horizon = options.horizon;
  const given = options.given ?? new Set<string>();
  const least = (season === null ? 24 : 2 * season) + horizon;
  // (A series whose test share holds fewer rows than the horizon is refused by seriesParts when it is prepared.)
  const trainingRows = (rows: number) => (Math.max(1, Math.round(rows * options.testShare)) < horizon ? 0 : seriesParts(rows, options).trainEnd);
  const needed = (enough: number) => {
    let n = enough;
    while (trainingRows(n) < enough && n < 10 * enough + 100) n++;
    return n;
  };
  const windowOf = (train: number) => Math.max(2, Math.min(season === null ? 24 : 2 * season, 64, Math.floor(train / 4)));
  const fits = (p: SeriesProbe, window: number) => trainingRows(p.count) >= Math.max(given.has('window') ? 0 : least, window + horizon + 1);
  const longEnough = probes.filter((p) => fits(p, given.has('window') ? options.window : 2));
  const window = given.has('window') ? options.window : windowOf(Math.min(...longEnough.map((p) => trainingRows(p.count))));
  const need = needed(Math.max(given.has('window') ? 0 : least, window + horizon + 1));
  // What binds: two seasons (or 24 rows) to train on, or the window and the horizon.
  const needWords = `${!given.has('window') && least > window + horizon + 1 ? (season === null ? '24 rows to train on' : `two seasons of ${season} rows to train on`) : `a ${window}-row window`}, ${horizon} row${horizon === 1 ? '' : 's'} ahead and the validation and test parts`;
  return { window, kept: probes.filter((p) => fits(p, window)), dropped: probes.filter((p) => !fits(p, window)), need, needWords };
}

/**
 * Each kept series prepared as one series with the shared choices: every series flags the columns any series has
 * holes in, so all read the same inputs (checked).
 */
function prepareParts(table: Table, id: SeriesIdColumn, kept: readonly SeriesProbe[], chosen: SeriesPreparation, prepareOne: PrepareOne): PreparedSeries[] {
  const flagged = [...new Set(kept.flatMap((p) => p.read.columns.filter((_, j) => p.read.missing[j] > 0)))];
  const settings: SeriesPreparation = { ...chosen, examples: 'sliding', given: new Set([...(chosen.given ?? new Set<string>()), 'window']) };
  const parts = kept.map((p, i) =>
    prepareOne(p.sub, p.subTime, settings, { leaveOut: [id.name], flagged, ...(chosen.idInputs === true ? { code: { index: i, count: kept.length } } : {}) }),
  );
  const first = parts[0];
  parts.forEach((part, i) => {
    if (part.inputWidth !== first.inputWidth) {
      fail(
        'bad_data',
        fieldPath(table, kept[i].rows[0], id.index),
        `series ${JSON.stringify(kept[i].name)} read with the ${first.inputWidth} inputs of series ${JSON.stringify(kept[0].name)} (the same columns, calendar and spacing)`,
        `${part.inputWidth} inputs`,
      );
    }
  });
  return parts;
}

/** Outputs read series by series: each series' windows in order, `counts` of them. */
function slices(counts: readonly number[], outputs: ArrayLike<number>, width: number): number[][] {
  let at = 0;
  return counts.map((n) => {
    const slice = Array.prototype.slice.call(outputs, at, at + n * width) as number[];
    at += n * width;
    return slice;
  });
}

/** The prepared panel: every series' windows together, the metadata of each, the notes and the per-series figures. */
function panelPrepared(panel: {
  table: Table;
  id: SeriesIdColumn;
  options: SeriesPreparation;
  season: number | null;
  probes: readonly SeriesProbe[];
  choice: KeptSeries;
  parts: readonly PreparedSeries[];
  seasonWords: string;
}): PreparedSeries {
  const { table, id, options, season, choice, parts, seasonWords } = panel;
  const { window, kept } = choice;
  const given = options.given ?? new Set<string>();
  const first = parts[0];
  const windows = parts.map((p) => p.examples as SeriesWindows);
  const concat = (pick: (w: SeriesWindows) => readonly WindowExample[]) => windows.flatMap((w) => [...pick(w)]);
  const train = concat((w) => w.train);
  const batch = given.has('streams') ? options.streams : Math.max(1, Math.min(32, Math.floor(train.length / 4)));
  const epochs = Math.min(300, Math.max(3, Math.ceil(2000 / Math.ceil(train.length / batch))));
  const ids = kept.map((p) => p.name);
  const validationCounts = windows.map((w) => w.validationForecasts.length);
  const testCounts = windows.map((w) => w.test.length);
  const block = first.outputWidth;
  const what = heldOutWhat(table, kept, options);
  return {
    inputWidth: first.inputWidth,
    outputWidth: block,
    examples: {
      kind: 'windows',
      train,
      validation: concat((w) => w.validation),
      validationForecasts: concat((w) => w.validationForecasts),
      test: concat((w) => w.test),
      batch,
    },
    metadata: panelMetadata(first.metadata as Record<string, unknown>, id, options, kept, parts),
    notes: panelNotes(table, id, options, choice, parts),
    chosen: {
      ...(given.has('epochs') ? {} : { epochs }),
      ...(given.has('patience') ? {} : { patience: 5 }),
      ...(given.has('hidden') ? {} : { hidden: 32 }),
      said: `sliding windows of ${ids.length} series${options.hybrid === true ? " on top of each one's best exponential smoothing method" : ''}: ${train.length} training examples of ${window} rows${given.has('window') ? '' : ` (${season === null ? 'no season' : `two seasons of ${season} rows`}, at most a quarter of the shortest series' training rows)`}${options.horizon > 1 ? `, forecasting rows 1 to ${options.horizon} ahead at once` : ''}, ${batch} per batch${given.has('epochs') ? '' : `, up to ${epochs} epochs`}${given.has('patience') ? '' : ', patience 5'}${given.has('hidden') ? '' : ', 32 hidden'} (chosen from the data; flags override)`,
    },
    validationFigure: (outputs, width) => {
      const figures = slices(validationCounts, outputs, width).map((slice, i) => parts[i].validationFigure(slice, width));
      return figures.reduce((a, b) => a + b, 0) / figures.length;
    },
    heldOut: (outputs, width, intervals) => {
      // The baselines' intervals are pooled across series as the model's are (each baseline method on its own).
      const baselineWidths =
        intervals === undefined
          ? null
          : pooledBaselineWidths(
              parts.map((p) => p.baselineErrors!()),
              parts.map((p) => p.scales!),
              intervals.level,
            );
      const reports = slices(testCounts, outputs, width).map((slice, i) =>
        parts[i].heldOut(
          slice,
          width,
          intervals === undefined
            ? undefined
            : { level: intervals.level, halfWidth: intervals.halfWidth.slice(i * block, (i + 1) * block), baselines: baselineWidths![i] },
        ),
      );
      return panelReport(ids, reports, what, [
        `parts of each series, in time order: training, validation (for stopping and keeping weights), test (scored once at the end), by the --validation and --test shares of its rows`,
        seasonWords,
      ]);
    },
    intervals: (outputs, width, level) =>
      pooledHalfWidths(
        slices(validationCounts, outputs, width).map((slice, i) => parts[i].validationErrors!(slice, width)),
        parts.map((p) => p.scales!),
        level,
      ).flat(),
  };
}

/** What the held-out figures are of: the last rows of each series. */
function heldOutWhat(table: Table, kept: readonly SeriesProbe[], options: SeriesPreparation): string {
  const sizes = [...new Set(kept.map((p) => p.count - seriesParts(p.count, options).testStart))];
  return `the last ${sizes.length === 1 ? sizes[0] : `${Math.min(...sizes)} to ${Math.max(...sizes)}`} rows of each of ${kept.length} series of ${table.file}, used for neither training nor stopping (figures per series, then means over series)`;
}

/** The metadata every series shares, and each series' own (its scales, window, missing rule, split and season) under panel.series. */
function panelMetadata(
  meta: Record<string, unknown>,
  id: SeriesIdColumn,
  options: SeriesPreparation,
  kept: readonly SeriesProbe[],
  parts: readonly PreparedSeries[],
): PreparedSeries['metadata'] {
  const perSeries = ['normalisation', 'window', 'missing', 'split', 'season'];
  const shared = Object.fromEntries(Object.entries(meta).filter(([key]) => !perSeries.includes(key)));
  return {
    ...shared,
    panel: {
      idColumn: id.name,
      idInputs: options.idInputs === true,
      series: kept.map((p, i) => ({
        id: p.name,
        ...Object.fromEntries(
          perSeries.flatMap((key) =>
            (parts[i].metadata as Record<string, unknown>)[key] === undefined ? [] : [[key, (parts[i].metadata as Record<string, unknown>)[key]]],
          ),
        ),
      })),
    },
  } as PreparedSeries['metadata'];
}

/** The panel's notes: its series, those left out as too short, and each series' notes said once. */
function panelNotes(table: Table, id: SeriesIdColumn, options: SeriesPreparation, choice: KeptSeries, parts: readonly PreparedSeries[]): string[] {
  const { kept, dropped, need, needWords } = choice;
  return [
    `many series: ${kept.length} series named in column ${JSON.stringify(id.name)}${id.found ? ' (found: its names share times; --id-column to choose another, none for one series)' : ''}, one model across them, each read on its own scale${options.idInputs === true ? ', with a 0/1 input per series' : ''}`,
    ...(dropped.length === 0
      ? []
      : [
          `left out ${dropped.length} series shorter than the ${need} rows needed (${needWords}): ${dropped
            .slice(0, 5)
            .map((p) => `${JSON.stringify(p.name)} (${p.count} rows from line ${table.rows[p.rows[0]].line})`)
            .join(', ')}${dropped.length > 5 ? `, and ${dropped.length - 5} more` : ''} (--short-series refuse to stop instead)`,
        ]),
    ...[...new Set(parts.flatMap((p) => p.notes.filter((n) => !n.startsWith('note: column'))))],
  ];
}
