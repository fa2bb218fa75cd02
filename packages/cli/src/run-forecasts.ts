/**
 * `weft run` on a forecast model: each row's forecasts as a record (every row ahead the model forecasts at once, as
 * "<target> in <rows>" columns), and with `--ahead` the rows past the end.
 */
import type { Runtime } from '@weft/io/runtime';
import { createRowForecaster, forecastIntervals, forecastPanel } from '@weft/io';
import type { RowForecaster } from '@weft/io';
import { fieldPath, seriesMetadata } from '@weft/io/internal';
import { TraceRecorder } from './forecast-plot.js';
import type { ForecastTrace } from './forecast-plot.js';
import type { Table } from '@weft/io';
import { CommandError } from './errors.js';

/** One record of output: values by column name. */
export type OutputRecord = Record<string, string | number>;

/** Turns one row of a table (its only row) into records. */
export type EachRow = (table: Table, row: number, emit: (record: OutputRecord) => void) => void;

/**
 * Forecasts row by row; with `marked`, each record says whether it was made from data or, past the end (`ahead`),
 * from the forecasts before it: the model's forecast of every column is fed back as the next row, which needs a
 * model that forecasts all its input columns one row ahead.
 */
export function rowForecasts(
  runtime: Runtime,
  meta: Record<string, unknown>,
  name: string,
  keep: readonly string[],
  marked: boolean,
  plotTitle: string | null = null,
) {
  const model = createRowForecaster(runtime, meta);
  // With --plot: the first target's values and its nearest forecasts, for the picture.
  const recorder =
    plotTitle === null ? null : new TraceRecorder(plotTitle === '' ? model.outputNames[0] : `${plotTitle}: ${model.outputNames[0]}`, model.rowsAhead[0]);
  const raw: Record<string, string> = {};
  let at: number[] | null = null;
  let kept: number[] = [];
  let keptNames: string[] = [];
  const targets = model.outputNames.length;
  const rowsAhead = model.rowsAhead;
  // The forecasts made at the last row, every row ahead (made[s × targets + k]).
  const made = new Float64Array(rowsAhead.length * targets);
  const columnNames = rowsAhead.flatMap((h) => model.outputNames.map((target) => `${target} in ${h}`));
  // With prediction intervals, a low and a high column after each forecast column.
  const bounds = model.intervals;
  const boundNames = bounds === null ? [] : columnNames.map((c) => [`${c} low`, `${c} high`]);
  const several = rowsAhead.length > 1;
  const checkAhead = (count: number): void => checkAheadFor(model, meta, count);
  const ahead = (rows: number, count: number, emit: (record: OutputRecord) => void): void => {
    if (rows < model.warmUp)
      throw new CommandError(
        `${name}: ${rows} rows are fewer than the ${model.warmUp} the model reads before its first forecast; nothing to forecast ahead from`,
      );
    for (let k = 1; k <= count; k++) {
      // A model of every row up to its horizon: row rows + k holds the forecast made at the last row, k rows ahead,
      // in its "in k" columns (so each column keeps its meaning: made at the row `made` names, k rows on).
      const record: OutputRecord = { row: rows + k, made: several ? `at row ${rows}` : 'from forecasts' };
      for (const c of keptNames) record[c] = '';
      for (const c of columnNames) {
        record[c] = '';
        if (bounds !== null) record[`${c} low`] = record[`${c} high`] = '';
      }
      if (several) madeAhead(record, k, rows, { model, made, bounds, recorder });
      else {
        const last: Record<string, number> = {};
        model.outputNames.forEach((target, j) => (last[target] = made[j]));
        model.nextInto(last, made);
        // Fed back, the forecasts' own errors compound: the one-row interval would understate them, so none is shown.
        model.outputNames.forEach((target, j) => (record[`${target} in 1`] = Number(made[j].toPrecision(6))));
      }
      emit(record);
    }
  };
  const each: EachRow = (table, row, emit) => {
    at ??= columnsAt(table, model.readNames, name, 'the model reads it');
    if (row === 1) kept = columnsAt(table, keep, name, 'for --keep');
    const fields = table.rows[0].fields;
    model.readNames.forEach((c, j) => (raw[c] = fields[(at as number[])[j]]));
    const ready = forecastRow(model, raw, made, table, at);
    recorder?.add(
      row - 1,
      model.takesMissing || raw[model.outputNames[0]].trim() !== '' ? Number(raw[model.outputNames[0]]) : NaN,
      ready ? made[0] : NaN,
      bounds?.halfWidth[0] ?? NaN,
    );
    const record: OutputRecord = marked ? { row, made: 'from data' } : { row };
    keptNames = kept.map((c) => table.header[c]);
    kept.forEach((c) => (record[table.header[c]] = fields[c]));
    // A windowed model forecasts once it has a window of rows: the first rows get empty forecasts.
    columnNames.forEach((c, i) => {
      record[c] = ready ? Number(made[i].toPrecision(6)) : '';
      if (bounds !== null) {
        record[boundNames[i][0]] = ready ? shown(made[i] - bounds.halfWidth[i]) : '';
        record[boundNames[i][1]] = ready ? shown(made[i] + bounds.halfWidth[i]) : '';
      }
    });
    emit(record);
  };
  return { each, ahead, checkAhead, traces: (): ForecastTrace[] => (recorder === null ? [] : [recorder.trace()]), level: bounds?.level ?? null };
}

