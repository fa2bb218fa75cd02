/**
 * Weights packed once for the inference runtime, in the layout the matrix product packs its right operand into
 * (matmul.ts): panels of 8 columns, k-major, missing columns zero — packed[(panel·inner + k)·8 + c]. A runtime packs
 * each weight matrix when it is made, so a streaming step reads every panel as one contiguous run (no packing per
 * step, and no cache-set conflicts from reading a row-major matrix down its columns), and a batch of 4 rows or more
 * skips matmul's packing of the right operand.
 */
import { madd } from './math';
import { matmulPackedRight } from './matmul';

// @ts-ignore: decorator
@inline function at(p: usize, i: i32): usize {
  return p + (<usize>i << 2);
}

/** Packs b [inner, cols] (row-major) into 8-column panels; `out` holds ⌈cols/8⌉·8·inner floats. */
export function packPanels(out: usize, b: usize, inner: i32, cols: i32): void {
  const panels = (cols + 7) >> 3;
  for (let panel = 0; panel < panels; panel++) {
    const base = out + ((<usize>panel * <usize>inner) << 5);
    for (let k = 0; k < inner; k++) {
      for (let c = 0; c < 8; c++) {
        const col = (panel << 3) + c;
        store<f32>(base + (<usize>k << 5) + (<usize>c << 2), col < cols ? load<f32>(at(b, k * cols + col)) : 0);
      }
    }
  }
}

/**
 * out[c] = start[c] (or 0) + Σ_k x[k]·A[k, c] + Σ_k y[k]·B[k, c] for one row, A and B packed; `y` may be 0.
 * Three panels (24 columns) at a time, one row of the matrix a turn, then one panel; the last panel's padding
 * columns are not stored. Each column's sum runs over k in order, from `start`, as before this layout.
 *
 * Why three panels and one row a turn: each column's sum is a chain of dependent adds, one per k, so the turn's
 * speed is set by how many independent sums it carries against the add's latency. V8's optimising compiler
 * schedules a turn's loads first and its arithmetic after them, so every loaded vector is live at once: three
 * panels keep 6 loads, 6 sums and a broadcast live, within the 16 vector registers of x64. Four panels (8 + 8 + 1)
 * spilled to the stack and took a 320 × 1024 row from 21.2 to 34.6 µs; two panels with two rows a turn (the
 * layout before) kept 4 sums; three panels took it to 20.2–20.9 µs (64 GB/s of weights), and the LSTM step at
 * 64 inputs and 256 hidden from 27.0 to 25.4 µs with the faster clamps of math.ts. A two-panel loop between the
 * three-panel loop and the one-panel tail gained 1% more for 270 bytes of gzipped bundle, so it is not there.
 *
 * `backwards` walks the three-panel groups from the last to the first. A streaming layer step alternates it from
 * step to step, so each step starts on the weights the step before read last, which are still in the core's cache
 * when the matrices are larger than it: the LSTM at 64 inputs and 256 hidden (1.3 MB of weights, against 1 MB of
 * L2 here) went from 24.5 to 23.4 µs a layer step. Each column's sum is the same either way, so are the bits.
 */
