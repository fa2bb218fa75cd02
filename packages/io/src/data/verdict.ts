/**
 * Test comparisons in words: the model and every baseline on the same data, in the data's own units and
 * scale-free, and one verdict against the best baseline, worded in one place for `weft train`, `weft score`,
 * `weft sweep` and the browser page.
 */
import type { BaselineScore, StepErrors } from './baselines.js';
import type { ClassificationReport, ForecastErrors } from './scores.js';
import type { IntervalScores } from './intervals.js';

/** One row of a test comparison: a model or a baseline, and its figures. */
export interface Contender {
  /** "model", or the baseline's short name. */
  readonly name: string;
  /** How a baseline forecasts, in words (empty for the model). */
  readonly description: string;
  /** The figure the verdict compares (MAE, perplexity: lower is better; accuracy: higher). */
  readonly value: number;
  /** Forecast errors per target (forecasts only). */
  readonly perTarget?: readonly ForecastErrors[];
  /** Forecast errors over every target together (forecasts only). */
  readonly overall?: ForecastErrors;
  /** Forecast errors at each row ahead, nearest first (forecasts of several rows ahead only). */
  readonly byRowsAhead?: readonly StepErrors[];
  /** Classification scores (classify only). */
  readonly scores?: ClassificationReport;
  /** Transduction scores (pairs only). */
  readonly transduction?: TransductionFigures;
  /** Its prediction intervals on the test part (forecasts with intervals only). */
  readonly intervals?: IntervalScores;
}

/** An encoder-decoder's figures, each in [0, 1]. */
export interface TransductionFigures {
  /** Share of outputs equal to their reference. */
  readonly exactMatch: number;
  /** Share of reference tokens matched at their position. */
  readonly tokenAccuracy: number;
  /** Corpus BLEU (Papineni et al. 2002, no smoothing). */
  readonly bleu: number;
}

/** The model and every baseline on the same test data. */
export interface HeldOutReport {
  /** What `value` is: "MAE" (in the data's units), "MASE", "perplexity", "accuracy" or "exact match". */
  readonly metric: string;
  /** True when a lower figure is better. */
  readonly lowerIsBetter: boolean;
  /** What was scored, in words. */
  readonly what: string;
  /** The model's figures. */
  readonly model: Contender;
  /** Each baseline's figures, in a fixed order. */
  readonly baselines: readonly Contender[];
  /** Target names (forecasts), or class names (classify). */
  readonly names: readonly string[];
  /** Lines that say how the comparison was set up: the parts, the season and why, baselines left out. */
  readonly context?: readonly string[];
  /** The model's prediction intervals on the test part (forecasts with intervals only). */
  readonly intervals?: IntervalScores;
  /** Many series (panel.ts): each series' figures; the contenders' figures are then means over series. */
  readonly series?: readonly SeriesFigures[];
}

/** One series' figures on its test part, beside its baselines' (many series: panel.ts). */
export interface SeriesFigures {
  /** The series' id. */
  readonly id: string;
  /** The model's MASE. */
  readonly model: number;
  /** Each baseline's MASE, in the report's order of baselines. */
  readonly baselines: readonly {
    /** The baseline's short name. */
    readonly name: string;
    /** Its MASE on the series' test part. */
    readonly value: number;
  }[];
  /** The series' best baseline on its test part. */
  readonly best: string;
}

/** What a forecast comparison is made of. */
export interface ForecastReportParts {
  /** What was scored, in words. */
  readonly what: string;
  /** The model's errors on the scored positions. */
  readonly model: Pick<BaselineScore, 'perTarget' | 'overall' | 'byRowsAhead'>;
  /** The baselines' errors on the same positions. */
  readonly baselines: readonly BaselineScore[];
  /** The targets' names. */
  readonly names: readonly string[];
  /** Lines that say how the comparison was set up. */
  readonly context: readonly string[];
}

