/**
 * Matrix product in f32x4 SIMD, the twin of kernels/matmul.ts with the same arguments and meaning:
 * out = op(a)·op(b) (or out += … when `accumulate`), op(a) [rows, inner], op(b) [inner, cols], a stored
 * [inner, rows] when `transposeA`, b stored [cols, inner] when `transposeB`. Pointers are byte offsets into the
 * backend's memory; `out` must not alias `a` or `b`.
 *
 * Layout (common practice for fast matrix products): op(a) is packed into blocks of 4 rows and op(b) into panels
 * of 8 columns, both k-major (packedA[(block·inner + k)·4 + r], packedB[(panel·inner + k)·8 + c]), missing rows
 * and columns zero, in `scratch` (the backend hands the kernel (⌈rows/4⌉·4 + ⌈cols/8⌉·8)·inner + 32 floats). A
 * 4 × 8 register block (8 vectors of accumulators) then does 32 multiply-adds per 3 vector loads. Accumulation is
 * in f32 (the JavaScript twin accumulates in f64; the agreement tests bound the difference).
 *
 * Fewer than 4 rows (one streaming sample): no packing; blocks of 16 columns read b in place (four accumulator vectors,
 * one broadcast of op(a)[row, k] per four loads of b). A 32-column block with eight accumulators was measured slower
 * here for every shape up to 64 × 256 (V8 spills its registers): 1×48×144 in 702–756 ns against 454–460 ns, 1×32×128 in
 * 416 against 266, 3×128×512 in 20.0 µs against 15.6 µs; only 1×256×1024 was faster with it (31 µs against 39 µs).
 */
import { load4, madd, store4 } from './math';

export function matmul(
  out: usize, a: usize, b: usize, rows: i32, inner: i32, cols: i32,
  transposeA: i32, transposeB: i32, accumulate: i32, scratch: usize,
): void {
  if (rows < 4) {
    fewRows(out, a, b, rows, inner, cols, transposeA, transposeB, accumulate);
    return;
  }
  const rowBlocks = (rows + 3) >> 2;
  const panels = (cols + 7) >> 3;
  const packedA = scratch;
  const packedB = packedA + ((<usize>rowBlocks * <usize>inner) << 4);
  const edge = packedB + ((<usize>panels * <usize>inner) << 5);
  packLeft(packedA, a, rows, inner, transposeA);
  packRight(packedB, b, inner, cols, transposeB);
  blocked(out, packedA, packedB, rows, inner, cols, accumulate, edge);
}

/**
 * out (+)= a·B for 4 rows or more, with B already packed into 8-column panels (packed.ts packs runtime weights so):
 * only a is packed, into `scratch` (⌈rows/4⌉·4·inner + 32 floats).
 */
export function matmulPackedRight(out: usize, a: usize, packedB: usize, rows: i32, inner: i32, cols: i32, accumulate: i32, scratch: usize): void {
  const rowBlocks = (rows + 3) >> 2;
  const packedA = scratch;
  const edge = packedA + ((<usize>rowBlocks * <usize>inner) << 4);
  packLeft(packedA, a, rows, inner, 0);
  blocked(out, packedA, packedB, rows, inner, cols, accumulate, edge);
}

