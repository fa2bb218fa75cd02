/**
 * The cells' step kernels in f32x4 SIMD: twins of packages/core/src/kernels/{lstm,gru,plain}-step.ts with the
 * same arguments in the same order (arrays as byte offsets, 0 for an absent array, `lengths` an Int32 array or
 * 0). The equations and their derivatives are written out beside the twins; rows past their length hold their
 * state exactly as there. Lanes run over the hidden units j, 4 at a time, with a scalar tail.
 *
 * Each loop is written once, as a lane loop (`for (let j = 0; j < n; ) { const full = j + 4 <= n; … j += full ? 4 :
 * 1; }`); scripts/build-wasm.mjs expands it before compiling into a loop of two vectors per turn (independent
 * chains for the out-of-order core: about 30% faster here for the LSTM step), a one-vector loop and a scalar tail,
 * each with `full` constant so no branch is left in the vector loops. Loops marked `// lanes: one vector` are not
 * doubled.
 *
 * Their multiply-adds (a·b + c) are math.ts's `madd`: the same bits as the product and sum written out in the
 * standard kernel set, fused in the relaxed set.
 *
 * Why one file of this length: the three cells' forward and backward twins share the lane-loop convention, the
 * row-holding rule and the gate layout helpers, and the build expands this file as one unit.
 */
// The scalar tails call sigmoidCall4 / tanhCall4 once the build expands the lane loops (see below).
// @ts-ignore: used by the expanded loops
import { held, load4, madd, sigmoid4, sigmoidCall4, store4, tanh4, tanhCall4 } from './math';

// @ts-ignore: decorator
@inline function at(p: usize, i: i32): usize {
  return p + (<usize>i << 2);
}

/** target[offset … offset + size) += source[…] when both exist (0 is none). */
function addRowInto(target: usize, source: usize, offset: i32, hidden: i32): void {
  if (target == 0 || source == 0) return;
  for (let j = 0; j < hidden; ) {
    const full = j + 4 <= hidden;
    store4(at(target, offset + j), f32x4.add(load4(at(target, offset + j), full), load4(at(source, offset + j), full)), full);
    j += full ? 4 : 1;
  }
}

function copyRow(target: usize, source: usize, offset: i32, hidden: i32): void {
  memory.copy(at(target, offset), at(source, offset), <usize>hidden << 2);
}

function zeroRow(target: usize, offset: i32, hidden: i32): void {
  memory.fill(at(target, offset), 0, <usize>hidden << 2);
}

// @ts-ignore: decorator
@inline function loadOrZero(p: usize, i: i32, full: bool): v128 {
  return p == 0 ? f32x4.splat(0) : load4(at(p, i), full);
}

export function lstmStepForward(
  hState: usize, cell: usize, gates: usize, tanhCell: usize, hPrevious: usize, cellPrevious: usize,
  peephole: usize, rows: i32, hidden: i32, lengths: usize, step: i32,
): void {
  const width = 4 * hidden;
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (held(lengths, b, step)) {
      copyRow(hState, hPrevious, row, hidden);
      copyRow(cell, cellPrevious, row, hidden);
      continue;
    }
    const gate = b * width;
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      const cPrev = load4(at(cellPrevious, row + j), full);
      let ai = load4(at(gates, gate + j), full);
      let af = load4(at(gates, gate + hidden + j), full);
      const ag = load4(at(gates, gate + 2 * hidden + j), full);
      let ao = load4(at(gates, gate + 3 * hidden + j), full);
      if (peephole != 0) {
        ai = madd(load4(at(peephole, j), full), cPrev, ai);
        af = madd(load4(at(peephole, hidden + j), full), cPrev, af);
      }
      const i = sigmoid4(ai);
      const f = sigmoid4(af);
      const g = tanh4(ag);
      const c = madd(f, cPrev, f32x4.mul(i, g));
      if (peephole != 0) ao = madd(load4(at(peephole, 2 * hidden + j), full), c, ao);
      const o = sigmoid4(ao);
      const tc = tanh4(c);
      store4(at(gates, gate + j), i, full);
      store4(at(gates, gate + hidden + j), f, full);
      store4(at(gates, gate + 2 * hidden + j), g, full);
      store4(at(gates, gate + 3 * hidden + j), o, full);
      store4(at(cell, row + j), c, full);
      store4(at(tanhCell, row + j), tc, full);
      store4(at(hState, row + j), f32x4.mul(o, tc), full);
      j += full ? 4 : 1;
    }
  }
}