/** A forecast comparison: MAE in the data's units for one target; with several targets, the mean MASE (scale-free). */
export function forecastReport(parts: ForecastReportParts): HeldOutReport {
  const several = parts.names.length > 1;
  const value = (s: Pick<BaselineScore, 'overall'>) => (several ? (s.overall.mase ?? NaN) : s.overall.mae);
  return {
    metric: several ? 'MASE' : 'MAE',
    lowerIsBetter: true,
    what: parts.what,
    model: {
      name: 'model',
      description: '',
      value: value(parts.model),
      perTarget: parts.model.perTarget,
      overall: parts.model.overall,
      ...(parts.model.byRowsAhead === undefined ? {} : { byRowsAhead: parts.model.byRowsAhead }),
    },
    baselines: parts.baselines.map((b) => ({
      name: b.name,
      description: b.description,
      value: value(b),
      perTarget: b.perTarget,
      overall: b.overall,
      ...(b.byRowsAhead === undefined ? {} : { byRowsAhead: b.byRowsAhead }),
    })),
    names: parts.names,
    context: parts.context,
  };
}

const figure = (v: number): string => (Number.isFinite(v) ? Number(v.toPrecision(4)).toString() : String(v));
const percent = (v: number): string => `${(100 * v).toFixed(1)}%`;

function errorsText(e: ForecastErrors | undefined, units = true): string {
  if (e === undefined) return '';
  const scaleFree = `sMAPE ${e.smape === null ? 'undefined' : `${e.smape.toFixed(1)}%`}${e.mase === null ? '' : `  MASE ${figure(e.mase)}`}`;
  if (!units) return scaleFree;
  return `MAE ${figure(e.mae)}  RMSE ${figure(e.rmse)}  MAPE ${e.mape === null ? 'undefined (every actual value is 0)' : `${e.mape.toFixed(1)}%`}  ${scaleFree}`;
}

/** The contender that the verdict measures the model against: the best baseline. */
export function bestOf(report: HeldOutReport): Contender {
  return report.baselines.reduce((best, b) => ((report.lowerIsBetter ? b.value < best.value : b.value > best.value) ? b : best));
}

/** One line: does the model beat every baseline, and by how much in the metric's own units. */
export function verdict(report: HeldOutReport): string {
  const best = bestOf(report);
  const m = report.model.value;
  const better = report.lowerIsBetter ? m < best.value : m > best.value;
  if (report.metric === 'accuracy' || report.metric === 'exact match') {
    const metric = report.metric;
    const points = (100 * Math.abs(m - best.value)).toFixed(1);
    return better
      ? `verdict: the model beats every baseline: ${metric} ${percent(m)} against ${percent(best.value)} for the best, ${best.name} (${points} percentage points higher)`
      : `verdict: the model does NOT beat the baseline ${best.name}: ${metric} ${percent(m)} against its ${percent(best.value)} (${points} percentage points ${m === best.value ? 'apart' : 'lower'}); train longer, on more data, or use the baseline`;
  }
  const gap = Math.abs(m - best.value);
  const units = report.metric === 'MAE' ? " in the data's units" : '';
  const relative = best.value === 0 ? '' : `, ${((100 * gap) / best.value).toFixed(1)}%`;
  // Beside the data's units, the scale-free figure (MASE) when there is one.
  const mase =
    report.metric === 'MAE' && report.model.overall?.mase != null && best.overall?.mase != null
      ? `; MASE ${figure(report.model.overall.mase)} against ${figure(best.overall.mase)}`
      : '';
  return better
    ? `verdict: the model beats every baseline: ${report.metric} ${figure(m)} against ${figure(best.value)} for the best baseline, ${best.name} (${figure(gap)} lower${units}${relative}${mase})`
    : `verdict: the model does NOT beat the baseline ${best.name}: ${report.metric} ${figure(m)} against its ${figure(best.value)} (${figure(gap)} ${m === best.value ? 'apart' : 'higher'}${units}${relative}${mase}); use the baseline, or train longer (--epochs, --patience), on more data, or with other settings`;
}

