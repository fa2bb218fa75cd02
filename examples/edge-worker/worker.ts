/**
 * A forecaster in an edge worker: a standard fetch-handler module (`export default { fetch }`, the shape Deno Deploy,
 * Cloudflare-style and other worker runtimes call) that loads a weight file once, then answers each POST of rows
 * with the forecasts made at the last of them and their prediction intervals. It reads the model from the URL in
 * `env.MODEL_URL` (or a weight file's text in `env.MODEL`), and uses nothing but the runtime (`@weft/io/runtime`) and
 * the row forecaster of `@weft/io`: no Node built-in, no file system.
 *
 * POST a JSON body `{ "rows": [{ "time": "…", "air_temperature_c": 21.4, … }, …] }` (at least the model's window of
 * rows, oldest first) → `{ "rowsAhead": [1, …], "forecasts": { "<target>": [...] }, "low": {…}, "high": {…} }`.
 * A bad request is a 400 with a one-line message naming what was wrong.
 */
import { WeftError } from '@weft/core';
import { createRowForecaster } from '@weft/io';
import type { ForecastRow } from '@weft/io';
import { createRuntime } from '@weft/io/runtime';
import type { Runtime } from '@weft/io/runtime';

/** What the worker runtime gives the handler: where the model is. */
export interface WorkerEnvironment {
  /** A URL the weight file is fetched from (once per worker). */
  readonly MODEL_URL?: string;
  /** Or the weight file's text itself. */
  readonly MODEL?: string;
}

let loaded: Promise<Runtime> | null = null;

/** The runtime, made once per worker from the weight file the environment names. */
function runtimeOf(env: WorkerEnvironment): Promise<Runtime> {
  loaded ??=
    env.MODEL !== undefined
      ? createRuntime(env.MODEL)
      : env.MODEL_URL !== undefined
        ? createRuntime(new URL(env.MODEL_URL))
        : Promise.reject(new Error('set MODEL_URL or MODEL to a weight file'));
  return loaded;
}

const answer = (status: number, body: unknown) => new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/json' } });

export default {
  async fetch(request: Request, env: WorkerEnvironment): Promise<Response> {
    if (request.method !== 'POST') return answer(405, { error: 'POST a JSON body {"rows": [...]}' });
    let body: unknown;
    try {
      body = await request.json();
    } catch {
      return answer(400, { error: 'the body is not JSON' });
    }
    const rows = (body as { rows?: unknown }).rows;
    if (!Array.isArray(rows) || rows.length === 0) return answer(400, { error: 'the body needs "rows": an array of rows, oldest first' });
    const runtime = await runtimeOf(env);
    // A forecaster per request: its window fills from this request's rows alone.
    const forecaster = createRowForecaster(runtime, runtime.metadata);
    if (rows.length < forecaster.warmUp) return answer(400, { error: `at least ${forecaster.warmUp} rows (the model's window), got ${rows.length}` });
    const made = new Float64Array(forecaster.rowsAhead.length * forecaster.outputNames.length);
    try {
      rows.forEach((row, i) => forecaster.nextInto(row as ForecastRow, made, `rows[${i}]`));
    } catch (error) {
      if (error instanceof WeftError) return answer(400, { error: error.message });
      throw error;
    }
    const targets = forecaster.outputNames;
    const pick = (shift: (v: number, i: number) => number) =>
      Object.fromEntries(targets.map((t, k) => [t, forecaster.rowsAhead.map((_, s) => shift(made[s * targets.length + k], s * targets.length + k))]));
    const half = forecaster.intervals?.halfWidth;
    return answer(200, {
      rowsAhead: forecaster.rowsAhead,
      forecasts: pick((v) => v),
      ...(half === undefined ? {} : { level: forecaster.intervals!.level, low: pick((v, i) => v - half[i]), high: pick((v, i) => v + half[i]) }),
    });
  },
};