/**
 * With `--ahead` and a model of one row ahead, each forecast is fed back as the next row: the model must forecast
 * every column it reads, 1 row ahead, and read no times; a model of every row up to its horizon gives at most that
 * many rows.
 */
function checkAheadFor(model: RowForecaster, meta: Record<string, unknown>, count: number): void {
  const rowsAhead = model.rowsAhead;
  if (rowsAhead.length > 1) {
    if (count > rowsAhead[rowsAhead.length - 1])
      throw new CommandError(
        `--ahead ${count}: this model forecasts rows 1 to ${rowsAhead[rowsAhead.length - 1]} ahead at once; ask for at most ${rowsAhead[rowsAhead.length - 1]} (or train it with a longer --horizon)`,
        2,
      );
    return;
  }
  const missing = model.inputNames.filter((c) => !model.outputNames.includes(c));
  if (Number(meta.horizon) !== 1 || missing.length > 0 || model.readNames.length > model.inputNames.length) {
    throw new CommandError(
      `--ahead feeds each forecast back as the next row, so the model must forecast every column it reads, 1 row ahead, and read no times; this one forecasts ${model.outputNames.join(', ')} ${String(meta.horizon)} row(s) ahead${missing.length > 0 ? ` and does not forecast ${missing.join(', ')}` : ''}${model.readNames.length > model.inputNames.length ? ' and reads the time column' : ''} (train it with --horizon 1 and no --target, or with --horizon ROWS to forecast that many rows at once)`,
      2,
    );
  }
}

/**
 * The model's forecasts after one more row (true once it has a window of rows); a field that is not a number is an
 * error at its line and column (a time that does not parse: its message).
 */
function forecastRow(model: RowForecaster, raw: Record<string, string>, made: Float64Array, table: Table, at: readonly number[]): boolean {
  try {
    return model.nextInto(raw, made);
  } catch (error) {
    const j = model.inputNames.findIndex((c) => !Number.isFinite(Number(raw[c])) || raw[c].trim() === '');
    if (j < 0) throw new CommandError(`${fieldPath(table, 0, at[model.readNames.length - 1])}: ${(error as Error).message}`);
    throw new CommandError(
      `${fieldPath(table, 0, at[Math.max(0, j)])}: ${JSON.stringify(raw[model.inputNames[Math.max(0, j)]].slice(0, 80))} in column ${JSON.stringify(model.inputNames[Math.max(0, j)])} is not a number`,
    );
  }
}

/**
 * `weft run` on a model of many series (metadata `panel`): each row goes to its series' forecaster (by the id
 * column, which leads each record), rows numbered within their series; `--ahead` forecasts past the end of every
 * series, in the order the series first appeared. A series the model was not trained on is an error at its cell.
 */
