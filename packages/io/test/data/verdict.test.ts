/**
 * The test comparison in words (data/verdict.ts): the verdict names the best baseline and the gap in the metric's
 * own units (percentage points for accuracy, never a relative percentage of an accuracy), whichever way it goes;
 * the confusion counts and classes never predicted are shown. Figures are worked by hand.
 */
import { describe, expect, it } from 'vitest';
import { classificationReport, reportLines, verdict } from '@weft/io';
import type { HeldOutReport } from '@weft/io';

const forecast = (model: number): HeldOutReport => ({
  metric: 'MAE',
  lowerIsBetter: true,
  what: 'test rows',
  model: { name: 'model', description: '', value: model },
  baselines: [
    { name: 'persistence', description: 'the value now', value: 2 },
    { name: 'linear', description: 'least squares', value: 1.6 },
  ],
  names: ['level'],
});

describe('the verdict', () => {
  it('compares a forecast with the best baseline in the data units, both ways', () => {
    expect(verdict(forecast(1.2))).toBe(
      "verdict: the model beats every baseline: MAE 1.2 against 1.6 for the best baseline, linear (0.4 lower in the data's units, 25.0%)",
    );
    expect(verdict(forecast(1.8))).toBe(
      "verdict: the model does NOT beat the baseline linear: MAE 1.8 against its 1.6 (0.2 higher in the data's units, 12.5%); use the baseline, or train longer (--epochs, --patience), on more data, or with other settings",
    );
  });

  it("states prediction intervals' coverage, width and MSIS, and says so when coverage strays more than 5 points from the level", () => {
    const near = reportLines({ ...forecast(1.2), intervals: { level: 0.95, coverage: 0.93, meanWidth: 2.5, msis: 4.25, count: 200 } });
    expect(near).toContain(
      "  prediction intervals at 95% (split conformal on the validation part's errors): coverage 93.0% of 200 values, mean width 2.5, MSIS 4.25",
    );
    const far = reportLines({ ...forecast(1.2), intervals: { level: 0.95, coverage: 0.864, meanWidth: 2.289, msis: 3.124, count: 888 } });
    expect(far).toContain(
      "  prediction intervals at 95% (split conformal on the validation part's errors): coverage 86.4% of 888 values, mean width 2.289, MSIS 3.124; more than 5 points from the 95% asked: do not rely on these intervals at this level",
    );
  });

  it('gives accuracy gaps in percentage points and lists counts and classes never predicted', () => {
    const scores = classificationReport([0, 0, 1, 1, 2], [0, 0, 1, 0, 0], 3);
    const majority = classificationReport([0, 0, 1, 1, 2], [0, 0, 0, 0, 0], 3);
    const report: HeldOutReport = {
      metric: 'accuracy',
      lowerIsBetter: false,
      what: '5 sequences',
      model: { name: 'model', description: '', value: scores.accuracy, scores },
      baselines: [{ name: 'majority class', description: 'always calm', value: majority.accuracy, scores: majority }],
      names: ['calm', 'gusty', 'storm'],
    };
    const lines = reportLines(report);
    expect(lines.at(-1)).toBe(
      'verdict: the model beats every baseline: accuracy 60.0% against 40.0% for the best, majority class (20.0 percentage points higher)',
    );
    expect(lines).toContain('  calm: precision 0.5, recall 1, F1 0.6667 (2 held out, predicted 4 times)');
    expect(lines).toContain('    calm       2       0       0');
    expect(lines).toContain('   storm       1       0       0');
    expect(lines).toContain('never predicted: storm');
  });
});