export function lstmStepBackward(
  gateGradient: usize, hiddenPreviousGradient: usize, cellPreviousGradient: usize, peepholeGradient: usize,
  hiddenGradient: usize, cellGradient: usize, gates: usize, tanhCell: usize, cellPrevious: usize, cell: usize,
  peephole: usize, rows: i32, hidden: i32, lengths: usize, step: i32,
): void {
  const width = 4 * hidden;
  const one = f32x4.splat(1);
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    const gate = b * width;
    if (held(lengths, b, step)) {
      zeroRow(gateGradient, gate, width);
      addRowInto(hiddenPreviousGradient, hiddenGradient, row, hidden);
      addRowInto(cellPreviousGradient, cellGradient, row, hidden);
      continue;
    }
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      const i = load4(at(gates, gate + j), full);
      const f = load4(at(gates, gate + hidden + j), full);
      const g = load4(at(gates, gate + 2 * hidden + j), full);
      const o = load4(at(gates, gate + 3 * hidden + j), full);
      const tc = load4(at(tanhCell, row + j), full);
      const cPrev = load4(at(cellPrevious, row + j), full);
      const dh = loadOrZero(hiddenGradient, row + j, full);
      const dao = f32x4.mul(f32x4.mul(f32x4.mul(dh, tc), o), f32x4.sub(one, o));
      let dc = madd(f32x4.mul(dh, o), f32x4.sub(one, f32x4.mul(tc, tc)), loadOrZero(cellGradient, row + j, full));
      if (peephole != 0) dc = madd(dao, load4(at(peephole, 2 * hidden + j), full), dc);
      const dai = f32x4.mul(f32x4.mul(f32x4.mul(dc, g), i), f32x4.sub(one, i));
      const daf = f32x4.mul(f32x4.mul(f32x4.mul(dc, cPrev), f), f32x4.sub(one, f));
      const dag = f32x4.mul(f32x4.mul(dc, i), f32x4.sub(one, f32x4.mul(g, g)));
      store4(at(gateGradient, gate + j), dai, full);
      store4(at(gateGradient, gate + hidden + j), daf, full);
      store4(at(gateGradient, gate + 2 * hidden + j), dag, full);
      store4(at(gateGradient, gate + 3 * hidden + j), dao, full);
      if (cellPreviousGradient != 0) {
        let dcPrev = f32x4.mul(dc, f);
        if (peephole != 0) {
          dcPrev = f32x4.add(dcPrev, f32x4.add(f32x4.mul(dai, load4(at(peephole, j), full)), f32x4.mul(daf, load4(at(peephole, hidden + j), full))));
        }
        const p = at(cellPreviousGradient, row + j);
        store4(p, f32x4.add(load4(p, full), dcPrev), full);
      }
      if (peepholeGradient != 0) {
        const pi = at(peepholeGradient, j);
        const pf = at(peepholeGradient, hidden + j);
        const po = at(peepholeGradient, 2 * hidden + j);
        store4(pi, madd(dai, cPrev, load4(pi, full)), full);
        store4(pf, madd(daf, cPrev, load4(pf, full)), full);
        store4(po, madd(dao, load4(at(cell, row + j), full), load4(po, full)), full);
      }
      j += full ? 4 : 1;
    }
  }
}

export function gruUpdateReset(gates: usize, projected: usize, projectedOffset: i32, recurrentGates: usize, rows: i32, hidden: i32): void {
  const pair = 2 * hidden;
  for (let b = 0; b < rows; b++) {
    const gate = b * 3 * hidden;
    const source = projectedOffset + gate;
    const product = b * pair;
    for (let k = 0; k < pair; ) {
      const full = k + 4 <= pair;
      store4(at(gates, gate + k), sigmoid4(f32x4.add(load4(at(projected, source + k), full), load4(at(recurrentGates, product + k), full))), full);
      k += full ? 4 : 1;
    }
  }
}

export function gruResetHidden(resetHidden: usize, gates: usize, hPrevious: usize, rows: i32, hidden: i32): void {
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    const reset = b * 3 * hidden + hidden;
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      store4(at(resetHidden, row + j), f32x4.mul(load4(at(gates, reset + j), full), load4(at(hPrevious, row + j), full)), full);
      j += full ? 4 : 1;
    }
  }
}

export function gruStepFinish(
  hState: usize, gates: usize, projected: usize, projectedOffset: i32, candidate: usize, hPrevious: usize,
  resetAfter: i32, rows: i32, hidden: i32, lengths: usize, step: i32,
): void {
  const one = f32x4.splat(1);
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (held(lengths, b, step)) {
      copyRow(hState, hPrevious, row, hidden);
      continue;
    }
    const gate = b * 3 * hidden;
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      const z = load4(at(gates, gate + j), full);
      const q = load4(at(candidate, row + j), full);
      const recurrentTerm = resetAfter ? f32x4.mul(load4(at(gates, gate + hidden + j), full), q) : q;
      const n = tanh4(f32x4.add(load4(at(projected, projectedOffset + gate + 2 * hidden + j), full), recurrentTerm));
      store4(at(gates, gate + 2 * hidden + j), n, full);
      const h = madd(f32x4.sub(one, z), n, f32x4.mul(z, load4(at(hPrevious, row + j), full)));
      store4(at(hState, row + j), h, full);
      j += full ? 4 : 1;
    }
  }
}

