/**
 * The shapes of a prepared series (prepare-series.ts makes them): the settings, the examples of sliding windows or
 * streams, the settings chosen from the data, and the scoring a caller hands its model's outputs to.
 */
import type { WeightMetadata } from '../weight-file.js';
import type { HeldOutReport } from './verdict.js';
import type { MissingRule } from './missing.js';
import type { Table } from './table.js';
import type { TimeColumn } from './time-column.js';
import type { ForecastBaselines, SeriesSplit } from './baselines-types.js';

/** How a series table is prepared (the command's flags; a user's program gives the same). */
export interface SeriesPreparation {
  /** Share of the rows for validation (stopping, keeping the best weights). */
  readonly validationShare: number;
  /** Share of the rows for the test, scored once for the verdict. */
  readonly testShare: number;
  /** Rows ahead: on sliding windows every row from 1 to it, on streams the row it names. */
  readonly horizon: number;
  /** Rows of a window (given), or of a stream's truncated-backpropagation window. */
  readonly window: number;
  /** Streams: steps back-propagated before each window. */
  readonly lookback: number;
  /** Streams: parallel streams; sliding windows: windows per batch (when given). */
  readonly streams: number;
  /** The seed of the training examples' shuffle. */
  readonly seed: string;
  /** The time column, by name (default: found by its name or values). */
  readonly timeColumn?: string;
  /** How the series becomes examples (default: sliding windows up to SLIDING_ROWS training rows). */
  readonly examples?: 'sliding' | 'streams';
  /** The settings given (by flag name: window, streams, epochs, patience, hidden); the others are chosen from the data. */
  readonly given?: ReadonlySet<string>;
  /** Sliding windows only: forecast the correction to an exponential smoothing forecast. */
  readonly hybrid?: boolean;
  /**
   * Sliding windows only: read the targets as logarithms ('yes'), never ('no', the default), or where the season's
   * swing grows with the level ('auto'; see series-windows.ts, which says why it is not the default).
   */
  readonly log?: 'auto' | 'yes' | 'no';
  /** Sliding windows only: read calendar positions of the time column (default true when its spacing is known). */
  readonly calendar?: boolean;
  /** The input columns (default: every numeric column). */
  readonly columns?: readonly string[];
  /** The columns to forecast (default: the input columns). */
  readonly targets?: readonly string[];
  /** Rows in a season for the seasonal baselines; null for none; undefined to find one. */
  readonly season?: number | null;
  /** Streams only: forecast the change (differences, log returns) instead of the level. */
  readonly transform?: 'none' | 'differences' | 'log-returns';
  /**
   * How missing readings are handled (missing.ts): filled by interpolating across gaps ('interpolate', the default),
   * by carrying the last value ('carry'), or left out of every training window ('segments'); or refused ('refuse':
   * an error at the first missing cell or skipped time).
   */
  readonly missing?: MissingRule;
  /** The longest gap (rows) a training window may hold (default: half the window); longer gaps cut the series. */
  readonly gapLimit?: number;
  /** Cells read as missing besides the standard markers (empty, NA, N/A, NaN, null, None, -). */
  readonly missingMarkers?: readonly string[];
  /**
   * The column naming each series of a long table (one model across them all: panel.ts); null for none; undefined
   * to find one (a text column whose values name series that share times).
   */
  readonly idColumn?: string | null;
  /** Many series: a series too short for a window, the horizon and its parts is left out with a note ('skip', the default) or refused. */
  readonly shortSeries?: 'skip' | 'refuse';
  /** Many series: the model also reads which series a window is from (a 0/1 input per series: a learned vector each). */
  readonly idInputs?: boolean;
}

/** What a series of many (panel.ts) is prepared with, beyond its settings: the choices shared by every series. */
export interface PanelPart {
  /** Columns never read as numbers (the id column). */
  readonly leaveOut: readonly string[];
  /** Columns with a "was missing" input in every series (those with holes in any). */
  readonly flagged: readonly string[];
  /** The series' place among them, for 0/1 series inputs (absent without them). */
  readonly code?: {
    /** This series' place, from 0. */
    readonly index: number;
    /** How many series there are. */
    readonly count: number;
  };
}

/** One training example of sliding windows: the window's numbers, row-major, and its targets. */
export interface WindowExample {
  /** [rows, input width], row-major. */
  readonly values: number[];
  /** One number per target and row ahead (rows ahead outer). */
  readonly target: number[];
  /** With missing targets: 1 per target observed, 0 per target never observed (it counts in no loss). */
  readonly targetWeights?: number[];
}

/** The examples of sliding windows. */
export interface SeriesWindows {
  /** Sliding windows. */
  readonly kind: 'windows';
  /** Training windows (to shuffle). */
  readonly train: readonly WindowExample[];
  /** Validation windows, every row ahead in the validation part (for the validation loss). */
  readonly validation: readonly WindowExample[];
  /** The windows whose outputs `validationFigure` reads, in order. */
  readonly validationForecasts: readonly WindowExample[];
  /** The windows whose outputs `heldOut` reads, in order. */
  readonly test: readonly WindowExample[];
  /** Windows per batch. */
  readonly batch: number;
}

