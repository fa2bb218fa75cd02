/**
 * A small, plain f64 implementation of the ONNX LSTM, GRU and RNN operators, written directly from the
 * equations of the ONNX operator specification (docs/Operators.md, opset 22; restated in
 * tests/fixtures/onnx/README.md), in ONNX's own weight layout: one direction, W [gates·H][I], R [gates·H][H]
 * as nested arrays, B = [Wb | Rb], P (LSTM) = [Pi | Po | Pf]. Gate orders: LSTM i, o, f, c; GRU z, r, h.
 *
 * Nothing from weft is used here, so it can serve as the outside reference for our cells. Ragged rows follow
 * weft's convention (the ONNX text leaves it open): a row of length L runs steps 0..L−1 (or L−1..0 reversed),
 * outputs 0 elsewhere, final state after its last valid step.
 */

export type Matrix = number[][];

export interface SpecInputs {
  /** X[t][b][k] */
  readonly x: number[][][];
  readonly w: Matrix;
  readonly r: Matrix;
  readonly b?: number[];
  readonly p?: number[];
  readonly h0?: Matrix;
  readonly c0?: Matrix;
  readonly lengths?: number[];
  readonly reverse?: boolean;
  readonly linearBeforeReset?: boolean;
}

export interface SpecOutputs {
  /** Y[t][b][j] */
  readonly y: number[][][];
  readonly yh: Matrix;
  readonly yc?: Matrix;
}

const sigma = (v: number): number => 1 / (1 + Math.exp(-v));

/** Xt·Wgᵀ + Ht−1·Rgᵀ + Wbg + Rbg for one gate block g of one row. */
function gatePre(x: number[], h: number[], w: Matrix, r: Matrix, b: number[] | undefined, gate: number, j: number, hidden: number, gates: number): number {
  const row = gate * hidden + j;
  let s = 0;
  for (let k = 0; k < x.length; k++) s += x[k] * w[row][k];
  for (let k = 0; k < h.length; k++) s += h[k] * r[row][k];
  if (b !== undefined) s += b[row] + b[gates * hidden + row];
  return s;
}

function stepOrder(length: number, reverse: boolean): number[] {
  const order: number[] = [];
  for (let s = 0; s < length; s++) order.push(reverse ? length - 1 - s : s);
  return order;
}

function zeros(rows: number, cols: number): Matrix {
  return Array.from({ length: rows }, () => new Array<number>(cols).fill(0));
}

export function specLstm(input: SpecInputs): SpecOutputs {
  const steps = input.x.length;
  const batch = input.x[0].length;
  const hidden = input.r[0].length;
  const y = Array.from({ length: steps }, () => zeros(batch, hidden));
  const yh = zeros(batch, hidden);
  const yc = zeros(batch, hidden);
  const p = input.p;
  for (let bRow = 0; bRow < batch; bRow++) {
    let h = input.h0 ? input.h0[bRow].slice() : new Array<number>(hidden).fill(0);
    let c = input.c0 ? input.c0[bRow].slice() : new Array<number>(hidden).fill(0);
    const length = input.lengths ? input.lengths[bRow] : steps;
    for (const t of stepOrder(length, input.reverse === true)) {
      const x = input.x[t][bRow];
      const hNext: number[] = [];
      const cNext: number[] = [];
      for (let j = 0; j < hidden; j++) {
        // Gate blocks in ONNX order: 0 = i, 1 = o, 2 = f, 3 = c.
        const it = sigma(gatePre(x, h, input.w, input.r, input.b, 0, j, hidden, 4) + (p ? p[j] * c[j] : 0));
        const ft = sigma(gatePre(x, h, input.w, input.r, input.b, 2, j, hidden, 4) + (p ? p[2 * hidden + j] * c[j] : 0));
        const ct = Math.tanh(gatePre(x, h, input.w, input.r, input.b, 3, j, hidden, 4));
        const cell = ft * c[j] + it * ct;
        const ot = sigma(gatePre(x, h, input.w, input.r, input.b, 1, j, hidden, 4) + (p ? p[hidden + j] * cell : 0));
        cNext.push(cell);
        hNext.push(ot * Math.tanh(cell));
      }
      h = hNext;
      c = cNext;
      y[t][bRow] = h.slice();
    }
    yh[bRow] = h;
    yc[bRow] = c;
  }
  return { y, yh, yc };
}

export function specGru(input: SpecInputs): SpecOutputs {
  const steps = input.x.length;
  const batch = input.x[0].length;
  const hidden = input.r[0].length;
  const y = Array.from({ length: steps }, () => zeros(batch, hidden));
  const yh = zeros(batch, hidden);
  const b = input.b;
  for (let bRow = 0; bRow < batch; bRow++) {
    let h = input.h0 ? input.h0[bRow].slice() : new Array<number>(hidden).fill(0);
    const length = input.lengths ? input.lengths[bRow] : steps;
    for (const t of stepOrder(length, input.reverse === true)) {
      const x = input.x[t][bRow];
      const z: number[] = [];
      const r: number[] = [];
      for (let j = 0; j < hidden; j++) {
        z.push(sigma(gatePre(x, h, input.w, input.r, b, 0, j, hidden, 3)));
        r.push(sigma(gatePre(x, h, input.w, input.r, b, 1, j, hidden, 3)));
      }
      const hNext: number[] = [];
      for (let j = 0; j < hidden; j++) {
        const row = 2 * hidden + j;
        let xw = 0;
        for (let k = 0; k < x.length; k++) xw += x[k] * input.w[row][k];
        const wbh = b ? b[row] : 0;
        const rbh = b ? b[3 * hidden + row] : 0;
        let recurrent = 0;
        if (input.linearBeforeReset === true) {
          // ht = g(Xt·Whᵀ + rt ⊙ (Ht−1·Rhᵀ + Rbh) + Wbh)
          for (let k = 0; k < hidden; k++) recurrent += h[k] * input.r[row][k];
          recurrent = r[j] * (recurrent + rbh);
        } else {
          // ht = g(Xt·Whᵀ + (rt ⊙ Ht−1)·Rhᵀ + Rbh + Wbh)
          for (let k = 0; k < hidden; k++) recurrent += r[k] * h[k] * input.r[row][k];
          recurrent += rbh;
        }
        const candidate = Math.tanh(xw + recurrent + wbh);
        hNext.push((1 - z[j]) * candidate + z[j] * h[j]);
      }
      h = hNext;
      y[t][bRow] = h.slice();
    }
    yh[bRow] = h;
  }
  return { y, yh };
}

export function specRnn(input: SpecInputs): SpecOutputs {
  const steps = input.x.length;
  const batch = input.x[0].length;
  const hidden = input.r[0].length;
  const y = Array.from({ length: steps }, () => zeros(batch, hidden));
  const yh = zeros(batch, hidden);
  for (let bRow = 0; bRow < batch; bRow++) {
    let h = input.h0 ? input.h0[bRow].slice() : new Array<number>(hidden).fill(0);
    const length = input.lengths ? input.lengths[bRow] : steps;
    for (const t of stepOrder(length, input.reverse === true)) {
      const x = input.x[t][bRow];
      const hNext: number[] = [];
      for (let j = 0; j < hidden; j++) hNext.push(Math.tanh(gatePre(x, h, input.w, input.r, input.b, 0, j, hidden, 1)));
      h = hNext;
      y[t][bRow] = h.slice();
    }
    yh[bRow] = h;
  }
  return { y, yh };
}
