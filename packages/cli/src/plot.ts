/** The loss curve as an SVG picture, and as a one-line sparkline for the terminal. */

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

function escape(text: string): string {
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

/** An SVG line chart of training loss (and validation loss as dots) against the step, thinned to MAX_PLOTTED and MAX_DOTS points. */
export function lossCurveSvg(allTraining: readonly LossPoint[], allValidation: readonly LossPoint[], title: string): string {
  const training = thinPoints(allTraining);
  const validation = thinPoints(allValidation, MAX_DOTS);
  const width = 640;
  const height = 360;
  const left = 60;
  const right = 20;
  const top = 36;
  const bottom = 44;
  const all = [...training, ...validation];
  let maxStep = 1;
  let low = 0;
  let high = 1e-9;
  for (const p of all) {
    maxStep = Math.max(maxStep, p.step);
    low = Math.min(low, p.loss);
    high = Math.max(high, p.loss);
  }
  const x = (step: number) => left + ((width - left - right) * step) / maxStep;
  const y = (loss: number) => top + (height - top - bottom) * (1 - (loss - low) / (high - low || 1));
  const line = training.map((p) => `${x(p.step).toFixed(1)},${y(p.loss).toFixed(1)}`).join(' ');
  const dots = validation.map((p) => `<circle cx="${x(p.step).toFixed(1)}" cy="${y(p.loss).toFixed(1)}" r="3" fill="#c0392b"/>`).join('');
  const ticks = [0, 0.25, 0.5, 0.75, 1].map((f) => {
    const value = low + f * (high - low);
    return `<line x1="${left}" x2="${width - right}" y1="${y(value).toFixed(1)}" y2="${y(value).toFixed(1)}" stroke="#ddd"/><text x="${left - 6}" y="${(y(value) + 4).toFixed(1)}" text-anchor="end" font-size="11">${value.toPrecision(3)}</text>`;
  }).join('');
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="sans-serif">
<rect width="${width}" height="${height}" fill="white"/>
<text x="${width / 2}" y="22" text-anchor="middle" font-size="14">${escape(title)}</text>
${ticks}
<line x1="${left}" x2="${left}" y1="${top}" y2="${height - bottom}" stroke="#333"/>
<line x1="${left}" x2="${width - right}" y1="${height - bottom}" y2="${height - bottom}" stroke="#333"/>
<text x="${width / 2}" y="${height - 10}" text-anchor="middle" font-size="12">step (of ${maxStep})</text>
<polyline fill="none" stroke="#2c6fbb" stroke-width="1.5" points="${line}"/>
${dots}
<text x="${width - right - 6}" y="${top + 14}" text-anchor="end" font-size="11"><tspan fill="#2c6fbb">— training loss</tspan>  <tspan fill="#c0392b">● validation loss</tspan></text>
</svg>
`;
}