/** The examples of long streams: the series normalised, row-major, read by the caller in three readings. */
export interface SeriesStreams {
  /** Long streams. */
  readonly kind: 'streams';
  /** Every row's inputs, normalised per column, row-major. */
  readonly values: readonly number[];
  /** Numbers per row. */
  readonly features: number;
  /** The targets: input columns forecast `horizon` rows on, or explicit per-row values (a transform's changes). */
  readonly targets:
    | {
        /** Indexes into a row of the columns forecast. */
        readonly columns: readonly number[];
      }
    | {
        /** Per row, `width` target numbers, row-major. */
        readonly values: readonly number[];
        /** Targets per row. */
        readonly width: number;
      };
  /** With missing targets: per row, 1 per target observed and 0 per target missing (row-major like `targets.values`). */
  readonly targetWeights?: readonly number[];
  /** Rows ahead of each target. */
  readonly horizon: number;
  /** Rows [0, trainEnd) train; [trainEnd, testStart) validate; [testStart, rows) test. */
  readonly trainEnd: number;
  /** The first test row. */
  readonly testStart: number;
  /** Rows in the series. */
  readonly rows: number;
  /** Steps per truncated-backpropagation window. */
  readonly window: number;
  /** Steps back-propagated before each window. */
  readonly lookback: number;
  /** Parallel streams. */
  readonly streams: number;
}

/** The settings a preparation chose from the data (for settings not given), and why, for the first line. */
export interface ChosenSettings {
  /** Passes over the training examples (at most: see patience). */
  readonly epochs?: number;
  /** Validations without improvement before stopping. */
  readonly patience?: number;
  /** Hidden units per layer. */
  readonly hidden?: number;
  /** In words, for the first line of output. */
  readonly said: string;
}

/** A series table prepared for training and judging. */
export interface PreparedSeries {
  /** Numbers per step the model reads. */
  readonly inputWidth: number;
  /** Numbers per step it outputs (targets × rows ahead). */
  readonly outputWidth: number;
  /** The examples to train on. */
  readonly examples: SeriesWindows | SeriesStreams;
  /** What the weight file must record. */
  readonly metadata: WeightMetadata;
  /** What preparation did, for the user (columns left out, the time column, notes on the table). */
  readonly notes: readonly string[];
  /** Settings chosen from the data. */
  readonly chosen?: ChosenSettings;
  /**
   * The validation figure (MAE in the data's units for one target, mean MASE for several) from the model's outputs,
   * `width` numbers per example (members stacked side by side: their median is taken): on the windows of
   * `validationForecasts` in order, or on streams at every row of the validation reading.
   */
  validationFigure(outputs: ArrayLike<number>, width: number): number;
  /**
   * The model and every baseline on the test part, from the model's outputs as `validationFigure` takes them; with
   * `intervals`, the prediction intervals scored too (coverage, mean width, MSIS).
   */
  heldOut(outputs: ArrayLike<number>, width: number, intervals?: ForecastIntervals): HeldOutReport;
  /**
   * Split conformal half-widths at `level` from the validation part's errors (outputs as `validationFigure` takes
   * them): one per row ahead and target (rows ahead outer), Infinity where the part is too short for the level.
   */
  intervals(outputs: ArrayLike<number>, width: number, level: number): number[];
  /**
   * Sliding windows: the validation part's errors (actual − forecast, data units) per row ahead and target (rows
   * ahead outer), outputs as `validationFigure` takes them; what `intervals` ranks, for pooling across series.
   */
  validationErrors?(outputs: ArrayLike<number>, width: number): number[][];
  /** Per target, the MASE scale (in-sample seasonal naive error over the fitting rows). */
  readonly scales?: readonly number[];
  /** Sliding windows: each baseline's name and validation errors as `validationErrors` gives the model's (in the report's order). */
  baselineErrors?(): {
    /** The baseline's short name. */
    readonly name: string;
    /** Its errors per row ahead and target (rows ahead outer). */
    readonly errors: number[][];
  }[];
}

/** Prediction intervals of a forecast model: forecast ± halfWidth, per row ahead and target (rows ahead outer). */
export interface ForecastIntervals {
  /** The share of values they are meant to cover (0.95 for 95%). */
  readonly level: number;
  /** Half-widths in the data's units. */
  readonly halfWidth: readonly number[];
  /**
   * The baselines' half-widths, per baseline in the report's order (as halfWidth); absent, each baseline's are made
   * from its own validation errors (many series pool them across series: panel.ts).
   */
  readonly baselines?: readonly (readonly number[])[];
}

/** The column that names each series of a long table. */
export interface SeriesIdColumn {
  /** Its index in the header. */
  readonly index: number;
  /** Its name. */
  readonly name: string;
  /** True when found from the table (not named by the caller). */
  readonly found: boolean;
}

/** Prepares one series' table (prepare-series.ts' prepareTable, passed in so the modules do not import each other). */
export type PrepareOne = (table: Table, time: TimeColumn | null, options: SeriesPreparation, part: PanelPart) => PreparedSeries;

/** What prepareSeries has read and decided before the examples are made. */
export interface SeriesContext {
  readonly table: Table;
  readonly file: string;
  readonly values: readonly (readonly number[])[];
  /** Header indexes of the input columns. */
  readonly columns: readonly number[];
  /** Indexes into `columns` of the targets. */
  readonly targetIndexes: readonly number[];
  readonly trainEnd: number;
  readonly testStart: number;
  readonly horizon: number;
  readonly season: number | null;
  readonly options: SeriesPreparation;
  readonly split: SeriesSplit;
  readonly baselines: ForecastBaselines;
  readonly notes: readonly string[];
  readonly metadata: WeightMetadata;
  readonly context: readonly string[];
  readonly what: string;
  readonly time: TimeColumn | null;
  /** Per input column, its count of missing values. */
  readonly missing: readonly number[];
  /** One series of many (panel.ts): the choices shared with the others; its validation figure is then MASE. */
  readonly panel?: PanelPart;
}
