/**
 * The row forecaster of a model trained on sliding windows (metadata `window`; forecaster.ts says what the window
 * means): it keeps the last `rows` rows in a ring, and once the ring is full each row resets the stream and reads
 * the window again, oldest row first, every value relative to the window's last row over its column's deviation;
 * the outputs (the members' median) times `targetDeviation` are the change from the last row's level (or, for a
 * hybrid, the correction to the smoothing forecast made at it), through exp for a column read as a logarithm.
 * Missing readings are filled in each window by the recorded rule from the rows up to it, as in training.
 */
import { fail } from '@weft/core';
import { medianOfMembers } from '@weft/cells';
import { SmoothingStepper } from './data/smoothing.js';
import { calendarInputsAt } from './data/calendar.js';
import { parseTime } from './data/time-column.js';
import { forecastMissing } from './forecast-metadata.js';
import type { ForecastWindow } from './forecast-metadata.js';
import { fillColumn, missingTest } from './data/missing.js';
import type { MissingRecord } from './data/missing.js';
import { valueAt } from './forecast-row.js';
import type { ForecastRow, RowForecaster } from './forecast-row.js';
import type { ForecasterParts } from './forecast-streams.js';

/** Room for forecasts: anything indexable with a length. */
type Out = { [index: number]: number; readonly length: number };

/** The row forecaster of a windowed model (see the file's comment); `inputWidth` is what the model reads per row. */
export function windowRowForecaster(parts: ForecasterParts, window: ForecastWindow, modelInputWidth: number): RowForecaster {
  return new WindowForecaster(parts, window, modelInputWidth);
}

class WindowForecaster implements RowForecaster {
  readonly inputNames: readonly string[];
  readonly readNames: readonly string[];
  readonly outputNames: readonly string[];
  readonly rowsAhead: readonly number[];
  readonly members: number;
  readonly intervals: ForecasterParts['intervals'];
  readonly warmUp: number;
  readonly takesMissing: boolean;
  private readonly width: number;
  private readonly targets: readonly number[];
  private steppers: SmoothingStepper[] | null;
  private readonly calendar: NonNullable<ForecastWindow['calendar']>;
  private readonly timeColumn: string | null;
  /** Each row as kept: the raw values, (hybrid) the smoothing forecast made at it per target, and its time. */
  private readonly timeSlot: number;
  private readonly stride: number;
  private readonly missing: MissingRecord | null;
  private readonly isMissing: ((text: string) => boolean) | null;
  private readonly flagged: readonly number[];
  private readonly flagAt: number;
  /** The last `rows` rows, oldest first once full: ring[(start + k) % rows] is the k-th row of the window. */
  private readonly ring: Float64Array;
  private readonly input: Float32Array;
  private seen = 0;
  private readonly rowValues: Float64Array;
  /** The hybrid's forecasts made at the last row, every row ahead. */
  private readonly bases: Float64Array;
  private readonly logged: readonly boolean[];
  /** Missing readings: the window's values filled (row-major), and per column the last value observed in a row that has left the window, and that row's number. */
  private readonly filled: Float64Array;
  private readonly before: Float64Array;
  private readonly beforeRow: Float64Array;
  private readonly edges = new Float64Array(4);
  private readonly season: number;

  constructor(
    private readonly parts: ForecasterParts,
    private readonly window: ForecastWindow,
    modelInputWidth: number,
  ) {
    const { metadata, inputNames, outputNames, rowsAhead } = parts;
    const width = inputNames.length;
    const w = window.rows;
    this.inputNames = inputNames;
    this.outputNames = outputNames;
    this.rowsAhead = rowsAhead;
    this.members = parts.members;
    this.intervals = parts.intervals;
    this.warmUp = w;
    this.width = width;
    this.targets = outputNames.map((t) => inputNames.indexOf(t));
    this.steppers = this.freshSteppers();
    this.calendar = window.calendar ?? [];
    this.timeColumn = this.calendar.length > 0 ? String(metadata.timeColumn) : null;
    this.readNames = this.timeColumn === null ? inputNames : [...inputNames, this.timeColumn];
    const hybrids = this.steppers === null ? 0 : this.steppers.length;
    this.timeSlot = width + hybrids;
    this.stride = this.timeSlot + 1;
    this.missing = forecastMissing(metadata, width);
    this.takesMissing = this.missing !== null;
    this.isMissing = this.missing === null ? null : missingTest(this.missing.markers);
    this.flagged = this.missing?.flagged ?? [];
    this.flagAt = this.timeSlot + 2 * this.calendar.length;
    // One series of many with series inputs: a 0/1 input per series after the flags, its own 1 (set once: never rewritten).
    const code = seriesInputOf(metadata);
    const inputWidth = this.flagAt + this.flagged.length + (code?.count ?? 0);
    this.ring = new Float64Array(w * this.stride);
    this.input = new Float32Array(inputWidth);
    if (code !== null) this.input[this.flagAt + this.flagged.length + code.index] = 1;
    if (modelInputWidth !== inputWidth)
      fail(
        'bad_weight_file',
        'metadata',
        `a record of the ${modelInputWidth} inputs the model reads`,
        `${inputWidth} inputs (${width} columns${hybrids > 0 ? `, ${hybrids} smoothing forecasts` : ''}${this.calendar.length > 0 ? `, ${2 * this.calendar.length} calendar inputs` : ''}${this.flagged.length > 0 ? `, ${this.flagged.length} missing flags` : ''}${code === null ? '' : `, ${code.count} series inputs`})`,
      );
    this.rowValues = new Float64Array(width);
    this.bases = new Float64Array(outputNames.length * rowsAhead.length);
    this.logged = window.log ?? inputNames.map(() => false);
    this.filled = new Float64Array(w * width);
    this.before = new Float64Array(width).fill(Number.NaN);
    this.beforeRow = new Float64Array(width).fill(-1);
    this.season = typeof metadata.season === 'number' ? metadata.season : 0;
  }

