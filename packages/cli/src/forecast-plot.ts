/**
 * Forecasts as an SVG picture (`weft run --plot FILE.svg`): per series, its values, the model's forecasts of them
 * and the band of the prediction intervals, on the series' own scale; several series as small pictures, two to a
 * row. Each picture shows at most its last MAX_PLOTTED_ROWS rows, so a long file stays a readable picture of a few
 * tens of KB.
 */

/** One series drawn: each row's value, the forecast made for that row, and its interval (NaN where there is none). */
export interface ForecastTrace {
  /** Its name (the series' id, or the target's name). */
  readonly title: string;
  /** The value of each row (NaN where missing). */
  readonly actual: readonly number[];
  /** The forecast made for each row, from the rows before it (NaN before the model's first). */
  readonly forecast: readonly number[];
  /** The interval's lower end for each row (NaN without one). */
  readonly low: readonly number[];
  /** Its upper end. */
  readonly high: readonly number[];
}

/** The most rows one picture shows (its last ones). */
export const MAX_PLOTTED_ROWS = 240;

/** How many of the shown rows fall inside their interval, of those with a value and an interval (for the caption). */
function covered(trace: ForecastTrace, from: number): [number, number] {
  let inside = 0;
  let count = 0;
  for (let i = from; i < trace.actual.length; i++) {
    const v = trace.actual[i];
    if (!Number.isFinite(v) || !Number.isFinite(trace.low[i]) || !Number.isFinite(trace.high[i])) continue;
    count++;
    if (v >= trace.low[i] && v <= trace.high[i]) inside++;
  }
  return [inside, count];
}

const xmlText = (text: string) => text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');

/** Runs of consecutive finite points, as "x,y x,y …" lists (a gap breaks a line). */
function runs(values: readonly number[], x: (i: number) => number, y: (v: number) => number): string[] {
  const out: string[] = [];
  let current: string[] = [];
  values.forEach((v, i) => {
    if (Number.isFinite(v)) current.push(`${x(i).toFixed(1)},${y(v).toFixed(1)}`);
    else if (current.length > 0) {
      out.push(current.join(' '));
      current = [];
    }
  });
  if (current.length > 0) out.push(current.join(' '));
  return out;
}

