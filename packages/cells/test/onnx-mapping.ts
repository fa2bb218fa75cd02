/**
 * Loads ONNX-layout weights (one direction, flattened row-major) into our cells; the mapping the cells README
 * documents:
 *
 *   ONNX W [gates·H, I] (rows are gate blocks)  →  our input [I, gates·H] (columns are gate blocks): transposed.
 *   LSTM gate blocks: ONNX i, o, f, c  →  ours i, f, g, o   (ours block 0 ← ONNX 0, 1 ← 2, 2 ← 3, 3 ← 1).
 *   GRU gate blocks:  ONNX z, r, h     →  ours z, r, n      (same order); R's z, r rows → `recurrent` [H, 2H],
 *                                                             R's h rows → `recurrentCandidate` [H, H].
 *   B = [Wb | Rb]: our `bias` = Wb + Rb per gate, except with the reset applied after the product, where the
 *   candidate's Rb goes to `recurrentCandidateBias` and our bias keeps only Wb for that block.
 *   LSTM P = [Pi | Po | Pf]  →  our `peephole` [i | f | o].
 */
import type { GruCell, LstmCell, PlainCell } from '@weft/cells';

type Flat = ArrayLike<number>;

/** ours[k, block·H + j] = onnx[(onnxBlock·H + j)·width + k], for each of our blocks. */
function transposeBlocks(
  target: Float32Array | Float64Array,
  targetCols: number,
  source: Flat,
  width: number,
  hidden: number,
  blocks: readonly number[],
  firstColumnBlock = 0,
): void {
  blocks.forEach((onnxBlock, ours) => {
    for (let j = 0; j < hidden; j++) {
      for (let k = 0; k < width; k++) target[k * targetCols + (firstColumnBlock + ours) * hidden + j] = source[(onnxBlock * hidden + j) * width + k];
    }
  });
}

const lstmBlocks = [0, 2, 3, 1];

export function loadLstm(cell: LstmCell, w: Flat, r: Flat, b?: Flat, p?: Flat): void {
  const hidden = cell.hidden;
  transposeBlocks(cell.input.data, 4 * hidden, w, cell.inputWidth, hidden, lstmBlocks);
  transposeBlocks(cell.recurrent.data, 4 * hidden, r, hidden, hidden, lstmBlocks);
  cell.bias.data.fill(0);
  if (b !== undefined) {
    lstmBlocks.forEach((onnxBlock, ours) => {
      for (let j = 0; j < hidden; j++) cell.bias.data[ours * hidden + j] = b[onnxBlock * hidden + j] + b[4 * hidden + onnxBlock * hidden + j];
    });
  }
  if (p !== undefined) {
    const peephole = cell.peephole!.data;
    for (let j = 0; j < hidden; j++) {
      peephole[j] = p[j];
      peephole[hidden + j] = p[2 * hidden + j];
      peephole[2 * hidden + j] = p[hidden + j];
    }
  }
}

export function loadGru(cell: GruCell, w: Flat, r: Flat, b?: Flat): void {
  const hidden = cell.hidden;
  transposeBlocks(cell.input.data, 3 * hidden, w, cell.inputWidth, hidden, [0, 1, 2]);
  transposeBlocks(cell.recurrent.data, 2 * hidden, r, hidden, hidden, [0, 1]);
  transposeBlocks(cell.recurrentCandidate.data, hidden, r, hidden, hidden, [2]);
  cell.bias.data.fill(0);
  cell.recurrentCandidateBias?.data.fill(0);
  if (b !== undefined) {
    for (let g = 0; g < 3; g++) {
      for (let j = 0; j < hidden; j++) {
        const wb = b[g * hidden + j];
        const rb = b[3 * hidden + g * hidden + j];
        if (g === 2 && cell.recurrentCandidateBias !== null) {
          cell.bias.data[g * hidden + j] = wb;
          cell.recurrentCandidateBias.data[j] = rb;
        } else {
          cell.bias.data[g * hidden + j] = wb + rb;
        }
      }
    }
  }
}

export function loadPlain(cell: PlainCell, w: Flat, r: Flat, b?: Flat): void {
  const hidden = cell.hidden;
  transposeBlocks(cell.input.data, hidden, w, cell.inputWidth, hidden, [0]);
  transposeBlocks(cell.recurrent.data, hidden, r, hidden, hidden, [0]);
  cell.bias.data.fill(0);
  if (b !== undefined) for (let j = 0; j < hidden; j++) cell.bias.data[j] = b[j] + b[hidden + j];
}
