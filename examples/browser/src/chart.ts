/**
 * Line charts on canvases: training loss and validation loss (dots) on one, and the gradient norm on a small one of
 * its own (it has its own units, and drawn over the losses it hid them).
 */
import type { ChartPoint } from './protocol.js';

export class LossChart {
  readonly training: ChartPoint[] = [];
  readonly validation: ChartPoint[] = [];
  readonly gradientNorm: ChartPoint[] = [];
  private readonly canvas: HTMLCanvasElement;
  private readonly normCanvas: HTMLCanvasElement | null;

  constructor(canvas: HTMLCanvasElement, normCanvas: HTMLCanvasElement | null = null) {
    this.canvas = canvas;
    this.normCanvas = normCanvas;
  }

  clear(): void {
    this.training.length = 0;
    this.validation.length = 0;
    this.gradientNorm.length = 0;
    this.draw();
  }

  add(training: ChartPoint[], validation: ChartPoint[], gradientNorm: ChartPoint[]): void {
    for (const p of training) this.training.push(p);
    for (const p of validation) this.validation.push(p);
    for (const p of gradientNorm) this.gradientNorm.push(p);
    this.draw();
  }

  draw(): void {
    const largest = (values: readonly number[], floor: number) => values.reduce((a, b) => (Number.isFinite(b) && b > a ? b : a), floor);
    const steps = largest([...this.training.map((p) => p.step), ...this.validation.map((p) => p.step)], 1);
    const losses = [...this.training, ...this.validation].map((p) => p.value);
    const high = largest(losses, 1e-9);
    const low = losses.reduce((a, b) => (Number.isFinite(b) && b < a ? b : a), Infinity);
    // A log scale where the losses span more than a decade, so the first steps do not flatten the rest.
    const frame = this.frame(this.canvas, steps, high, low > 0 && high / low > 10 ? low : null);
    if (frame === null) return;
    const { context, x, y } = frame;
    frame.line(this.training, '#2c6fbb');
    context.fillStyle = '#c0392b';
    for (const p of this.validation) {
      context.beginPath();
      context.arc(x(p.step), y(p.value), 3, 0, 2 * Math.PI);
      context.fill();
    }
    if (this.normCanvas === null) return;
    const norms = this.frame(
      this.normCanvas,
      steps,
      largest(
        this.gradientNorm.map((p) => p.value),
        1e-9,
      ),
    );
    norms?.line(this.gradientNorm, '#777');
  }

  /**
   * A cleared canvas with its frame and labels (the lowest and highest value on the left, the last step below), and
   * its scales: linear from 0, or logarithmic from `logLow`.
   */
  private frame(canvas: HTMLCanvasElement, steps: number, high: number, logLow: number | null = null) {
    const context = canvas.getContext('2d');
    if (context === null) return null;
    const { width, height } = canvas;
    const pad = 36;
    const bottom = height > 120 ? pad : 16;
    context.fillStyle = 'white';
    context.fillRect(0, 0, width, height);
    context.strokeStyle = '#999';
    context.strokeRect(pad, 8, width - 2 * pad, height - bottom - 8);
    const x = (step: number) => pad + ((width - 2 * pad) * step) / steps;
    const share = logLow === null ? (value: number) => value / high : (value: number) => Math.log(value / logLow) / Math.log(high / logLow);
    const y = (value: number) => 8 + (height - bottom - 8) * (1 - share(value));
    context.fillStyle = '#333';
    context.font = '11px sans-serif';
    context.fillText(high.toPrecision(3), 2, 16);
    context.fillText(logLow === null ? '0' : logLow.toPrecision(3), 2, height - bottom);
    if (logLow !== null) context.fillText('log scale', pad + 4, 20);
    if (bottom === pad) context.fillText(`step ${steps}`, width - pad - 40, height - 10);
    const line = (points: readonly ChartPoint[], colour: string) => {
      context.strokeStyle = colour;
      context.beginPath();
      points.forEach((p, i) => (i === 0 ? context.moveTo(x(p.step), y(p.value)) : context.lineTo(x(p.step), y(p.value))));
      context.stroke();
    };
    return { context, x, y, line };
  }
}

/** The held-out part of a series and the model's one-step forecasts of it, with the band of its intervals, on one scale. */
export function drawForecast(canvas: HTMLCanvasElement, actual: readonly number[], forecast: readonly number[], halfWidth = NaN): void {
  const context = canvas.getContext('2d');
  if (context === null) return;
  const { width, height } = canvas;
  const pad = 36;
  context.fillStyle = 'white';
  context.fillRect(0, 0, width, height);
  context.strokeStyle = '#999';
  context.strokeRect(pad, 8, width - 2 * pad, height - pad - 8);
  const band = Number.isFinite(halfWidth);
  const all = [...actual, ...forecast, ...(band ? forecast.flatMap((f) => [f - halfWidth, f + halfWidth]) : [])].filter(Number.isFinite);
  if (all.length === 0) return;
  const low = all.reduce((a, b) => Math.min(a, b), Infinity);
  const high = all.reduce((a, b) => Math.max(a, b), -Infinity);
  const span = high - low || 1;
  const x = (i: number) => pad + ((width - 2 * pad) * i) / Math.max(1, actual.length - 1);
  const y = (v: number) => 8 + (height - pad - 8) * (1 - (v - low) / span);
  const line = (values: readonly number[], colour: string, thickness: number) => {
    context.strokeStyle = colour;
    context.lineWidth = thickness;
    context.beginPath();
    values.forEach((v, i) => (i === 0 ? context.moveTo(x(i), y(v)) : context.lineTo(x(i), y(v))));
    context.stroke();
  };
  // The band first, the forecast ± the half-width, under both lines.
  if (band) {
    context.fillStyle = 'rgba(44, 111, 187, 0.18)';
    context.beginPath();
    forecast.forEach((f, i) => (i === 0 ? context.moveTo(x(i), y(f + halfWidth)) : context.lineTo(x(i), y(f + halfWidth))));
    for (let i = forecast.length - 1; i >= 0; i--) context.lineTo(x(i), y(forecast[i] - halfWidth));
    context.closePath();
    context.fill();
  }
  // The held-out values wide and pale, so a close forecast drawn over them leaves them visible.
  line(actual, '#bbb', 4);
  line(forecast, '#2c6fbb', 1.5);
  context.lineWidth = 1;
  context.fillStyle = '#333';
  context.font = '11px sans-serif';
  context.fillText(high.toPrecision(4), 2, 16);
  context.fillText(low.toPrecision(4), 2, height - pad);
  context.fillText(`${actual.length} held-out values`, width - pad - 110, height - 10);
}
