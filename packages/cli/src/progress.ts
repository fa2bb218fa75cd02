/**
 * Showing training progress: on a terminal, one line redrawn in place (percent done, step, epoch, loss, the
 * latest validation, positions per second, time to go); elsewhere (a pipe, a log file, CI), a plain line at each validation and every tenth of the
 * run.
 */
import type { TrainingEvent } from '@weft/optim';

export function formatSeconds(seconds: number): string {
  if (!Number.isFinite(seconds)) return '?';
  const s = Math.round(seconds);
  return s >= 60 ? `${Math.floor(s / 60)}m${String(s % 60).padStart(2, '0')}s` : `${s}s`;
}

/**
 * The redrawn line cut to one character less than the terminal's width (80 when it does not say): a line that
 * wraps leaves its first rows behind at every redraw, since `\r` returns only to the start of the last row.
 */
export function fitToWidth(text: string, columns: number | undefined): string {
  const width = Math.max(10, (columns !== undefined && columns > 0 ? columns : 80) - 1);
  const characters = [...text];
  return characters.length <= width ? text : `${characters.slice(0, width - 1).join('')}…`;
}

export class ProgressView {
  private readonly stream: NodeJS.WriteStream;
  private readonly interactive: boolean;
  private lastValidation = '';
  private lastDrawn = 0;
  private lastPlainTenth = -1;

  /**
   * `maeScale`: the factor that turns the validation MAE (on normalised values) into the data's units, when there
   * is one (a forecast of one column: its deviation); null shows it as normalised.
   */
  constructor(
    stream: NodeJS.WriteStream = process.stderr,
    private readonly maeScale: number | null = null,
  ) {
    this.stream = stream;
    this.interactive = stream.isTTY === true;
  }

  show(event: TrainingEvent): void {
    if (event.kind === 'validation') {
      const mae =
        this.maeScale === null
          ? `MAE ${event.validationMetric!.toPrecision(4)} normalised`
          : `MAE ${(event.validationMetric! * this.maeScale).toPrecision(4)} in data units`;
      const metric = event.validationMetricName === 'accuracy' ? `accuracy ${(event.validationMetric! * 100).toFixed(1)}%` : mae;
      this.lastValidation = `validation loss ${event.validationLoss!.toPrecision(4)}, ${metric}`;
      if (!this.interactive) this.plain(event, true);
      return;
    }
    if (event.kind === 'skipped') {
      this.line(`step ${event.step}: ${event.reason ?? 'update skipped'}`);
      return;
    }
    if (event.kind !== 'step') return;
    if (this.interactive) {
      const now = Date.now();
      if (now - this.lastDrawn < 100 && event.step !== event.totalSteps) return;
      this.lastDrawn = now;
      // Our one-line layout: how far (percent, then step of total), where in the data (epoch), how it goes (loss,
      // then the latest validation), how fast and how long to go; cut to the terminal's width, least urgent last.
      const percent = `${Math.floor((100 * event.step) / event.totalSteps)}%`.padStart(4);
      const speed = event.positionsPerSecond >= 10_000 ? `${(event.positionsPerSecond / 1000).toFixed(1)}k` : `${Math.round(event.positionsPerSecond)}`;
      const parts = [`${percent}  step ${event.step} of ${event.totalSteps}`, `epoch ${event.epoch}`, `loss ${event.loss.toPrecision(4)}`];
      if (this.lastValidation !== '') parts.push(this.lastValidation);
      parts.push(`${speed} positions/s`, `done in ${formatSeconds(event.secondsLeft)}`);
      const text = parts.join(' · ');
      this.stream.write(`\r\x1b[2K${fitToWidth(text, this.stream.columns)}`);
    } else {
      const tenth = Math.floor((10 * event.step) / event.totalSteps);
      if (tenth !== this.lastPlainTenth) {
        this.lastPlainTenth = tenth;
        this.plain(event, false);
      }
    }
  }

  /** Ends the redrawn line before other output. */
  finish(): void {
    if (this.interactive) this.stream.write('\n');
  }

  line(text: string): void {
    if (this.interactive) this.stream.write(`\r\x1b[2K${text}\n`);
    else this.stream.write(`${text}\n`);
  }

  private plain(event: TrainingEvent, validation: boolean): void {
    const parts = [`step ${event.step}/${event.totalSteps}`, `epoch ${event.epoch}`, `loss ${event.loss.toPrecision(4)}`];
    if (validation) parts.push(this.lastValidation);
    else
      parts.push(
        `gradient norm ${Number.isFinite(event.gradientNorm) ? event.gradientNorm.toPrecision(3) : '-'}`,
        `rate ${event.learningRate.toPrecision(3)}`,
        `${Math.round(event.positionsPerSecond)} tok/s`,
        `${formatSeconds(event.secondsLeft)} left`,
      );
    this.stream.write(`${parts.join('  ')}\n`);
  }
}
