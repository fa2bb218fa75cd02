/**
 * The page: reads the form, starts training in the worker, draws the chart as progress arrives, and uses the
 * inference runtime on the trained (or loaded) weight file to generate text or forecast. `window.weftPage` gives
 * the browser test a handle on the same actions a person takes.
 */
import { Random } from '@weft/core';
import { createRuntime, generateTokens } from '@weft/io/runtime';
import type { Runtime } from '@weft/io/runtime';
import { createTranslator } from '@weft/io/translate';
import { LossChart, drawForecast } from './chart.js';
import type { FromWorker, ToWorker } from './protocol.js';
import { parseNumbers, sampleText } from './training.js';
import type { HeldOut, TrainingConfig } from './training.js';

const $ = <T extends HTMLElement>(id: string) => document.getElementById(id) as T;
const worker = new Worker(new URL('./worker.js', import.meta.url), { type: 'module' });
const chart = new LossChart($<HTMLCanvasElement>('chart'), $<HTMLCanvasElement>('norm-chart'));
const status = $('status');
const output = $('output');
let weightFile: string | null = null;
let runtime: Runtime | null = null;
let lastDone: Extract<FromWorker, { type: 'done' }> | null = null;
let lastChecks: Extract<FromWorker, { type: 'checked' }> | null = null;
const waiting: ((message: FromWorker) => void)[] = [];

// A timer that should fire every 100 ms; how late it fires shows whether the page stays responsive.
const timer = { expected: 0, worst: 0, ticks: 0, running: false };
function startTimer(): void {
  timer.worst = 0;
  timer.ticks = 0;
  timer.running = true;
  timer.expected = performance.now() + 100;
  const tick = () => {
    if (!timer.running) return;
    const now = performance.now();
    timer.worst = Math.max(timer.worst, now - timer.expected);
    timer.ticks++;
    timer.expected = now + 100;
    setTimeout(tick, 100);
  };
  setTimeout(tick, 100);
}

$<HTMLTextAreaElement>('data').value = sampleText.repeat(3);

/** Training threads of the run in progress (1: the page's worker alone). */
let threadsInUse = 1;
const threadWords = (count: number): string => (count > 1 ? `${count} worker threads (the page is cross-origin isolated)` : 'one worker thread');

function config(): TrainingConfig {
  const kind = (document.querySelector('input[name=kind]:checked') as HTMLInputElement).value as 'text' | 'numbers';
  return {
    kind,
    data: $<HTMLTextAreaElement>('data').value,
    cell: $<HTMLSelectElement>('cell').value as TrainingConfig['cell'],
    hidden: Number($<HTMLInputElement>('hidden').value),
    epochs: Number($<HTMLInputElement>('epochs').value),
    rate: Number($<HTMLInputElement>('rate').value),
    seed: $<HTMLInputElement>('seed').value,
    window: 24,
    streams: 4,
  };
}

worker.onmessage = (event: MessageEvent<FromWorker>) => {
  const message = event.data;
  if (message.type === 'started') {
    threadsInUse = message.workers;
    status.textContent = `training on ${threadWords(threadsInUse)}…`;
    return;
  }
  if (message.type === 'progress') {
    chart.add(message.training, message.validation, message.gradientNorm);
    status.textContent = `training on ${threadWords(threadsInUse)}: step ${message.step} of ${message.totalSteps}`;
  } else if (message.type === 'done') {
    timer.running = false;
    lastDone = message;
    status.textContent = `trained ${message.steps} steps on the ${message.backend} backend, ${threadWords(message.workers)}; last loss ${message.lastLoss.toPrecision(5)}`;
    showHeldOut(message.heldOut);
    void useWeights(message.weightFile);
  } else if (message.type === 'checked') {
    lastChecks = message;
    output.textContent = message.reports.map((r) => `${r.passed ? 'ok  ' : 'FAIL'} ${r.label}: worst relative error ${r.worst.toExponential(2)}`).join('\n');
  } else {
    timer.running = false;
    status.textContent = `failed: ${message.message}`;
  }
  $<HTMLButtonElement>('train').disabled = false;
  $<HTMLButtonElement>('stop').disabled = message.type !== 'progress';
  for (const resolve of waiting.splice(0)) resolve(message);
};

/** The test figures beside the baselines and the verdict, worded as weft train words them, and (numbers) the forecast chart. */
function showHeldOut(heldOut: HeldOut): void {
  $('heldout').textContent = heldOut.lines.join('\n');
  const canvas = $<HTMLCanvasElement>('forecast-chart');
  canvas.hidden = heldOut.actual === undefined;
  $('forecast-legend').hidden = heldOut.actual === undefined;
  if (heldOut.actual !== undefined && heldOut.forecast !== undefined) drawForecast(canvas, heldOut.actual, heldOut.forecast, heldOut.halfWidth);
}

