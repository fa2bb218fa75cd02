/**
 * An SVG picture of attention weights for one example: the source tokens along the top, the output tokens down the
 * side, one cell per (output step, source position) shaded by its weight (white 0 to dark 1), each row summing to 1
 * over the source positions. Token text is escaped; the picture's size follows the token counts.
 */

const CELL = 22;

function xmlText(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

/**
 * The map of `weights` ([outputs, sources] row-major, e.g. one `AttentionStep.weights` row per output step) for
 * `source` and `output` tokens, titled `title`. Refuses weights of another count than outputs × sources.
 */
export function attentionMapSvg(source: readonly string[], output: readonly string[], weights: ArrayLike<number>, title: string): string {
  if (weights.length !== source.length * output.length) {
    throw new RangeError(`attention map: ${output.length} × ${source.length} weights expected, ${weights.length} given`);
  }
  const label = Math.max(3, ...output.map((t) => t.length)) * 8 + 8;
  const top = Math.max(3, ...source.map((t) => t.length)) * 8 + 28;
  const width = label + source.length * CELL + 8;
  const height = top + output.length * CELL + 8;
  const parts = [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" font-family="sans-serif" font-size="12">`,
    `<title>${xmlText(title)}</title>`,
    `<text x="4" y="14">${xmlText(title)}</text>`,
  ];
  source.forEach((token, s) => {
    const x = label + s * CELL + CELL / 2;
    parts.push(`<text transform="translate(${x},${top - 4}) rotate(-90)">${xmlText(token)}</text>`);
  });
  output.forEach((token, t) => {
    const y = top + t * CELL;
    parts.push(`<text x="${label - 4}" y="${y + CELL / 2 + 4}" text-anchor="end">${xmlText(token)}</text>`);
    source.forEach((_, s) => {
      const w = Math.min(1, Math.max(0, Number(weights[t * source.length + s]) || 0));
      const shade = Math.round(255 * (1 - w));
      parts.push(
        `<rect x="${label + s * CELL}" y="${y}" width="${CELL}" height="${CELL}" fill="rgb(${shade},${shade},255)" stroke="#ddd"><title>${xmlText(token)} ← ${xmlText(source[s])}: ${w.toFixed(3)}</title></rect>`,
      );
    });
  });
  parts.push('</svg>');
  return `${parts.join('\n')}\n`;
}