export function rowAffinePacked(out: usize, start: usize, x: usize, a: usize, inner: i32, y: usize, b: usize, innerB: i32, cols: i32, backwards: bool): void {
  const panels = (cols + 7) >> 3;
  const triples = (cols >> 3) / 3;
  for (let t = 0; t < triples; t++) {
    const panel = (backwards ? triples - 1 - t : t) * 3;
    let s0 = f32x4.splat(0), s1 = f32x4.splat(0), s2 = f32x4.splat(0), s3 = f32x4.splat(0), s4 = f32x4.splat(0), s5 = f32x4.splat(0);
    const col = panel << 3;
    if (start != 0) {
      const p = at(start, col);
      s0 = v128.load(p); s1 = v128.load(p, 16); s2 = v128.load(p, 32); s3 = v128.load(p, 48); s4 = v128.load(p, 64); s5 = v128.load(p, 80);
    }
    for (let pass = 0; pass < 2; pass++) {
      const v = pass == 0 ? x : y;
      const m = pass == 0 ? a : b;
      const n = pass == 0 ? inner : innerB;
      if (v == 0) continue;
      let q0 = m + ((<usize>panel * <usize>n) << 5);
      let q1 = q0 + (<usize>n << 5);
      let q2 = q1 + (<usize>n << 5);
      const end = v + (<usize>n << 2);
      for (let pv = v; pv < end; pv += 4) {
        const s = v128.load32_splat(pv);
        s0 = madd(s, v128.load(q0), s0);
        s1 = madd(s, v128.load(q0, 16), s1);
        s2 = madd(s, v128.load(q1), s2);
        s3 = madd(s, v128.load(q1, 16), s3);
        s4 = madd(s, v128.load(q2), s4);
        s5 = madd(s, v128.load(q2, 16), s5);
        q0 += 32;
        q1 += 32;
        q2 += 32;
      }
    }
    const o = at(out, col);
    v128.store(o, s0); v128.store(o, s1, 16); v128.store(o, s2, 32); v128.store(o, s3, 48); v128.store(o, s4, 64); v128.store(o, s5, 80);
  }
  let panel = triples * 3;
  for (; panel < panels; panel++) {
    const col = panel << 3;
    const width = min(8, cols - col);
    let s0 = f32x4.splat(0), s1 = f32x4.splat(0);
    for (let pass = 0; pass < 2; pass++) {
      const v = pass == 0 ? x : y;
      const m = pass == 0 ? a : b;
      const n = pass == 0 ? inner : innerB;
      if (v == 0) continue;
      let q = m + ((<usize>panel * <usize>n) << 5);
      const end = v + (<usize>n << 2);
      for (let pv = v; pv < end; pv += 4) {
        const s = v128.load32_splat(pv);
        s0 = madd(s, v128.load(q), s0);
        s1 = madd(s, v128.load(q, 16), s1);
        q += 32;
      }
    }
    if (start != 0) {
      // The sum starts at `start`, as in the 32-column blocks: add it lane by lane below.
      for (let c = 0; c < width; c++) {
        const value = (c < 4 ? extract(s0, c) : extract(s1, c - 4));
        store<f32>(at(out, col + c), load<f32>(at(start, col + c)) + value);
      }
    } else {
      for (let c = 0; c < width; c++) store<f32>(at(out, col + c), c < 4 ? extract(s0, c) : extract(s1, c - 4));
    }
  }
}

// @ts-ignore: decorator
@inline function extract(v: v128, lane: i32): f32 {
  if (lane == 0) return f32x4.extract_lane(v, 0);
  if (lane == 1) return f32x4.extract_lane(v, 1);
  if (lane == 2) return f32x4.extract_lane(v, 2);
  return f32x4.extract_lane(v, 3);
}

/**
 * out [rows, cols] = start + x·A (+ y·B), A and B packed; start (a bias row) may be 0. Fewer than 4 rows walk the
 * panels from the last to the first when `turn` is odd (see rowAffinePacked); a layer step passes its step number.
 */
export function affinePacked(out: usize, start: usize, x: usize, a: usize, inner: i32, y: usize, b: usize, innerB: i32, rows: i32, cols: i32, scratch: usize, turn: i32): void {
  if (rows < 4) {
    for (let r = 0; r < rows; r++) rowAffinePacked(at(out, r * cols), start, at(x, r * inner), a, inner, y == 0 ? 0 : at(y, r * innerB), b, innerB, cols, (turn & 1) != 0);
    return;
  }
  matmulPackedRight(out, x, a, rows, inner, cols, 0, scratch);
  if (y != 0) matmulPackedRight(out, y, b, rows, innerB, cols, 1, scratch);
  if (start != 0) {
    for (let r = 0; r < rows; r++) {
      for (let c = 0; c < cols; c++) {
        const p = at(out, r * cols + c);
        store<f32>(p, load<f32>(at(start, c)) + load<f32>(p));
      }
    }
  }
}
