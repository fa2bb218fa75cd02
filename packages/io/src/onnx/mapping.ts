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

/** Our gate blocks from ONNX's, per cell kind: ours[block] = onnx[blocks[block]]. */
export const gateBlocks: Readonly<Record<'lstm' | 'gru' | 'plain', readonly number[]>> = { lstm: [0, 2, 3, 1], gru: [0, 1, 2], plain: [0] };

/** ours [width, columns]: ours[k, (first + block)·H + j] = onnx[(onnxBlock·H + j)·width + k] for the listed blocks. */
export function fromOnnxBlocks(ours: Float32Array, columns: number, onnx: ArrayLike<number>, onnxOffset: number, width: number, hidden: number, blocks: readonly number[], first = 0): void {
  blocks.forEach((onnxBlock, block) => {
    for (let j = 0; j < hidden; j++) {
      const row = onnxOffset + (onnxBlock * hidden + j) * width;
      for (let k = 0; k < width; k++) ours[k * columns + (first + block) * hidden + j] = onnx[row + k];
    }
  });
}

/** The inverse of fromOnnxBlocks: ONNX rows from our columns. */
export function toOnnxBlocks(onnx: Float32Array, onnxOffset: number, ours: ArrayLike<number>, columns: number, width: number, hidden: number, blocks: readonly number[], first = 0): void {
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