/** The 4 × 8 register-blocked product of two packed operands (see the comment at the top). */
function blocked(out: usize, packedA: usize, packedB: usize, rows: i32, inner: i32, cols: i32, accumulate: i32, edge: usize): void {
  const rowBlocks = (rows + 3) >> 2;
  const panels = (cols + 7) >> 3;
  const rowStride = <usize>cols << 2;
  for (let rb = 0; rb < rowBlocks; rb++) {
    const row0 = rb << 2;
    for (let panel = 0; panel < panels; panel++) {
      const col0 = panel << 3;
      let pa = packedA + ((<usize>rb * <usize>inner) << 4);
      let pb = packedB + ((<usize>panel * <usize>inner) << 5);
      let c00 = f32x4.splat(0), c01 = f32x4.splat(0);
      let c10 = f32x4.splat(0), c11 = f32x4.splat(0);
      let c20 = f32x4.splat(0), c21 = f32x4.splat(0);
      let c30 = f32x4.splat(0), c31 = f32x4.splat(0);
      for (let k = 0; k < inner; k++) {
        const av = v128.load(pa);
        const b0 = v128.load(pb);
        const b1 = v128.load(pb, 16);
        const a0 = v128.shuffle<f32>(av, av, 0, 0, 0, 0);
        const a1 = v128.shuffle<f32>(av, av, 1, 1, 1, 1);
        const a2 = v128.shuffle<f32>(av, av, 2, 2, 2, 2);
        const a3 = v128.shuffle<f32>(av, av, 3, 3, 3, 3);
        c00 = madd(a0, b0, c00); c01 = madd(a0, b1, c01);
        c10 = madd(a1, b0, c10); c11 = madd(a1, b1, c11);
        c20 = madd(a2, b0, c20); c21 = madd(a2, b1, c21);
        c30 = madd(a3, b0, c30); c31 = madd(a3, b1, c31);
        pa += 16;
        pb += 32;
      }
      if (row0 + 4 <= rows && col0 + 8 <= cols) {
        let o = out + ((<usize>row0 * <usize>cols + <usize>col0) << 2);
        if (accumulate) {
          v128.store(o, f32x4.add(v128.load(o), c00)); v128.store(o, f32x4.add(v128.load(o, 16), c01), 16); o += rowStride;
          v128.store(o, f32x4.add(v128.load(o), c10)); v128.store(o, f32x4.add(v128.load(o, 16), c11), 16); o += rowStride;
          v128.store(o, f32x4.add(v128.load(o), c20)); v128.store(o, f32x4.add(v128.load(o, 16), c21), 16); o += rowStride;
          v128.store(o, f32x4.add(v128.load(o), c30)); v128.store(o, f32x4.add(v128.load(o, 16), c31), 16);
        } else {
          v128.store(o, c00); v128.store(o, c01, 16); o += rowStride;
          v128.store(o, c10); v128.store(o, c11, 16); o += rowStride;
          v128.store(o, c20); v128.store(o, c21, 16); o += rowStride;
          v128.store(o, c30); v128.store(o, c31, 16);
        }
      } else {
        // Edge block: spill the accumulators, then write the valid corner one entry at a time.
        v128.store(edge, c00); v128.store(edge, c01, 16);
        v128.store(edge, c10, 32); v128.store(edge, c11, 48);
        v128.store(edge, c20, 64); v128.store(edge, c21, 80);
        v128.store(edge, c30, 96); v128.store(edge, c31, 112);
        const rowCount = min(4, rows - row0);
        const colCount = min(8, cols - col0);
        for (let r = 0; r < rowCount; r++) {
          for (let c = 0; c < colCount; c++) {
            const value = load<f32>(edge + (<usize>(r * 8 + c) << 2));
            const o = out + ((<usize>(row0 + r) * <usize>cols + <usize>(col0 + c)) << 2);
            store<f32>(o, accumulate ? load<f32>(o) + value : value);
          }
        }
      }
    }
  }
}

/** op(a) [rows, inner] into blocks of 4 rows, k-major; missing rows are 0. */
function packLeft(packed: usize, a: usize, rows: i32, inner: i32, transposeA: i32): void {
  const rowBlocks = (rows + 3) >> 2;
  for (let rb = 0; rb < rowBlocks; rb++) {
    const base = packed + ((<usize>rb * <usize>inner) << 4);
    for (let r = 0; r < 4; r++) {
      const row = (rb << 2) + r;
      const lane = base + (<usize>r << 2);
      if (row >= rows) {
        for (let k = 0; k < inner; k++) store<f32>(lane + (<usize>k << 4), 0);
      } else if (transposeA) {
        for (let k = 0; k < inner; k++) store<f32>(lane + (<usize>k << 4), load<f32>(a + ((<usize>k * <usize>rows + <usize>row) << 2)));
      } else {
        const start = a + ((<usize>row * <usize>inner) << 2);
        for (let k = 0; k < inner; k++) store<f32>(lane + (<usize>k << 4), load<f32>(start + (<usize>k << 2)));
      }
    }
  }
}

