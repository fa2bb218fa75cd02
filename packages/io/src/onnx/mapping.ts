/**
 * Between ONNX's recurrent weight layouts and ours (the mapping written down in packages/cells/README.md):
 *
 *   ONNX W [gates·H, I] (rows are gate blocks)  ↔  our input [I, gates·H] (columns are gate blocks): transposed.
 *   LSTM gate blocks: ONNX i, o, f, c  ↔  ours i, f, g, o   (ours block 0 ← ONNX 0, 1 ← 2, 2 ← 3, 3 ← 1).
 *   GRU gate blocks:  ONNX z, r, h     ↔  ours z, r, n      (same order); R's z, r rows ↔ `recurrent` [H, 2H],
 *                                                             R's h rows ↔ `recurrentCandidate` [H, H].
 *   B = [Wb | Rb]: our `bias` = Wb + Rb per gate, except with the reset applied after the product, where the
 *   candidate's Rb is `recurrentCandidateBias` and our bias keeps only Wb for that block.
 *   LSTM P = [Pi | Po | Pf]  ↔  our `peephole` [i | f | o].
 *
 * Values are copied, never computed, except Wb + Rb where both are nonzero; so a round trip through ONNX keeps
 * every bit.
 */
import { layerPath } from '@weft/cells/description';
import type { NamedValues } from '../weight-file.js';

/** Our gate blocks from ONNX's, per cell kind: ours[block] = onnx[blocks[block]]. */
export const gateBlocks: Readonly<Record<'lstm' | 'gru' | 'plain', readonly number[]>> = { lstm: [0, 2, 3, 1], gru: [0, 1, 2], plain: [0] };

/** ours [width, columns]: ours[k, (first + block)·H + j] = onnx[(onnxBlock·H + j)·width + k] for the listed blocks. */
export function fromOnnxBlocks(
  ours: Float32Array,
  columns: number,
  onnx: ArrayLike<number>,
  onnxOffset: number,
  width: number,
  hidden: number,
  blocks: readonly number[],
  first = 0,
): void {
  blocks.forEach((onnxBlock, block) => {
    for (let j = 0; j < hidden; j++) {
      const row = onnxOffset + (onnxBlock * hidden + j) * width;
      for (let k = 0; k < width; k++) ours[k * columns + (first + block) * hidden + j] = onnx[row + k];
    }
  });
}

/** The inverse of fromOnnxBlocks: ONNX rows from our columns. */
export function toOnnxBlocks(
  onnx: Float32Array,
  onnxOffset: number,
  ours: ArrayLike<number>,
  columns: number,
  width: number,
  hidden: number,
  blocks: readonly number[],
  first = 0,
): void {
  blocks.forEach((onnxBlock, block) => {
    for (let j = 0; j < hidden; j++) {
      const row = onnxOffset + (onnxBlock * hidden + j) * width;
      for (let k = 0; k < width; k++) onnx[row + k] = ours[k * columns + (first + block) * hidden + j];
    }
  });
}

/** Wb + Rb, or exactly Wb where Rb is 0 (so −0 in Wb survives a round trip). */
export function sumBiases(wb: number, rb: number): number {
  return rb === 0 ? wb : wb + rb;
}

/**
 * One ONNX recurrent node's tensors (W, R, B, P of every direction, flattened as ONNX stores them) in weft's names
 * and layouts for layer `layer`.
 */
export function layerTensors(
  kind: 'lstm' | 'gru' | 'plain',
  layer: number,
  cells: readonly ('forward' | 'backward')[],
  inputWidth: number,
  hidden: number,
  resetAfter: boolean,
  w: Float32Array,
  r: Float32Array,
  b: Float32Array | null,
  p: Float32Array | null,
): NamedValues[] {
  const gates = kind === 'lstm' ? 4 : kind === 'gru' ? 3 : 1;
  const out: NamedValues[] = [];
  const blocks = gateBlocks[kind];
  for (let d = 0; d < cells.length; d++) {
    const prefix = layerPath(layer, cells[d]);
    const input = new Float32Array(inputWidth * gates * hidden);
    fromOnnxBlocks(input, gates * hidden, w, d * gates * hidden * inputWidth, inputWidth, hidden, blocks);
    const bias = new Float32Array(gates * hidden);
    let candidateBias: Float32Array | null = null;
    if (b !== null) {
      const bv = b;
      const base = d * 2 * gates * hidden;
      blocks.forEach((onnxBlock, block) => {
        for (let j = 0; j < hidden; j++) {
          const wb = bv[base + onnxBlock * hidden + j];
          const rb = bv[base + gates * hidden + onnxBlock * hidden + j];
          bias[block * hidden + j] = kind === 'gru' && resetAfter && block === 2 ? wb : sumBiases(wb, rb);
        }
      });
      if (kind === 'gru' && resetAfter) candidateBias = Float32Array.from(bv.subarray(base + 5 * hidden, base + 6 * hidden));
    }
    if (kind === 'gru' && resetAfter && candidateBias === null) candidateBias = new Float32Array(hidden);
    const rv = r;
    const rOffset = d * gates * hidden * hidden;
    if (kind === 'gru') {
      const recurrentZr = new Float32Array(hidden * 2 * hidden);
      fromOnnxBlocks(recurrentZr, 2 * hidden, rv, rOffset, hidden, hidden, [0, 1]);
      const recurrentCandidate = new Float32Array(hidden * hidden);
      fromOnnxBlocks(recurrentCandidate, hidden, rv, rOffset, hidden, hidden, [2]);
      out.push(
        { name: `${prefix}.input`, shape: [inputWidth, 3 * hidden], values: input },
        { name: `${prefix}.bias`, shape: [3 * hidden], values: bias },
        { name: `${prefix}.recurrent`, shape: [hidden, 2 * hidden], values: recurrentZr },
        { name: `${prefix}.recurrentCandidate`, shape: [hidden, hidden], values: recurrentCandidate },
      );
      if (candidateBias !== null) out.push({ name: `${prefix}.recurrentCandidateBias`, shape: [hidden], values: candidateBias });
    } else {
      const recurrentWeights = new Float32Array(hidden * gates * hidden);
      fromOnnxBlocks(recurrentWeights, gates * hidden, rv, rOffset, hidden, hidden, blocks);
      out.push(
        { name: `${prefix}.input`, shape: [inputWidth, gates * hidden], values: input },
        { name: `${prefix}.recurrent`, shape: [hidden, gates * hidden], values: recurrentWeights },
        { name: `${prefix}.bias`, shape: [gates * hidden], values: bias },
      );
      if (p !== null) {
        const pv = p;
        const base = d * 3 * hidden;
        const peephole = new Float32Array(3 * hidden);
        // ONNX P is [i, o, f]; ours is [i, f, o].
        for (let j = 0; j < hidden; j++) {
          peephole[j] = pv[base + j];
          peephole[hidden + j] = pv[base + 2 * hidden + j];
          peephole[2 * hidden + j] = pv[base + hidden + j];
        }
        out.push({ name: `${prefix}.peephole`, shape: [3 * hidden], values: peephole });
      }
    }
  }
  return out;
}
