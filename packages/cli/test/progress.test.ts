import { describe, expect, it } from 'vitest';
import type { TrainingEvent } from '@weft/optim';
import { ProgressView, fitToWidth, formatSeconds } from '../src/progress.js';

/** A stand-in terminal that records what is written to it. */
function terminal(columns: number | undefined, isTTY = true): { stream: NodeJS.WriteStream; written: string[] } {
  const written: string[] = [];
  const stream = { isTTY, columns, write: (text: string) => written.push(text) === 0 } as unknown as NodeJS.WriteStream;
  return { stream, written };
}

const event = (step: number, kind: TrainingEvent['kind'] = 'step'): TrainingEvent => ({
  kind,
  step,
  epoch: 3,
  totalSteps: 12_000,
  loss: 0.123456,
  gradientNorm: 1.5,
  learningRate: 0.01,
  positionsPerSecond: 123_456,
  secondsLeft: 4000,
  validationLoss: 0.25,
  validationMetric: 1.234567,
  validationMetricName: 'meanAbsoluteError',
});

describe('the progress line', () => {
  it('never grows wider than the terminal less one column, so a redraw leaves no stale rows', () => {
    for (const columns of [80, 40, 200]) {
      const { stream, written } = terminal(columns);
      const view = new ProgressView(stream, 2.5);
      view.show(event(10, 'validation'));
      view.show(event(12_000));
      const drawn = written
        .join('')
        .split('\r\x1b[2K')
        .filter((part) => part !== '');
      expect(drawn.length).toBeGreaterThan(0);
      for (const part of drawn) expect([...part].length, `at ${columns} columns: ${part}`).toBeLessThanOrEqual(columns - 1);
      expect(drawn.at(-1)).toMatch(/^100% {2}step 12000 of 1200/);
      if (columns === 200)
        expect(drawn.at(-1)).toBe(
          '100%  step 12000 of 12000 · epoch 3 · loss 0.1235 · validation loss 0.2500, MAE 3.086 in data units · 123.5k positions/s · done in 66m40s',
        );
      else expect(drawn.at(-1)?.endsWith('…')).toBe(true);
    }
  });

  it('assumes 80 columns when the terminal does not say, and cuts with an ellipsis', () => {
    const long = 'x'.repeat(200);
    expect(fitToWidth(long, undefined)).toBe(`${'x'.repeat(78)}…`);
    expect(fitToWidth('short', 80)).toBe('short');
    expect([...fitToWidth('é'.repeat(100), 30)]).toHaveLength(29);
  });

  it('writes plain lines, uncut, when the output is not a terminal', () => {
    const { stream, written } = terminal(undefined, false);
    const view = new ProgressView(stream, null);
    view.show(event(1));
    expect(written).toEqual(['step 1/12000  epoch 3  loss 0.1235  gradient norm 1.50  rate 0.0100  123456 tok/s  66m40s left\n']);
  });

  it('words durations in seconds, then minutes and seconds', () => {
    expect([formatSeconds(9.4), formatSeconds(61), formatSeconds(Infinity)]).toEqual(['9s', '1m01s', '?']);
  });
});