export function gruBackwardCandidate(
  updateResetGradient: usize, candidateGradient: usize, productGradient: usize, hiddenPreviousGradient: usize,
  hiddenGradient: usize, gates: usize, candidate: usize, hPrevious: usize, resetAfter: i32,
  rows: i32, hidden: i32, lengths: usize, step: i32,
): void {
  const one = f32x4.splat(1);
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    const pair = b * 2 * hidden;
    if (held(lengths, b, step)) {
      zeroRow(updateResetGradient, pair, 2 * hidden);
      zeroRow(candidateGradient, row, hidden);
      zeroRow(productGradient, row, hidden);
      addRowInto(hiddenPreviousGradient, hiddenGradient, row, hidden);
      continue;
    }
    const gate = b * 3 * hidden;
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      const z = load4(at(gates, gate + j), full);
      const r = load4(at(gates, gate + hidden + j), full);
      const n = load4(at(gates, gate + 2 * hidden + j), full);
      const dh = load4(at(hiddenGradient, row + j), full);
      const hPrev = load4(at(hPrevious, row + j), full);
      const dan = f32x4.mul(f32x4.mul(dh, f32x4.sub(one, z)), f32x4.sub(one, f32x4.mul(n, n)));
      store4(at(updateResetGradient, pair + j), f32x4.mul(f32x4.mul(f32x4.mul(dh, f32x4.sub(hPrev, n)), z), f32x4.sub(one, z)), full);
      store4(at(candidateGradient, row + j), dan, full);
      if (resetAfter) {
        store4(at(productGradient, row + j), f32x4.mul(dan, r), full);
        const q = load4(at(candidate, row + j), full);
        store4(at(updateResetGradient, pair + hidden + j), f32x4.mul(f32x4.mul(f32x4.mul(dan, q), r), f32x4.sub(one, r)), full);
      } else {
        store4(at(productGradient, row + j), dan, full);
        store4(at(updateResetGradient, pair + hidden + j), f32x4.splat(0), full);
      }
      if (hiddenPreviousGradient != 0) {
        const p = at(hiddenPreviousGradient, row + j);
        store4(p, madd(dh, z, load4(p, full)), full);
      }
      j += full ? 4 : 1;
    }
  }
}

export function gruBackwardReset(
  updateResetGradient: usize, hiddenPreviousGradient: usize, resetHiddenGradient: usize, gates: usize,
  hPrevious: usize, rows: i32, hidden: i32, lengths: usize, step: i32,
): void {
  const one = f32x4.splat(1);
  for (let b = 0; b < rows; b++) {
    if (held(lengths, b, step)) continue;
    const row = b * hidden;
    const gate = b * 3 * hidden;
    const pair = b * 2 * hidden;
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      const r = load4(at(gates, gate + hidden + j), full);
      const d = load4(at(resetHiddenGradient, row + j), full);
      store4(at(updateResetGradient, pair + hidden + j), f32x4.mul(f32x4.mul(f32x4.mul(d, load4(at(hPrevious, row + j), full)), r), f32x4.sub(one, r)), full);
      if (hiddenPreviousGradient != 0) {
        const p = at(hiddenPreviousGradient, row + j);
        store4(p, madd(d, r, load4(p, full)), full);
      }
      j += full ? 4 : 1;
    }
  }
}

export function plainStepForward(hState: usize, hPrevious: usize, rectified: i32, rows: i32, hidden: i32, lengths: usize, step: i32): void {
  const zero = f32x4.splat(0);
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (held(lengths, b, step)) {
      copyRow(hState, hPrevious, row, hidden);
      continue;
    }
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      const p = at(hState, row + j);
      const a = load4(p, full);
      // ReLU as a select (not f32x4.max) so that −0 and NaN come out as the twin's `a > 0 ? a : 0` does.
      store4(p, rectified ? v128.bitselect(a, zero, f32x4.gt(a, zero)) : tanh4(a), full);
      j += full ? 4 : 1;
    }
  }
}

export function plainStepBackward(
  preGradient: usize, hiddenPreviousGradient: usize, hiddenGradient: usize, hState: usize, rectified: i32,
  rows: i32, hidden: i32, lengths: usize, step: i32,
): void {
  const zero = f32x4.splat(0);
  const one = f32x4.splat(1);
  for (let b = 0; b < rows; b++) {
    const row = b * hidden;
    if (held(lengths, b, step)) {
      zeroRow(preGradient, row, hidden);
      addRowInto(hiddenPreviousGradient, hiddenGradient, row, hidden);
      continue;
    }
    for (let j = 0; j < hidden; ) {
      const full = j + 4 <= hidden;
      const h = load4(at(hState, row + j), full);
      const dh = load4(at(hiddenGradient, row + j), full);
      const d = rectified ? v128.bitselect(dh, zero, f32x4.gt(h, zero)) : f32x4.mul(dh, f32x4.sub(one, f32x4.mul(h, h)));
      store4(at(preGradient, row + j), d, full);
      j += full ? 4 : 1;
    }
  }
}
