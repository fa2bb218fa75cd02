/**
 * The figures of many series (panel.ts) in one report, and their intervals pooled over series: per series the
 * model's MASE and each baseline's; overall the means over series (so series of different sizes count alike); and
 * split conformal half-widths (Vovk, Gammerman & Shafer 2005) from the validation errors of every series, each in
 * units of its series' MASE scale, for the model and for each baseline method alike.
 */
import { conformalHalfWidth } from './intervals.js';
import type { IntervalScores } from './intervals.js';
import type { ForecastErrors } from './scores.js';
import type { Contender, HeldOutReport, SeriesFigures } from './verdict.js';

/**
 * Per series, half-widths per row ahead and target from the pooled errors of every series (`errors[i][c]`, series i,
 * row ahead and target c), each divided by its series' scale of that target: the pooled conformal quantile times the
 * series' scale.
 */
export function pooledHalfWidths(errors: readonly (readonly (readonly number[])[])[], scales: readonly (readonly number[])[], level: number): number[][] {
  const targets = scales[0].length;
  const quantiles = errors[0].map((_, c) =>
    conformalHalfWidth(
      errors.flatMap((e, i) => e[c].map((v) => v / usable(scales[i][c % targets]))),
      level,
    ),
  );
  return errors.map((_, i) => quantiles.map((q, c) => q * usable(scales[i][c % targets])));
}

/**
 * Per series, per baseline in its own order, the half-widths pooled across the series that have that baseline
 * (`errors[i]`: series i's baselines, each with its errors per row ahead and target; `scales[i]`: its scale per target).
 */
export function pooledBaselineWidths(
  errors: readonly (readonly { readonly name: string; readonly errors: readonly (readonly number[])[] }[])[],
  scales: readonly (readonly number[])[],
  level: number,
): number[][][] {
  const byName = new Map<string, number[][]>();
  for (const name of new Set(errors.flatMap((e) => e.map((b) => b.name)))) {
    const having = errors.flatMap((e, i) => (e.some((b) => b.name === name) ? [i] : []));
    const widths = pooledHalfWidths(
      having.map((i) => errors[i].find((b) => b.name === name)!.errors),
      having.map((i) => scales[i]),
      level,
    );
    having.forEach((i, n) => byName.set(`${i}:${name}`, [widths[n]]));
  }
  return errors.map((e, i) => e.map((b) => byName.get(`${i}:${b.name}`)![0]));
}

/** A scale that divides: a series that never changed has scale 0, and its errors count in its own units. */
const usable = (scale: number) => (scale > 0 && Number.isFinite(scale) ? scale : 1);

/**
 * The figures of many series in one report: per series the model's MASE and each baseline's; overall, the mean over
 * series for the model and for each baseline method fitted to every series (a method missing from some series, such
 * as a seasonal one where a series has no room for it, is left out of the means, and said).
 */
export function panelReport(ids: readonly string[], reports: readonly HeldOutReport[], what: string, context: readonly string[]): HeldOutReport {
  const mase = (c: Contender | undefined) => c?.overall?.mase ?? NaN;
  const names = reports[0].baselines.map((b) => b.name).filter((name) => reports.every((r) => r.baselines.some((b) => b.name === name)));
  const dropped = [...new Set(reports.flatMap((r) => r.baselines.map((b) => b.name)))].filter((n) => !names.includes(n));
  const mean = (values: readonly number[]) => values.reduce((a, b) => a + b, 0) / values.length;
  const meanErrors = (pick: (r: HeldOutReport) => Contender | undefined): ForecastErrors => {
    const all = reports.map((r) => pick(r)?.overall);
    const smapes = all.map((e) => e?.smape).filter((v): v is number => typeof v === 'number');
    return {
      mae: NaN,
      rmse: NaN,
      mape: null,
      smape: smapes.length === all.length ? mean(smapes) : null,
      mase: mean(all.map((e) => e?.mase ?? NaN)),
      count: all.reduce((n, e) => n + (e?.count ?? 0), 0),
    };
  };
  const pooled = (pick: (r: HeldOutReport) => IntervalScores | undefined): IntervalScores | undefined => {
    const scores = reports.map(pick);
    if (scores.some((s) => s === undefined)) return undefined;
    const all = scores as IntervalScores[];
    const count = all.reduce((n, s) => n + s.count, 0);
    const weighted = (f: (s: IntervalScores) => number) => all.reduce((sum, s) => sum + f(s) * s.count, 0) / count;
    return {
      level: all[0].level,
      coverage: weighted((s) => s.coverage),
      meanWidth: NaN,
      msis: all.every((s) => s.msis !== null) ? weighted((s) => s.msis as number) : null,
      count,
    };
  };
  const contender = (name: string, description: string, pick: (r: HeldOutReport) => Contender | undefined): Contender => {
    const overall = meanErrors(pick);
    const intervals = pooled((r) => pick(r)?.intervals ?? (name === 'model' ? r.intervals : undefined));
    return { name, description, value: overall.mase ?? NaN, overall, ...(intervals === undefined ? {} : { intervals }) };
  };
  const { intervals: modelIntervals, ...model } = contender('model', '', (r) => r.model);
  const baselines = names.map((name) => contender(name, `fitted to each series on its own`, (r) => r.baselines.find((b) => b.name === name)));
  const series: SeriesFigures[] = reports.map((r, i) => {
    const own = names.map((name) => ({ name, value: mase(r.baselines.find((b) => b.name === name)) }));
    const best = own.reduce((a, b) => (b.value < a.value ? b : a));
    return { id: ids[i], model: mase(r.model), baselines: own, best: best.name };
  });
  return {
    metric: 'MASE',
    lowerIsBetter: true,
    what,
    model,
    baselines,
    names: reports[0].names,
    context: [...context, ...(dropped.length === 0 ? [] : [`left out of the means: ${dropped.join(', ')} (not fitted to every series)`])],
    series,
    ...(modelIntervals === undefined ? {} : { intervals: modelIntervals }),
  };
}
