/**
 * What the browser page trains, as plain library calls shared by the page's worker and the Node side of the
 * browser test: the same configuration gives the same model, data and trainer in both places, so their losses
 * can be compared bit for bit.
 */
import { Tape, defaultBackend, setDefaultBackend, tensor } from '@weft/core';
import { buildModel } from '@weft/cells';
import type { SequenceModel } from '@weft/cells';
import { AdamRule, Trainer, streamBatches, wholeStream } from '@weft/optim';
import type { ShardWorkers, TrainableModel, TrainingEvent } from '@weft/optim';
import { buildVocabulary, prepareSeries, reportLines, textBaselines } from '@weft/io';
import type { HeldOutReport, SeriesStreams, WeightMetadata } from '@weft/io';

export interface TrainingConfig {
  /** `text`: next-character model; `numbers`: one column of numbers, forecast one step ahead. */
  readonly kind: 'text' | 'numbers';
  readonly data: string;
  readonly cell: 'lstm' | 'gru' | 'plain';
  readonly hidden: number;
  readonly epochs: number;
  readonly window: number;
  readonly streams: number;
  readonly rate: number;
  readonly seed: string;
  /** Stop after this many steps (for quick, comparable runs). */
  readonly maxSteps?: number;
  /** The kernels to train with (default: the library's choice, WebAssembly SIMD where the browser runs it). */
  readonly backend?: 'javascript' | 'webassembly';
  /**
   * Training threads to use (the page's worker starts them when the page is cross-origin isolated); 1 trains in
   * the worker itself. The weights are the same bits for any count (shards of SHARD_ROWS rows).
   */
  readonly workers?: number;
}

/** Rows per shard of a batch: fixed, so the number of threads changes the speed and never the weights. */
export const SHARD_ROWS = 2;

/** Starts threads for a model (Web Workers in the page, worker_threads in Node). */
export type StartThreads = (model: TrainableModel, count: number) => Promise<ShardWorkers>;

export interface Prepared {
  readonly model: SequenceModel;
  readonly trainer: Trainer;
  /** The threads the trainer uses, or null when it trains in its own thread (close them after the run). */
  readonly threads: ShardWorkers | null;
  readonly metadata: WeightMetadata;
  /** The model and the baselines on the held-out part, in the data's units (call after training). */
  readonly heldOut: () => HeldOut;
}

/** Test figures for the page: the same comparison and verdict as `weft train`, and for numbers the series the chart draws. */
export interface HeldOut {
  /** The model and the baselines on the test part. */
  readonly report: HeldOutReport;
  /** The comparison and the verdict in words, as weft train prints them (reportLines). */
  readonly lines: readonly string[];
  /** The test values and the model's one-step forecasts of them (numbers only). */
  readonly actual?: readonly number[];
  readonly forecast?: readonly number[];
  /** The half-width of the model's 95% prediction intervals (numbers only; Infinity when the validation part is too short). */
  readonly halfWidth?: number;
}

/** The level of the prediction intervals the page draws and scores. */
export const INTERVAL_LEVEL = 0.95;

/** The shares of the data for validation and for the test, as `weft train`'s defaults. */
export const VALIDATION_SHARE = 0.1;
export const TEST_SHARE = 0.1;

/** Where the validation and test parts start, in items (rows or characters), each at least `least` long. */
function parts(count: number, least: number): { trainEnd: number; testStart: number } {
  const test = Math.max(least, Math.round(count * TEST_SHARE));
  const validation = Math.max(least, Math.round(count * VALIDATION_SHARE));
  return { trainEnd: count - test - validation, testStart: count - test };
}

export function parseNumbers(text: string): number[] {
  const values = text
    .split(/[\s,;]+/)
    .filter((s) => s !== '')
    .map(Number);
  const bad = values.findIndex((v) => !Number.isFinite(v));
  if (bad >= 0) throw new Error(`item ${bad + 1} is not a number`);
  return values;
}

/** The backend the platform chose before any run asked for one. */
const platformBackend = defaultBackend();

/**
 * The model, trainer and held-out figures of a configuration; with `startThreads` and `config.workers` > 1 (and
 * more than one shard per batch), the trainer computes its shards on that many threads.
 */