  nextInto(row: ForecastRow, out: Out, where = 'row'): boolean {
    const { width, inputNames, timeColumn, rowValues } = this;
    for (let j = 0; j < width; j++) rowValues[j] = valueAt(row, inputNames[j], where, this.isMissing);
    let time = Number.NaN;
    if (timeColumn !== null) {
      const raw = Object.hasOwn(row, timeColumn) ? row[timeColumn] : undefined;
      time = raw instanceof Date ? raw.getTime() : raw === undefined ? Number.NaN : parseTime(String(raw));
      if (Number.isNaN(time))
        fail(
          'bad_data',
          `${where}.${timeColumn}`,
          `a time in column ${JSON.stringify(timeColumn)} (the model reads where in the calendar each row falls)`,
          raw === undefined ? 'nothing' : JSON.stringify(String(raw).slice(0, 80)),
        );
    }
    return this.advance(rowValues, time, out, where);
  }

  nextValuesInto(values: ArrayLike<number>, out: Out): boolean {
    return this.advance(values, this.timeColumn === null ? Number.NaN : values[this.width], out, 'values');
  }

  next(row: ForecastRow, where?: string): Record<string, number> | null {
    return this.nextInto(row, this.parts.farthest, where) ? this.parts.named() : null;
  }

  reset(): void {
    this.seen = 0;
    this.before.fill(Number.NaN);
    this.beforeRow.fill(-1);
    this.steppers = this.freshSteppers();
    this.parts.streams.reset();
  }

  private freshSteppers(): SmoothingStepper[] | null {
    return this.window.hybrid?.map((p) => new SmoothingStepper(p, this.parts.rowsAhead[0])) ?? null;
  }

  /** One more row: kept in the ring; once the window is full, its forecasts into `out` (true), else false. */
  private advance(values: ArrayLike<number>, time: number, out: Out, where: string): boolean {
    this.parts.checkOut(out);
    this.checkRow(values, time, where);
    this.keep(values, time, where);
    if (this.seen < this.warmUp) return false;
    this.fillWindow();
    this.readWindow();
    this.forecastsInto(out);
    return true;
  }

  /** Every value finite (NaN too where the model takes missing readings), and the time where the model reads one. */
  private checkRow(values: ArrayLike<number>, time: number, where: string): void {
    const { width, inputNames, missing, timeColumn } = this;
    for (let j = 0; j < width; j++) {
      if (!Number.isFinite(values[j]) && !(missing !== null && Number.isNaN(values[j])))
        fail(
          'bad_data',
          `${where}.${inputNames[j]}`,
          missing === null ? 'a finite number' : 'a finite number, or NaN for a missing reading',
          String(values[j]),
        );
    }
    if (timeColumn !== null && !Number.isFinite(time))
      fail(
        'bad_data',
        `${where}.${timeColumn}`,
        `a time (milliseconds since 1970-01-01 UTC) for column ${JSON.stringify(timeColumn)}, last: the model reads where in the calendar each row falls`,
        String(time),
      );
  }