function classLines(scores: ClassificationReport, names: readonly string[]): string[] {
  const lines = names.map((name, k) => {
    const c = scores.perClass[k];
    return `  ${name}: precision ${figure(c.precision)}, recall ${figure(c.recall)}, F1 ${figure(c.f1)} (${c.support} held out, predicted ${c.predicted} times)`;
  });
  const width = Math.max(6, ...names.map((n) => n.length));
  const cell = (text: string) => text.padStart(width);
  lines.push(`counts by actual class (rows) and predicted class (columns):`);
  lines.push(`  ${cell('')}  ${names.map(cell).join('  ')}`);
  scores.confusion.forEach((row, k) => lines.push(`  ${cell(names[k])}  ${row.map((v) => cell(String(v))).join('  ')}`));
  if (scores.neverPredicted.length > 0) lines.push(`never predicted: ${scores.neverPredicted.map((k) => names[k]).join(', ')}`);
  return lines;
}

/** Every line of a test comparison: how it was set up, what was scored, a line per contender, details, and the verdict. */
export function reportLines(report: HeldOutReport): string[] {
  const lines = [...(report.context ?? []), `test: ${report.what}`];
  const all = [report.model, ...report.baselines];
  const width = Math.max(...all.map((c) => c.name.length));
  // With several targets in different units, the rows show scale-free figures only; MAE follows per target.
  const several = report.names.length > 1 && report.model.perTarget !== undefined;
  for (const c of all) {
    const name = c.name.padEnd(width);
    const how = c.description === '' ? '' : `  (${c.description})`;
    if (c.overall !== undefined) lines.push(`  ${name}  ${errorsText(c.overall, !several && report.series === undefined)}${how}`);
    else if (c.transduction !== undefined)
      lines.push(
        `  ${name}  exact match ${percent(c.transduction.exactMatch)}  token accuracy ${percent(c.transduction.tokenAccuracy)}  BLEU ${figure(c.transduction.bleu)}${how}`,
      );
    else if (c.scores !== undefined) lines.push(`  ${name}  accuracy ${percent(c.scores.accuracy)}  macro-F1 ${figure(c.scores.macroF1)}${how}`);
    else lines.push(`  ${name}  ${report.metric} ${figure(c.value)}${how}`);
  }
  if (several) {
    const best = bestOf(report);
    report.names.forEach((name, k) => {
      lines.push(`  ${name}: model ${errorsText(report.model.perTarget?.[k])}`);
      lines.push(`  ${' '.repeat(name.length)}  ${best.name} ${errorsText(best.perTarget?.[k])}`);
    });
  }
  if (report.series !== undefined) lines.push(...seriesLines(report, report.series));
  const steps = report.model.byRowsAhead;
  if (steps !== undefined && steps.length > 1) {
    // The model and the best baseline at each row ahead, in the report's metric.
    const best = bestOf(report);
    const at = (e: ForecastErrors) => figure(report.metric === 'MASE' ? (e.mase ?? NaN) : e.mae);
    lines.push(
      `  ${report.metric} by rows ahead: ${steps.map((s, i) => `${s.rowsAhead}: ${at(s.overall)}${best.byRowsAhead?.[i] === undefined ? '' : ` (${at(best.byRowsAhead[i].overall)})`}`).join(', ')} — the model's, and in brackets ${best.name}'s`,
    );
  }
  if (report.intervals !== undefined) {
    const i = report.intervals;
    lines.push(
      `  prediction intervals at ${Number((100 * i.level).toFixed(1))}% (split conformal on the validation part's errors${report.series === undefined ? '' : ", pooled over series in units of each one's scale"}): coverage ${percent(i.coverage)} of ${i.count} values${Number.isNaN(i.meanWidth) ? '' : `, mean width ${figure(i.meanWidth)}`}${i.msis === null ? '' : `, MSIS ${figure(i.msis)}`}${Number.isFinite(i.meanWidth) || Number.isNaN(i.meanWidth) ? '' : ' (the validation part is too short for this level)'}${Math.abs(i.coverage - i.level) > 0.05 ? `; more than 5 points from the ${Number((100 * i.level).toFixed(1))}% asked: do not rely on these intervals at this level` : ''}`,
    );
    const line = baselineIntervalsLine(report);
    if (line !== null) lines.push(line);
  }
  if (report.model.scores !== undefined) lines.push(...classLines(report.model.scores, report.names));
  lines.push(verdict(report));
  return lines;
}

