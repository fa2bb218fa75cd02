/** A small line chart on a canvas: training loss, validation loss (dots) and gradient norm (own scale). */
import type { ChartPoint } from './protocol.js';

export class LossChart {
  readonly training: ChartPoint[] = [];
  readonly validation: ChartPoint[] = [];
  readonly gradientNorm: ChartPoint[] = [];
  private readonly canvas: HTMLCanvasElement;

  constructor(canvas: HTMLCanvasElement) {
    this.canvas = canvas;
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
    const context = this.canvas.getContext('2d');
    if (context === null) return;
    const { width, height } = this.canvas;
    const pad = 36;
    context.fillStyle = 'white';
    context.fillRect(0, 0, width, height);
    context.strokeStyle = '#999';
    context.strokeRect(pad, 8, width - 2 * pad, height - pad - 8);
    const steps = Math.max(1, ...this.training.map((p) => p.step), ...this.validation.map((p) => p.step));
    const losses = [...this.training, ...this.validation].map((p) => p.value).filter(Number.isFinite);
    const high = Math.max(1e-9, ...losses);
    const norms = this.gradientNorm.map((p) => p.value).filter(Number.isFinite);
    const normHigh = Math.max(1e-9, ...norms);
    const x = (step: number) => pad + ((width - 2 * pad) * step) / steps;
    const y = (value: number, top: number) => 8 + (height - pad - 8) * (1 - value / top);
    const line = (points: ChartPoint[], top: number, colour: string) => {
      context.strokeStyle = colour;
      context.beginPath();
      points.forEach((p, i) => (i === 0 ? context.moveTo(x(p.step), y(p.value, top)) : context.lineTo(x(p.step), y(p.value, top))));
      context.stroke();
    };
    line(this.gradientNorm, normHigh, '#bbb');
    line(this.training, high, '#2c6fbb');
    context.fillStyle = '#c0392b';
    for (const p of this.validation) {
      context.beginPath();
      context.arc(x(p.step), y(p.value, high), 3, 0, 2 * Math.PI);
      context.fill();
    }
    context.fillStyle = '#333';
    context.font = '11px sans-serif';
    context.fillText(high.toPrecision(3), 2, 16);
    context.fillText('0', 2, height - pad);
    context.fillText(`step ${steps}`, width - pad - 40, height - 10);
    context.fillText(normHigh.toPrecision(3), width - pad + 2, 16);
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