/** The SVG of one or more series' forecasts (see the file's comment); `title` heads it, `level` names the band. */
export function forecastSvg(traces: readonly ForecastTrace[], title: string, level: number | null): string {
  const columns = traces.length > 1 ? 2 : 1;
  const cellWidth = columns === 1 ? 900 : 450;
  const cellHeight = 200;
  const top = 34;
  const legend = 22;
  const width = columns * cellWidth;
  const height = top + Math.ceil(traces.length / columns) * cellHeight + legend;
  const cells = traces.map((trace, n) => {
    const from = Math.max(0, trace.actual.length - MAX_PLOTTED_ROWS);
    const shown = (values: readonly number[]) => values.slice(from);
    const [actual, forecast, low, high] = [shown(trace.actual), shown(trace.forecast), shown(trace.low), shown(trace.high)];
    const all = [...actual, ...forecast, ...low, ...high].filter(Number.isFinite);
    const least = all.reduce((a, b) => Math.min(a, b), Infinity);
    const most = all.reduce((a, b) => Math.max(a, b), -Infinity);
    const span = most - least || 1;
    const left = (n % columns) * cellWidth + 56;
    const right = (n % columns) * cellWidth + cellWidth - 14;
    const upper = top + Math.floor(n / columns) * cellHeight + 20;
    const lower = upper + cellHeight - 48;
    const x = (i: number) => left + ((right - left) * i) / Math.max(1, actual.length - 1);
    const y = (v: number) => lower - ((lower - upper) * (v - least)) / span;
    // The band: for each run of rows with both ends, the upper ends left to right and the lower ends back.
    const band: string[] = [];
    let start = -1;
    for (let i = 0; i <= low.length; i++) {
      const open = i < low.length && Number.isFinite(low[i]) && Number.isFinite(high[i]);
      if (open && start < 0) start = i;
      if (!open && start >= 0) {
        const points: string[] = [];
        for (let k = start; k < i; k++) points.push(`${x(k).toFixed(1)},${y(high[k]).toFixed(1)}`);
        for (let k = i - 1; k >= start; k--) points.push(`${x(k).toFixed(1)},${y(low[k]).toFixed(1)}`);
        band.push(`<polygon fill="#9ec5ea" fill-opacity="0.55" stroke="none" points="${points.join(' ')}"/>`);
        start = -1;
      }
    }
    const [inside, count] = covered(trace, from);
    const caption = `${trace.title}${from > 0 ? ` (last ${actual.length} rows)` : ''}${count > 0 ? `: ${inside} of ${count} values inside the band` : ''}`;
    return [
      `<text x="${left}" y="${upper - 6}" font-size="12">${xmlText(caption)}</text>`,
      `<rect x="${left}" y="${upper}" width="${right - left}" height="${lower - upper}" fill="none" stroke="#ccc"/>`,
      ...band,
      ...runs(actual, x, y).map((p) => `<polyline fill="none" stroke="#555" stroke-width="1.6" points="${p}"/>`),
      ...runs(forecast, x, y).map((p) => `<polyline fill="none" stroke="#c0392b" stroke-width="1.3" points="${p}"/>`),
      `<text x="${left - 4}" y="${upper + 10}" text-anchor="end" font-size="10">${most.toPrecision(4)}</text>`,
      `<text x="${left - 4}" y="${lower}" text-anchor="end" font-size="10">${least.toPrecision(4)}</text>`,
    ].join('\n');
  });
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="sans-serif">
<rect width="${width}" height="${height}" fill="white"/>
<text x="${width / 2}" y="20" text-anchor="middle" font-size="14">${xmlText(title)}</text>
${cells.join('\n')}
<text x="${width / 2}" y="${height - 6}" text-anchor="middle" font-size="12"><tspan fill="#555">— values</tspan>   <tspan fill="#c0392b">— forecasts</tspan>${level === null ? '' : `   <tspan fill="#5b95cf">■ ${Number((100 * level).toFixed(1))}% prediction intervals</tspan>`}</text>
</svg>
`;
}

/**
 * Gathers one series' trace row by row as `weft run` reads it: each row's value, and each forecast at the row it is
 * for (`ahead` rows after the row it was made at); it keeps about the last MAX_PLOTTED_ROWS rows, so memory stays
 * bounded however long the input.
 */
export class TraceRecorder {
  private readonly columns: [number[], number[], number[], number[]] = [[], [], [], []];
  /** The row index of the first kept entry. */
  private first = 0;
  private last = -1;

  constructor(
    private readonly title: string,
    private readonly ahead: number,
  ) {}

  /** Row `row` (0-based): its value, and the forecast made at it for `ahead` rows on with its interval's half-width. */
  add(row: number, actual: number, forecast: number, halfWidth: number): void {
    this.put(0, row, actual);
    this.forecastAt(row + this.ahead, forecast, halfWidth);
    this.last = Math.max(this.last, row);
    const kept = this.columns[0].length;
    if (kept > 2 * MAX_PLOTTED_ROWS + this.ahead) {
      const drop = kept - MAX_PLOTTED_ROWS - this.ahead;
      for (const column of this.columns) column.splice(0, drop);
      this.first += drop;
    }
  }

  /** A forecast for row `row` (past the last row too, as `--ahead` makes them). */
  forecastAt(row: number, forecast: number, halfWidth: number): void {
    this.put(1, row, forecast);
    this.put(2, row, Number.isFinite(halfWidth) ? forecast - halfWidth : NaN);
    this.put(3, row, Number.isFinite(halfWidth) ? forecast + halfWidth : NaN);
  }

  private put(column: number, row: number, value: number): void {
    const at = row - this.first;
    if (at < 0) return;
    for (const c of this.columns) while (c.length <= at) c.push(NaN);
    this.columns[column][at] = value;
  }

  /** What was gathered, up to the farthest forecast. */
  trace(): ForecastTrace {
    const [actual, forecast, low, high] = this.columns;
    return { title: this.title, actual: [...actual], forecast: [...forecast], low: [...low], high: [...high] };
  }
}