  /** The row into the ring (its logarithms where read), with the hybrid's forecasts made at it and its time. */
  private keep(values: ArrayLike<number>, time: number, where: string): void {
    const { width, ring, logged, steppers, rowsAhead, bases } = this;
    const w = this.warmUp;
    const at = (this.seen % w) * this.stride;
    if (this.missing !== null && this.seen >= w) {
      // The row leaving the window: its readings become the last seen before the window.
      for (let j = 0; j < width; j++) {
        if (Number.isNaN(ring[at + j])) continue;
        this.before[j] = ring[at + j];
        this.beforeRow[j] = this.seen - w;
      }
    }
    for (let j = 0; j < width; j++) {
      const v = values[j];
      if (logged[j] && !(v > 0) && !Number.isNaN(v))
        fail('bad_data', `${where}.${this.inputNames[j]}`, 'a number > 0 (the model reads its logarithm)', String(v));
      ring[at + j] = logged[j] ? Math.log(v) : v;
    }
    // The hybrid's forecasts made at this row: the nearest row ahead kept with the row, every row ahead in `bases`.
    if (steppers !== null) {
      for (let k = 0; k < steppers.length; k++) {
        steppers[k].nextFrom(ring, at + this.targets[k], rowsAhead, bases, k * rowsAhead.length);
        ring[at + width + k] = bases[k * rowsAhead.length];
      }
    }
    ring[at + this.timeSlot] = time;
    this.seen++;
  }

  /** The window's values, oldest first, with any missing reading filled by the recorded rule. */
  private fillWindow(): void {
    const { width, ring, filled, stride, missing, edges } = this;
    const w = this.warmUp;
    const start = this.seen % w;
    for (let k = 0; k < w; k++) {
      const from = ((start + k) % w) * stride;
      for (let j = 0; j < width; j++) filled[k * width + j] = ring[from + j];
    }
    if (missing === null) return;
    const first = this.seen - w;
    for (let j = 0; j < width; j++) {
      edges[0] = this.before[j];
      edges[1] = this.beforeRow[j] - first;
      edges[2] = missing.fallback[j];
      edges[3] = this.season;
      fillColumn(filled, j, width, w, edges, 0, missing.rule);
    }
  }

  /** The stream reset and stepped through the window, each row relative to the last over its deviation. */
  private readWindow(): void {
    const { width, ring, filled, stride, input, targets, timeSlot, flagged, flagAt } = this;
    const deviation = this.window.deviation;
    const w = this.warmUp;
    const start = this.seen % w;
    const last = (w - 1) * width;
    const streams = this.parts.streams;
    streams.reset();
    for (let k = 0; k < w; k++) {
      const from = ((start + k) % w) * stride;
      for (let j = 0; j < width; j++) input[j] = (filled[k * width + j] - filled[last + j]) / deviation[j];
      for (let i = width; i < timeSlot; i++) input[i] = (ring[from + i] - filled[last + targets[i - width]]) / deviation[targets[i - width]];
      if (this.timeColumn !== null) calendarInputsAt(this.calendar, ring, from + timeSlot, input, timeSlot);
      for (let i = 0; i < flagged.length; i++) input[flagAt + i] = Number.isNaN(ring[from + flagged[i]]) ? 1 : 0;
      streams.step(input, this.parts.output);
    }
  }

  /** The members' median of the outputs, in real units: each row ahead's forecast of each target. */
  private forecastsInto(out: Out): void {
    const { output, combined, scratch } = this.parts;
    const { rowsAhead, targets, logged, steppers, bases, filled } = this;
    const targetCount = targets.length;
    const last = (this.warmUp - 1) * this.width;
    medianOfMembers(output, 0, this.members, rowsAhead.length * targetCount, combined, scratch);
    for (let s = 0; s < rowsAhead.length; s++) {
      for (let k = 0; k < targetCount; k++) {
        const base = steppers === null ? filled[last + targets[k]] : bases[k * rowsAhead.length + s];
        const made = base + combined[s * targetCount + k] * this.window.targetDeviation[s * targetCount + k];
        out[s * targetCount + k] = logged[targets[k]] ? Math.exp(made) : made;
      }
    }
  }
}

/** The series input of one series of many (metadata `seriesInput`, from seriesMetadata), checked, or null. */
function seriesInputOf(metadata: Readonly<Record<string, unknown>>): { index: number; count: number } | null {
  const code = metadata.seriesInput as { index?: unknown; count?: unknown } | undefined;
  if (code === undefined) return null;
  if (!(Number.isInteger(code.count) && Number.isInteger(code.index) && (code.index as number) >= 0 && (code.index as number) < (code.count as number))) {
    fail('bad_weight_file', 'metadata.seriesInput', "a series' index among a count of series", JSON.stringify(code).slice(0, 80));
  }
  return code as { index: number; count: number };
}