export async function prepare(
  config: TrainingConfig,
  onProgress?: (event: TrainingEvent) => void,
  signal?: AbortSignal,
  startThreads?: StartThreads,
): Promise<Prepared> {
  // Everything below (the model, the batches, the trainer's buffers) is made on this backend.
  setDefaultBackend(config.backend ?? platformBackend);
  const count = Math.min(config.workers ?? 1, Math.ceil(config.streams / SHARD_ROWS));
  let threads: ShardWorkers | null = null;
  const threadsFor = async (model: TrainableModel) => {
    if (count > 1 && startThreads !== undefined) threads = await startThreads(model, count);
    return threads === null ? {} : { workers: threads };
  };
  const common = {
    optimizer: new AdamRule({ rate: config.rate }),
    epochs: config.epochs,
    gradientNormLimit: 1,
    seed: config.seed,
    onProgress,
    signal,
    shardRows: SHARD_ROWS,
  };
  if (config.kind === 'text') {
    // The vocabulary as weft train makes it: the unknown token first, then every character of the text.
    const symbols = buildVocabulary(config.data);
    const ids = Int32Array.from([...config.data].map((c) => symbols.indexOf(c)));
    const { trainEnd, testStart } = parts(ids.length, 2);
    const model = buildModel(
      {
        input: { kind: 'embedding', vocabulary: symbols.length, width: 12 },
        layers: [{ cell: config.cell, hidden: config.hidden }],
        readout: { width: symbols.length },
      },
      { seed: config.seed },
    );
    const trainer = new Trainer({
      ...common,
      ...(await threadsFor(model)),
      model,
      data: streamBatches({ kind: 'tokens', tokens: ids.slice(0, trainEnd), vocabulary: symbols.length }, { streams: config.streams, window: config.window }),
      validation: wholeStream(
        { kind: 'tokens', tokens: ids.slice(0, testStart), vocabulary: symbols.length },
        { window: config.window, scoredFrom: trainEnd - 1 },
      ),
      validateEvery: 10,
    });
    const heldOut = (): HeldOut => {
      // Perplexity of the test characters, each predicted from those before it (the state carried from the first
      // character), against unigram and Kneser–Ney models counted on the text before the test, as weft train does.
      const tape = new Tape({ recording: false });
      const outputs = model.run(tape, { tokens: ids, steps: ids.length, batch: 1 }).outputs.data;
      const vocabulary = symbols.length;
      let crossEntropy = 0;
      for (let t = testStart - 1; t + 1 < ids.length; t++) {
        let max = -Infinity;
        for (let k = 0; k < vocabulary; k++) max = Math.max(max, outputs[t * vocabulary + k]);
        let sum = 0;
        for (let k = 0; k < vocabulary; k++) sum += Math.exp(outputs[t * vocabulary + k] - max);
        crossEntropy += max + Math.log(sum) - outputs[t * vocabulary + ids[t + 1]];
      }
      tape.clear();
      const judged = textBaselines(ids, trainEnd, testStart, vocabulary, 6);
      const n = ids.length - testStart;
      const report: HeldOutReport = {
        metric: 'perplexity',
        lowerIsBetter: true,
        what: `the last ${n} characters, used for neither training nor stopping, each predicted from those before it`,
        model: { name: 'model', description: '', value: Math.exp(crossEntropy / n) },
        baselines: [
          { name: 'unigram', description: 'each character as often as in the text before the test (add-one)', value: judged.unigram },
          {
            name: `${judged.order}-gram`,
            description: `interpolated Kneser-Ney, order ${judged.order} of 1-6 chosen on the validation part`,
            value: judged.ngram,
          },
        ],
        names: [],
        context: [
          `parts of the text, in order: training ${trainEnd} characters; validation, for stopping and keeping weights, ${testStart - trainEnd}; test, scored once at the end, the last ${n}`,
        ],
      };
      return { report, lines: reportLines(report) };
    };
    return { model, trainer, threads, metadata: { task: 'next-token', tokens: 'characters', vocabulary: symbols }, heldOut };
  }
  // A column of numbers, prepared as weft train prepares a series (prepareSeries: the same parts, scaling,
  // baselines and verdict), read as long streams as the page's window and streams settings describe.
  const values = parseNumbers(config.data);
  const series = prepareSeries(`value\n${values.join('\n')}\n`, 'the series', {
    window: config.window,
    lookback: 0,
    streams: config.streams,
    validationShare: VALIDATION_SHARE,
    testShare: TEST_SHARE,
    horizon: 1,
    seed: config.seed,
    examples: 'streams',
  });
  const streams = series.examples as SeriesStreams;
  const { trainEnd, testStart } = streams;
  const model = buildModel(
    { input: { kind: 'values', width: 1 }, layers: [{ cell: config.cell, hidden: config.hidden }], readout: { width: 1 } },
    { seed: config.seed },
  );
  const trainer = new Trainer({
    ...common,
    ...(await threadsFor(model)),
    model,
    data: streamBatches({ kind: 'values', values: streams.values.slice(0, trainEnd), features: 1 }, { streams: config.streams, window: config.window }),
    validation: wholeStream({ kind: 'values', values: streams.values.slice(0, testStart), features: 1 }, { window: config.window, scoredFrom: trainEnd - 1 }),
    validateEvery: 10,
  });
  const heldOut = (): HeldOut => {
    // One-step forecasts over the whole series (state carried from the start), scored on the test part beside the
    // baselines, as weft train scores them.
    const tape = new Tape({ recording: false });
    const outputs = Array.from(model.run(tape, tensor([...streams.values], [values.length, 1, 1], 'f32')).outputs.data);
    tape.clear();
    // 95% intervals from the validation part's errors (split conformal, as weft train makes them), scored too.
    const made = outputs.slice(0, values.length - 1);
    const halfWidth = series.intervals(made, 1, INTERVAL_LEVEL);
    const report = series.heldOut(made, 1, { level: INTERVAL_LEVEL, halfWidth });
    const { mean, deviation } = series.metadata.normalisation as { mean: number[]; deviation: number[] };
    const positions: number[] = [];
    for (let t = testStart - 1; t + 1 < values.length; t++) positions.push(t);
    return {
      report,
      lines: reportLines(report),
      actual: positions.map((t) => values[t + 1]),
      forecast: positions.map((t) => outputs[t] * deviation[0] + mean[0]),
      halfWidth: halfWidth[0],
    };
  };
  return { model, trainer, threads, metadata: series.metadata, heldOut };
}

/** The f32 bit pattern of a number, as 8 hex digits. */
export function f32Bits(value: number): string {
  const view = new DataView(new ArrayBuffer(4));
  view.setFloat32(0, value);
  return view.getUint32(0).toString(16).padStart(8, '0');
}

/** An invented demo text for the page. */
export const sampleText =
  'the loom hums at dawn while the dyer stirs a vat of indigo. a shuttle flies left, then right; the warp threads rise and fall. by noon the bolt of cloth is long enough to cover the bench. the weaver counts the picks per inch and tightens the reed. at dusk the looms rest and the spools are stacked by colour. ';