async function useWeights(text: string): Promise<void> {
  weightFile = text;
  runtime = await createRuntime(text);
  $<HTMLButtonElement>('generate').disabled = false;
  $<HTMLButtonElement>('download').disabled = false;
}

function train(extra: Partial<TrainingConfig> = {}): void {
  chart.clear();
  startTimer();
  $<HTMLButtonElement>('train').disabled = true;
  $<HTMLButtonElement>('stop').disabled = false;
  status.textContent = 'training…';
  worker.postMessage({ type: 'train', config: { ...config(), ...extra } } satisfies ToWorker);
}

/** Generated text, or forecasts for the numbers in the box, from the current weight file. */
function generate(): string {
  if (runtime === null) return '';
  const meta = runtime.metadata as { task?: string; vocabulary?: string[]; normalisation?: { mean: number[]; deviation: number[] } };
  if (meta.task === 'next-token' && meta.vocabulary !== undefined) {
    const vocabulary = meta.vocabulary;
    const prefix = [...'the '].map((c) => Math.max(0, vocabulary.indexOf(c)));
    const tokens = generateTokens(runtime, { prefix, length: 120, random: new Random(4), temperature: 0.7 });
    return [...prefix, ...tokens].map((id) => vocabulary[id]).join('');
  }
  return forecast(parseNumbers($<HTMLTextAreaElement>('data').value))
    .map((v) => v.toFixed(3))
    .join(', ');
}

/** One-step-ahead forecasts for every value of a series, through the runtime. */
function forecast(values: number[]): number[] {
  if (runtime === null) return [];
  const translator = createTranslator(runtime.metadata);
  const streams = runtime.streams(1);
  const input = new Float32Array(1);
  return values.map((v) => translator.outputs(streams.step(translator.inputs({ value: v }, input))).value);
}

$('train').addEventListener('click', () => train());
$('stop').addEventListener('click', () => worker.postMessage({ type: 'stop' } satisfies ToWorker));
$('generate').addEventListener('click', () => (output.textContent = generate()));
$('download').addEventListener('click', () => {
  if (weightFile === null) return;
  const link = document.createElement('a');
  link.href = URL.createObjectURL(new Blob([weightFile], { type: 'application/json' }));
  link.download = 'model.weft.json';
  link.click();
  setTimeout(() => URL.revokeObjectURL(link.href), 1000);
});
$<HTMLInputElement>('load').addEventListener('change', async (event) => {
  const file = (event.target as HTMLInputElement).files?.[0];
  if (file === undefined) return;
  try {
    await useWeights(await file.text());
    status.textContent = `loaded ${file.name}`;
  } catch (error) {
    status.textContent = `could not load ${file.name}: ${(error as Error).message}`;
  }
});

function next(): Promise<FromWorker> {
  return new Promise((resolve) => waiting.push(resolve));
}

async function until(type: FromWorker['type']): Promise<FromWorker> {
  for (;;) {
    const message = await next();
    if (message.type === type || message.type === 'failed') return message;
  }
}

/** Handles for the browser test: the same actions as the buttons, plus what they produced. */
const handle = {
  async runGradientChecks() {
    worker.postMessage({ type: 'check' } satisfies ToWorker);
    await until('checked');
    return lastChecks?.reports ?? [];
  },
  async trainFor(settings: Partial<TrainingConfig>) {
    train(settings);
    const message = await until('done');
    if (message.type === 'failed') throw new Error(message.message);
    return {
      steps: lastDone!.steps,
      lastLoss: lastDone!.lastLoss,
      lastLossBits: lastDone!.lastLossBits,
      backend: lastDone!.backend,
      workers: lastDone!.workers,
      status: status.textContent ?? '',
      heldOut: lastDone!.heldOut,
      heldOutText: $('heldout').textContent ?? '',
      timerWorstLateness: timer.worst,
      timerTicks: timer.ticks,
    };
  },
  chartPoints: () => ({
    training: chart.training.length,
    validation: chart.validation.length,
    gradientNorm: chart.gradientNorm.length,
    firstLoss: chart.training[0]?.value,
    lastLoss: chart.training.at(-1)?.value,
  }),
  forecast: (values: number[]) => forecast(values),
  generate: () => generate(),
  hasWeights: () => runtime !== null,
};
(window as unknown as { weftPage: typeof handle }).weftPage = handle;