export function seriesForecasts(runtime: Runtime, meta: Record<string, unknown>, name: string, keep: readonly string[], marked: boolean, plot = false) {
  const panel = forecastPanel(meta)!;
  const bySeries = new Map<string, { forecasts: ReturnType<typeof rowForecasts>; rows: number }>();
  let idAt = -1;
  const withId = (id: string, emit: (record: OutputRecord) => void) => (record: OutputRecord) => emit({ [panel.idColumn]: id, ...record });
  const each: EachRow = (table, _row, emit) => {
    if (idAt < 0) [idAt] = columnsAt(table, [panel.idColumn], name, 'it names the series the model forecasts');
    const id = table.rows[0].fields[idAt].trim();
    if (!panel.ids.includes(id))
      throw new CommandError(
        `${fieldPath(table, 0, idAt)}: ${JSON.stringify(id.slice(0, 80))} is not a series the model was trained on (${panel.ids
          .slice(0, 6)
          .map((s) => JSON.stringify(s))
          .join(', ')}${panel.ids.length > 6 ? `, … ${panel.ids.length} in all` : ''})`,
      );
    let series = bySeries.get(id);
    if (series === undefined) {
      series = {
        forecasts: rowForecasts(
          runtime,
          seriesMetadata(meta, id),
          name,
          keep.filter((c) => c !== panel.idColumn),
          marked,
          plot ? id : null,
        ),
        rows: 0,
      };
      bySeries.set(id, series);
    }
    series.forecasts.each(table, ++series.rows, withId(id, emit));
  };
  return {
    each,
    checkAhead: (count: number) => rowForecasts(runtime, seriesMetadata(meta, panel.ids[0]), name, keep, marked).checkAhead(count),
    ahead: (_rows: number, count: number, emit: (record: OutputRecord) => void) => {
      for (const [id, series] of bySeries) series.forecasts.ahead(series.rows, count, withId(id, emit));
    },
    traces: (): ForecastTrace[] => [...bySeries.values()].flatMap((s) => s.forecasts.traces()),
    level:
      forecastIntervals(
        meta,
        Array.isArray((meta.intervals as { halfWidth?: unknown[] } | undefined)?.halfWidth) ? (meta.intervals as { halfWidth: unknown[] }).halfWidth.length : 0,
      )?.level ?? null,
  };
}

/** The index of each named column in a table, or a one-line error naming the file, the column and why it is needed. */
export function columnsAt(table: Table, names: readonly string[], file: string, why: string): number[] {
  return names.map((c) => {
    const i = table.header.indexOf(c);
    if (i < 0) throw new CommandError(`${file}: no column ${JSON.stringify(c)} (${why}); the input has ${table.header.join(', ')}`);
    return i;
  });
}

/** Row k after the last row (`rows`): the forecast the model made at the last row, k rows ahead, with its interval. */
function madeAhead(
  record: OutputRecord,
  k: number,
  rows: number,
  { model, made, bounds, recorder }: { model: RowForecaster; made: Float64Array; bounds: RowForecaster['intervals']; recorder: TraceRecorder | null },
): void {
  const s = model.rowsAhead.indexOf(k);
  const targets = model.outputNames.length;
  model.outputNames.forEach((target, j) => {
    const i = s * targets + j;
    record[`${target} in ${k}`] = Number(made[i].toPrecision(6));
    if (j === 0) recorder?.forecastAt(rows - 1 + k, made[i], bounds?.halfWidth[i] ?? Number.NaN);
    if (bounds !== null) {
      record[`${target} in ${k} low`] = shown(made[i] - bounds.halfWidth[i]);
      record[`${target} in ${k} high`] = shown(made[i] + bounds.halfWidth[i]);
    }
  });
}

/** A number as written in the output (6 significant digits), or empty when not finite. */
function shown(v: number): number | '' {
  return Number.isFinite(v) ? Number(v.toPrecision(6)) : '';
}
