/**
 * The loss curve as an SVG picture, and as a one-line sparkline for the terminal. The picture: the training loss
 * as faint raw points under a smoothed line (a centred moving mean over about a fiftieth of the run), validation
 * losses as dots, the step whose weights were kept marked by a dashed line, labelled step and loss axes with ticks
 * at round values (1, 2 or 5 times a power of ten), and a log scale for the loss when it spans more than a decade,
 * so the first steps do not flatten the rest of the run.
 */

export interface LossPoint {
  readonly step: number;
  readonly loss: number;
}

const bars = '▁▂▃▄▅▆▇█';

/** Up to `width` characters, each the mean of its share of the values, scaled between their least and most. */
export function sparkline(values: readonly number[], width = 40): string {
  const finite = values.filter(Number.isFinite);
  if (finite.length === 0) return '';
  const buckets = Math.min(width, finite.length);
  const means: number[] = [];
  for (let b = 0; b < buckets; b++) {
    const from = Math.floor((b * finite.length) / buckets);
    const to = Math.floor(((b + 1) * finite.length) / buckets);
    const slice = finite.slice(from, Math.max(to, from + 1));
    means.push(slice.reduce((s, v) => s + v, 0) / slice.length);
  }
  const low = means.reduce((a, b) => Math.min(a, b), Infinity);
  const high = means.reduce((a, b) => Math.max(a, b), -Infinity);
  return means.map((m) => bars[high === low ? 0 : Math.min(7, Math.floor(((m - low) / (high - low)) * 8))]).join('');
}

function xmlText(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** Most points of the training line, and most validation dots: the chart stays a few tens of KB however long the run. */
export const MAX_PLOTTED = 1200;
export const MAX_DOTS = 400;

/**
 * At most `MAX_PLOTTED` of `points` (finite ones), in step order: split into equal ranges of steps, each range keeps
 * its lowest and its highest loss, so spikes stay visible when a long run is drawn in a few hundred pixels.
 */
export function thinPoints(points: readonly LossPoint[], most = MAX_PLOTTED): LossPoint[] {
  const finite = points.filter((p) => Number.isFinite(p.loss));
  if (finite.length <= most) return finite;
  const buckets = Math.floor(most / 2);
  const out: LossPoint[] = [];
  for (let b = 0; b < buckets; b++) {
    const start = Math.floor((b * finite.length) / buckets);
    const end = Math.floor(((b + 1) * finite.length) / buckets);
    let low = finite[start];
    let high = finite[start];
    for (let i = start + 1; i < end; i++) {
      if (finite[i].loss < low.loss) low = finite[i];
      if (finite[i].loss > high.loss) high = finite[i];
    }
    if (low === high) out.push(low);
    else out.push(...(low.step < high.step ? [low, high] : [high, low]));
  }
  return out;
}

/** The centred moving mean of the losses over `2 × half + 1` points (fewer at the ends), at most MAX_PLOTTED of them. */
export function smoothed(points: readonly LossPoint[], half = Math.max(1, Math.round(points.length / 100))): LossPoint[] {
  const finite = points.filter((p) => Number.isFinite(p.loss));
  const sums = new Float64Array(finite.length + 1);
  finite.forEach((p, i) => (sums[i + 1] = sums[i] + p.loss));
  const every = Math.max(1, Math.ceil(finite.length / MAX_PLOTTED));
  const out: LossPoint[] = [];
  for (let i = 0; i < finite.length; i += every) {
    const from = Math.max(0, i - half);
    const to = Math.min(finite.length, i + half + 1);
    out.push({ step: finite[i].step, loss: (sums[to] - sums[from]) / (to - from) });
  }
  return out;
}

/** Round values from `low` to `high`: multiples of 1, 2 or 5 times a power of ten, about `count` of them. */
export function roundTicks(low: number, high: number, count = 5): number[] {
  if (!(high > low)) return [low];
  const raw = (high - low) / count;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw) ?? 10 * power;
  const ticks: number[] = [];
  for (let v = Math.ceil(low / step) * step; v <= high + step * 1e-9; v += step) ticks.push(Number(v.toPrecision(12)));
  return ticks;
}

/** Ticks of a log scale from `low` to `high` (both > 0): each power of ten, and 2 and 5 times it when few decades. */
export function logTicks(low: number, high: number): number[] {
  const first = Math.floor(Math.log10(low));
  const last = Math.ceil(Math.log10(high));
  const multiples = last - first <= 3 ? [1, 2, 5] : [1];
  const ticks: number[] = [];
  for (let k = first; k <= last; k++)
    for (const m of multiples) {
      const v = Number((m * 10 ** k).toPrecision(12));
      if (v >= low && v <= high) ticks.push(v);
    }
  return ticks;
}

/** A tick's label: short, with no float noise (0.3, not 0.30000000000000004; 2e-5 for the small ones). */
function tickLabel(v: number): string {
  if (v === 0) return '0';
  const a = Math.abs(v);
  return a >= 1e-3 && a < 1e6
    ? String(Number(v.toPrecision(6)))
    : v
        .toExponential()
        .replace(/\.?0+e/, 'e')
        .replace('e+', 'e');
}

