/**
 * A forecast model applied row by row, whatever way it was trained: the one path by which `weft run`, `weft score`,
 * the demo and a user's program turn a series into forecasts in real units, from the weight file's metadata.
 * - A model trained on streams steps once per row, its state carried (the translator normalises and undoes).
 * - A model trained on sliding windows (metadata `window`) forecasts from the last `rows` rows alone: each row's
 *   forecast resets the state and reads the window again, every value taken relative to the window's last row and
 *   divided by the column's deviation of one-row changes, the output being the target's change from that last row
 *   in units of `targetDeviation` (so a level above every training level is read like any other). A hybrid also
 *   runs an exponential smoothing method over every row (from the first row given) and forecasts the correction to
 *   its forecast (after Smyl, "A hybrid method of exponential smoothing and recurrent neural networks for time series
 *   forecasting", IJF 36, 2020, in a simpler form: the network sees the smoothing forecasts beside the values).
 * - A windowed model may forecast every row up to its horizon at once (metadata `rowsAhead: "all"`: one block of
 *   targets per row ahead, each with its own `targetDeviation`), and any model may be several members trained from
 *   different seeds (metadata `members`, stacked by `stackMembers`), whose forecasts are combined by their median;
 *   and it may read some columns as logarithms (`window.log`), its forecasts of those coming back through exp.
 * - A windowed model that records how it handles missing readings (metadata `missing`) takes rows with holes: a
 *   missing cell (a marker such as `NA` or an empty cell, or NaN among numbers) is filled in each window by the
 *   recorded rule from the rows up to it (missing.ts, as in training) and flagged where the model reads a flag.
 */
import { fail } from '@weft/core';
import type { Runtime } from './runtime/runtime.js';
import { createTranslator } from './translate.js';
import { forecastIntervals, forecastPanel, forecastRowsAhead, forecastWindow, seriesMetadata } from './forecast-metadata.js';
import type { RowForecaster } from './forecast-row.js';
import { streamRowForecaster } from './forecast-streams.js';
import type { ForecasterParts } from './forecast-streams.js';
import { windowRowForecaster } from './forecast-windows.js';
export type { ForecastRow, RowForecaster } from './forecast-row.js';
export type { ForecastWindow } from './forecast-metadata.js';

/**
 * A row forecaster per series of a model of many series (metadata `panel`): each reads its own series' rows alone,
 * as createRowForecaster does for one series, with that series' scales; all share the model's weights.
 */
export function createSeriesForecasters(runtime: Runtime, metadata: Readonly<Record<string, unknown>>): Map<string, RowForecaster> {
  const panel = forecastPanel(metadata);
  if (panel === null)
    fail(
      'invalid_argument',
      'createSeriesForecasters.metadata',
      'the metadata of a model of many series (metadata.panel)',
      'a model of one series: use createRowForecaster',
    );
  return new Map(panel.ids.map((id) => [id, createRowForecaster(runtime, seriesMetadata(metadata, id))]));
}

/** A row forecaster for a forecast model and its weight file's metadata. */
export function createRowForecaster(runtime: Runtime, metadata: Readonly<Record<string, unknown>>): RowForecaster {
  if (metadata.panel !== undefined)
    fail(
      'invalid_argument',
      'createRowForecaster.metadata',
      'the metadata of a model of one series (a model of many: createSeriesForecasters, or seriesMetadata for one of them)',
      `a model of ${forecastPanel(metadata)?.ids.length} series`,
    );
  const translator = createTranslator(metadata);
  const inputNames = translator.inputNames;
  const outputNames = translator.outputNames;
  const targetCount = outputNames.length;
  const streams = runtime.streams(1);
  const rowsAhead = forecastRowsAhead(metadata);
  const members = metadata.members === undefined ? 1 : Number(metadata.members);
  const block = rowsAhead.length * targetCount;
  if (!Number.isInteger(members) || members < 1 || runtime.outputWidth !== members * block) {
    fail(
      'bad_weight_file',
      'metadata.members',
      `a count of members whose ${rowsAhead.length} × ${targetCount} forecasts make the model's ${runtime.outputWidth} outputs`,
      JSON.stringify(metadata.members) ?? 'nothing',
    );
  }
  const intervals = forecastIntervals(metadata, block);
  const output = new Float32Array(runtime.outputWidth);
  const combined = new Float64Array(block);
  const scratch = new Float64Array(members);
  const window = forecastWindow(metadata, inputNames.length, targetCount, rowsAhead.length);
  const farthest = new Float64Array(block);
  const named = (): Record<string, number> => {
    const record: Record<string, number> = {};
    const last = (rowsAhead.length - 1) * targetCount;
    for (let k = 0; k < targetCount; k++) record[outputNames[k]] = farthest[last + k];
    return record;
  };
  const checkOut = (out: { readonly length: number }) => {
    if (out.length < block)
      fail(
        'shape_mismatch',
        'out',
        `room for ${block} forecasts (${targetCount} target${targetCount === 1 ? '' : 's'} × ${rowsAhead.length} row${rowsAhead.length === 1 ? '' : 's'} ahead)`,
        `${out.length}`,
      );
  };
  const parts: ForecasterParts = {
    metadata,
    inputNames,
    outputNames,
    rowsAhead,
    members,
    intervals,
    streams,
    output,
    combined,
    scratch,
    farthest,
    named,
    checkOut,
  };
  if (window === null) return streamRowForecaster(parts);
  return windowRowForecaster(parts, window, runtime.inputWidth);
}