/** op(b) [inner, cols] into panels of 8 columns, k-major; missing columns are 0. */
function packRight(packed: usize, b: usize, inner: i32, cols: i32, transposeB: i32): void {
  const panels = (cols + 7) >> 3;
  for (let panel = 0; panel < panels; panel++) {
    const base = packed + ((<usize>panel * <usize>inner) << 5);
    const col0 = panel << 3;
    if (!transposeB && col0 + 8 <= cols) {
      for (let k = 0; k < inner; k++) {
        const source = b + ((<usize>k * <usize>cols + <usize>col0) << 2);
        const target = base + (<usize>k << 5);
        v128.store(target, v128.load(source));
        v128.store(target, v128.load(source, 16), 16);
      }
      continue;
    }
    for (let c = 0; c < 8; c++) {
      const col = col0 + c;
      const lane = base + (<usize>c << 2);
      if (col >= cols) {
        for (let k = 0; k < inner; k++) store<f32>(lane + (<usize>k << 5), 0);
      } else if (transposeB) {
        const start = b + ((<usize>col * <usize>inner) << 2);
        for (let k = 0; k < inner; k++) store<f32>(lane + (<usize>k << 5), load<f32>(start + (<usize>k << 2)));
      } else {
        for (let k = 0; k < inner; k++) store<f32>(lane + (<usize>k << 5), load<f32>(b + ((<usize>k * <usize>cols + <usize>col) << 2)));
      }
    }
  }
}

/** One to three rows: b is read in place (packing it would cost as much as the product). */
function fewRows(out: usize, a: usize, b: usize, rows: i32, inner: i32, cols: i32, transposeA: i32, transposeB: i32, accumulate: i32): void {
  const aRowStep: usize = transposeA ? 1 : <usize>inner;
  const aInnerStep: usize = transposeA ? <usize>rows : 1;
  for (let row = 0; row < rows; row++) {
    const aStart = a + ((<usize>row * aRowStep) << 2);
    const outRow = out + ((<usize>row * <usize>cols) << 2);
    if (transposeB) {
      // out[row, col] = Σ_k op(a)[row, k] · b[col, k]: dot products of two runs of `inner`.
      for (let col = 0; col < cols; col++) {
        const bStart = b + ((<usize>col * <usize>inner) << 2);
        let sum: f32 = 0;
        if (aInnerStep == 1) {
          let acc = f32x4.splat(0);
          let k = 0;
          for (; k + 4 <= inner; k += 4) acc = madd(v128.load(aStart + (<usize>k << 2)), v128.load(bStart + (<usize>k << 2)), acc);
          sum = (f32x4.extract_lane(acc, 0) + f32x4.extract_lane(acc, 1)) + (f32x4.extract_lane(acc, 2) + f32x4.extract_lane(acc, 3));
          for (; k < inner; k++) sum += load<f32>(aStart + (<usize>k << 2)) * load<f32>(bStart + (<usize>k << 2));
        } else {
          for (let k = 0; k < inner; k++) sum += load<f32>(aStart + ((<usize>k * aInnerStep) << 2)) * load<f32>(bStart + (<usize>k << 2));
        }
        const o = outRow + (<usize>col << 2);
        store<f32>(o, accumulate ? load<f32>(o) + sum : sum);
      }
      continue;
    }
    let col = 0;
    const bStride = <usize>cols << 2;
    const aStride = aInnerStep << 2;
    for (; col + 16 <= cols; col += 16) {
      let s0 = f32x4.splat(0), s1 = f32x4.splat(0), s2 = f32x4.splat(0), s3 = f32x4.splat(0);
      let pa = aStart;
      let pb = b + (<usize>col << 2);
      for (let k = 0; k < inner; k++) {
        const x = v128.load32_splat(pa);
        s0 = madd(x, v128.load(pb), s0);
        s1 = madd(x, v128.load(pb, 16), s1);
        s2 = madd(x, v128.load(pb, 32), s2);
        s3 = madd(x, v128.load(pb, 48), s3);
        pa += aStride;
        pb += bStride;
      }
      const o = outRow + (<usize>col << 2);
      if (accumulate) {
        s0 = f32x4.add(s0, v128.load(o)); s1 = f32x4.add(s1, v128.load(o, 16));
        s2 = f32x4.add(s2, v128.load(o, 32)); s3 = f32x4.add(s3, v128.load(o, 48));
      }
      v128.store(o, s0); v128.store(o, s1, 16); v128.store(o, s2, 32); v128.store(o, s3, 48);
    }
    for (; col < cols; ) {
      const full = col + 4 <= cols;
      let s = f32x4.splat(0);
      let pa = aStart;
      let pb = b + (<usize>col << 2);
      for (let k = 0; k < inner; k++) {
        s = madd(v128.load32_splat(pa), load4(pb, full), s);
        pa += aInnerStep << 2;
        pb += <usize>cols << 2;
      }
      const o = outRow + (<usize>col << 2);
      if (accumulate) s = f32x4.add(s, load4(o, full));
      store4(o, s, full);
      col += full ? 4 : 1;
    }
  }
}
