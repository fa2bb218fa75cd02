/** A training run's result as plain data: what `weft train --results FILE` writes and `weft sweep` ranks by. */
import type { TrainingSummary } from '@weft/optim';
import type { HeldOutReport } from './datasets.js';

/** A run's result as `--results` writes it: what a sweep ranks by and reports. */
export interface RunResults {
  /** The best validation loss (null without validation). */
  readonly validationLoss: number | null;
  /** Steps taken. */
  readonly steps: number;
  /** Why the run ended: `epochs`, `patience` or `signal`. */
  readonly stoppedBy: string;
  /** The model's figure on the validation part, in the test figure's units (null where there is none). */
  readonly validationFigure: number | null;
  /** The test figure's name: MAE (in the data's units), MASE, perplexity, accuracy or exact match. */
  readonly metric: string;
  /** True when a lower figure is better. */
  readonly lowerIsBetter: boolean;
  /** The model's test figure. */
  readonly model: number;
  /** The best baseline on the same test part. */
  readonly bestBaseline: { readonly name: string; readonly value: number } | null;
  /** The weight file written. */
  readonly out: string;
}

/** The result of a run as plain data (see RunResults). */
export function runResults(summary: TrainingSummary, heldOut: HeldOutReport, out: string, validationFigure: number | null = null): RunResults {
  const better = (a: number, b: number) => (heldOut.lowerIsBetter ? a < b : a > b);
  let best: { name: string; value: number } | null = null;
  for (const b of heldOut.baselines) if (Number.isFinite(b.value) && (best === null || better(b.value, best.value))) best = { name: b.name, value: b.value };
  return {
    validationLoss: summary.bestValidation?.loss ?? null,
    validationFigure: validationFigure !== null && Number.isFinite(validationFigure) ? validationFigure : null,
    steps: summary.steps,
    stoppedBy: summary.stoppedBy,
    metric: heldOut.metric,
    lowerIsBetter: heldOut.lowerIsBetter,
    model: heldOut.model.value,
    bestBaseline: best,
    out,
  };
}