/** The SVG of a run's losses (see the file's comment); `kept`, the step whose weights were kept, is marked. */
export function lossCurveSvg(allTraining: readonly LossPoint[], allValidation: readonly LossPoint[], title: string, kept?: number): string {
  const raw = thinPoints(allTraining);
  const line = smoothed(allTraining);
  const validation = thinPoints(allValidation, MAX_DOTS);
  const width = 720;
  const height = 420;
  const left = 70;
  const right = 24;
  const top = 40;
  const bottom = 70;
  const all = [...raw, ...validation];
  const maxStep = Math.max(1, ...all.map((p) => p.step), kept ?? 0);
  const losses = all.map((p) => p.loss);
  let low = losses.reduce((a, b) => Math.min(a, b), Infinity);
  let high = losses.reduce((a, b) => Math.max(a, b), -Infinity);
  if (!Number.isFinite(low)) [low, high] = [0, 1];
  // A log scale where every loss is above 0 and they span more than a decade.
  const log = low > 0 && high / low > 10;
  if (!log) {
    const ticks = roundTicks(Math.min(0, low), high);
    low = Math.min(0, low, ticks[0]);
    const step = ticks.length > 1 ? ticks[1] - ticks[0] : 1;
    high = Math.max(high, ticks[ticks.length - 1] + (ticks[ticks.length - 1] < high ? step : 0));
  }
  if (log) {
    // Out to the round values just beyond the losses, so the lowest and highest are labelled.
    const rounds = (k: number) => [1, 2, 5].map((m) => m * 10 ** k);
    low =
      rounds(Math.floor(Math.log10(low)))
        .filter((v) => v <= low)
        .pop() ?? low;
    high = [...rounds(Math.floor(Math.log10(high))), 10 ** (Math.floor(Math.log10(high)) + 1)].find((v) => v >= high) ?? high;
  }
  const lossTicks = log ? logTicks(low, high) : roundTicks(low, high);
  const scale = (v: number) => (log ? Math.log10(v) : v);
  const [from, to] = [scale(low), scale(high)];
  const x = (step: number) => left + ((width - left - right) * step) / maxStep;
  const y = (loss: number) => top + (height - top - bottom) * (1 - (scale(loss) - from) / (to - from || 1));
  const points = (list: readonly LossPoint[]) => list.map((p) => `${x(p.step).toFixed(1)},${y(p.loss).toFixed(1)}`).join(' ');
  const stepTicks = roundTicks(0, maxStep, 6).filter((s) => Number.isInteger(s));
  const yTicks = lossTicks
    .map(
      (v) =>
        `<line class="loss-tick" x1="${left}" x2="${width - right}" y1="${y(v).toFixed(1)}" y2="${y(v).toFixed(1)}" stroke="#e4e4e4"/><text class="loss-tick-label" x="${left - 6}" y="${(y(v) + 4).toFixed(1)}" text-anchor="end" font-size="11">${tickLabel(v)}</text>`,
    )
    .join('\n');
  const xTicks = stepTicks
    .map(
      (s) =>
        `<line class="step-tick" x1="${x(s).toFixed(1)}" x2="${x(s).toFixed(1)}" y1="${height - bottom}" y2="${height - bottom + 5}" stroke="#333"/><text class="step-tick-label" x="${x(s).toFixed(1)}" y="${height - bottom + 18}" text-anchor="middle" font-size="11">${s.toLocaleString('en')}</text>`,
    )
    .join('\n');
  const dots = validation.map((p) => `<circle class="validation" cx="${x(p.step).toFixed(1)}" cy="${y(p.loss).toFixed(1)}" r="3" fill="#c0392b"/>`).join('');
  const keptMark =
    kept === undefined
      ? ''
      : `<line class="kept" x1="${x(kept).toFixed(1)}" x2="${x(kept).toFixed(1)}" y1="${top}" y2="${height - bottom}" stroke="#2e7d32" stroke-width="1.5" stroke-dasharray="5 4"/><text class="kept-label" x="${(x(kept) + (x(kept) > width - 160 ? -6 : 6)).toFixed(1)}" y="${top + 14}" text-anchor="${x(kept) > width - 160 ? 'end' : 'start'}" font-size="11" fill="#2e7d32">weights kept: step ${kept.toLocaleString('en')}</text>`;
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="sans-serif">
<rect width="${width}" height="${height}" fill="white"/>
<text x="${width / 2}" y="22" text-anchor="middle" font-size="14">${xmlText(title)}</text>
${yTicks}
${xTicks}
<line x1="${left}" x2="${left}" y1="${top}" y2="${height - bottom}" stroke="#333"/>
<line x1="${left}" x2="${width - right}" y1="${height - bottom}" y2="${height - bottom}" stroke="#333"/>
<text class="axis-label" x="${(left + width - right) / 2}" y="${height - bottom + 36}" text-anchor="middle" font-size="12">step</text>
<text class="axis-label" x="16" y="${(top + height - bottom) / 2}" text-anchor="middle" font-size="12" transform="rotate(-90 16 ${(top + height - bottom) / 2})">loss${log ? ' (log scale)' : ''}</text>
<polyline class="raw" fill="none" stroke="#9ec5ea" stroke-width="1" points="${points(raw)}"/>
<polyline class="smoothed" fill="none" stroke="#1f5fa8" stroke-width="2" points="${points(line)}"/>
${dots}
${keptMark}
<text x="${(left + width - right) / 2}" y="${height - 8}" text-anchor="middle" font-size="11"><tspan fill="#9ec5ea">— training loss</tspan>  <tspan fill="#1f5fa8">— smoothed</tspan>  <tspan fill="#c0392b">● validation loss</tspan>${kept === undefined ? '' : '  <tspan fill="#2e7d32">┆ kept</tspan>'}</text>
</svg>
`;
}