/**
 * Many series: a line per series (the model's MASE and its best baseline's), and on how many series the model beats
 * that series' best baseline (picked on the test part itself, so the count is, if anything, unkind to the model).
 */
function seriesLines(report: HeldOutReport, series: readonly SeriesFigures[]): string[] {
  const width = Math.max(...series.map((s) => s.id.length));
  const lines = [`  per series, MASE: the model's, and the best baseline of that series`];
  let wins = 0;
  for (const s of series) {
    const best = s.baselines.find((b) => b.name === s.best)!;
    if (s.model < best.value) wins++;
    lines.push(`    ${s.id.padEnd(width)}  ${figure(s.model)}  ${best.name} ${figure(best.value)}${s.model < best.value ? '' : '  (baseline better)'}`);
  }
  const method = bestOf(report);
  const againstMethod = series.filter((s) => s.model < (s.baselines.find((b) => b.name === method.name)?.value ?? Infinity)).length;
  lines.push(
    `  the model beats ${method.name} (the best method over all series) on ${againstMethod} of ${series.length} series, and each series' own best baseline on ${wins} of ${series.length}`,
  );
  return lines;
}

/** The comparison as plain data, for `--format json`. */
export function reportJson(report: HeldOutReport): unknown {
  const best = bestOf(report);
  const beats = report.lowerIsBetter ? report.model.value < best.value : report.model.value > best.value;
  return { ...report, bestBaseline: best.name, modelBeatsEveryBaseline: beats };
}

/**
 * "74 forecasts of CO2, 1 row ahead", or with every row up to the horizon "74 rows of CO2, each forecast 1 to 12
 * rows ahead (888 forecasts)"; with `observed` (target values that have a reading, of rows × targets) below them
 * all, how many are scored: "(66 of them observed: only those are scored)".
 */
export function forecastWords(rows: number, names: readonly string[], rowsAhead: readonly number[], observed = rows * names.length): string {
  const last = rowsAhead[rowsAhead.length - 1];
  const all = rows * names.length;
  const scored =
    observed < all ? ` (${observed * rowsAhead.length} of them with an observed value, the only ones scored, for the model and every baseline alike)` : '';
  if (rowsAhead.length === 1) return `${rows} forecasts of ${names.join(', ')}, ${last} row${last === 1 ? '' : 's'} ahead${scored}`;
  return `${rows} rows of ${names.join(', ')}, each forecast ${rowsAhead[0]} to ${last} rows ahead (${rows * rowsAhead.length * names.length} forecasts)${scored}`;
}

/**
 * The baselines' intervals beside the model's: the one with the lowest MSIS (the M4 competition's interval score,
 * lower is better), and how the model's compares; null when the baselines have none.
 */
function baselineIntervalsLine(report: HeldOutReport): string | null {
  const model = report.intervals?.msis ?? null;
  const scored = report.baselines.filter((b) => b.intervals?.msis != null);
  if (model === null || scored.length === 0) return null;
  const best = scored.reduce((a, b) => (b.intervals!.msis! < a.intervals!.msis! ? b : a));
  const i = best.intervals!;
  const msis = i.msis!;
  const compared =
    model < msis
      ? `the model's ${figure(model)} is lower (better) by ${percent(1 - model / msis)}`
      : model > msis
        ? `the model's ${figure(model)} is higher (worse) by ${percent(model / msis - 1)}`
        : `the model's is the same`;
  return `  the baselines' intervals, each made the same way from its own validation errors${report.series === undefined ? '' : ' (pooled over series)'}: lowest MSIS ${best.name} ${figure(msis)} (coverage ${percent(i.coverage)}${Number.isNaN(i.meanWidth) ? '' : `, mean width ${figure(i.meanWidth)}`}); ${compared}`;
}

/** A forecast report with the model's intervals and each baseline's (in the order of its baselines). */
export function withIntervals(report: HeldOutReport, model: IntervalScores, baselines: readonly IntervalScores[]): HeldOutReport {
  return { ...report, intervals: model, baselines: report.baselines.map((b, i) => (baselines[i] === undefined ? b : { ...b, intervals: baselines[i] })) };
}
