import { describe, expect, it } from 'vitest';
import { runResults } from '../src/results.js';
import type { HeldOutReport } from '../src/datasets.js';
import type { TrainingSummary } from '@weft/optim';

const summary = (loss: number | null): TrainingSummary =>
  ({
    steps: 40,
    stoppedBy: 'patience',
    lastLoss: 0.5,
    keptStep: 32,
    skippedUpdates: 0,
    bestValidation: loss === null ? null : { loss, metric: 1.2, metricName: 'meanAbsoluteError', count: 10 },
  }) as unknown as TrainingSummary;

const report = (metric: string, lowerIsBetter: boolean, model: number, baselines: [string, number][]): HeldOutReport => ({
  metric,
  lowerIsBetter,
  what: 'held out',
  names: [],
  model: { name: 'model', description: '', value: model },
  baselines: baselines.map(([name, value]) => ({ name, description: '', value })),
});

describe("a run's results", () => {
  it("name the best baseline by the figure's direction: the lowest MAE, the highest accuracy, skipping non-finite ones", () => {
    const forecast = runResults(
      summary(0.12),
      report('MAE', true, 1.4, [
        ['persistence', 2.0],
        ['linear', 1.8],
        ['seasonal naive', Number.NaN],
      ]),
      '/out.weft.json',
    );
    expect(forecast).toEqual({
      validationLoss: 0.12,
      validationFigure: null,
      steps: 40,
      stoppedBy: 'patience',
      metric: 'MAE',
      lowerIsBetter: true,
      model: 1.4,
      bestBaseline: { name: 'linear', value: 1.8 },
      out: '/out.weft.json',
    });
    const classify = runResults(
      summary(null),
      report('accuracy', false, 0.9, [
        ['majority class', 0.4],
        ['other', 0.6],
      ]),
      'x',
    );
    expect([classify.validationLoss, classify.bestBaseline]).toEqual([null, { name: 'other', value: 0.6 }]);
  });
});
