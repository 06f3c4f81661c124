// AssemblyScript source of the real symmetric WebAssembly front kernel (compiled by
// scripts/build-wasm.mjs into shared/engine/front-kernel-real-wasm-bytes.ts). It is a port
// of factorFrontSymmetric in shared/engine/dense-real.ts, which stays the reference the
// tests compare it with: same blocking, pivot rule and delays, and the same floating-point
// operations in the same order (so the same fronts, bit for bit); the updates use 128-bit
// SIMD, two rows per f64x2.
//
// All pointers are byte addresses in this module's linear memory. A front of m rows is
// column-major: element (r, c) at f + 8·(c·m + r).

/** First free byte of linear memory (the caller allocates its buffers from here up). */
export function heapBase(): usize {
  return (__heap_base + 15) & ~(<usize>15);
}

/** Column j −= Σ_{q0 ≤ q < q1} L[·, q]·U[q, j] below each pivot (eliminateColumn of dense-real.ts). */
function eliminateColumn(f: usize, m: i32, j: i32, q0: i32, q1: i32): void {
  const mm = <usize>8 * <usize>m;
  const cj = f + <usize>j * mm;
  let q = q0;
  for (; q + 4 <= q1; q += 4) {
    const a = cj + <usize>8 * <usize>q;
    const c0 = f + <usize>q * mm;
    const c1 = c0 + mm;
    const c2 = c1 + mm;
    const c3 = c2 + mm;
    const o = <usize>8 * <usize>q;
    const u0 = load<f64>(a);
    const u1 = load<f64>(a, 8) - load<f64>(c0 + o, 8) * u0;
    const u2 = load<f64>(a, 16) - load<f64>(c0 + o, 16) * u0 - load<f64>(c1 + o, 16) * u1;
    const u3 = load<f64>(a, 24) - load<f64>(c0 + o, 24) * u0 - load<f64>(c1 + o, 24) * u1 - load<f64>(c2 + o, 24) * u2;
    store<f64>(a, u1, 8);
    store<f64>(a, u2, 16);
    store<f64>(a, u3, 24);
    if (u0 == 0 && u1 == 0 && u2 == 0 && u3 == 0) continue;
    const v0 = f64x2.splat(u0), v1 = f64x2.splat(u1), v2 = f64x2.splat(u2), v3 = f64x2.splat(u3);
    let r = <usize>8 * <usize>(q + 4);
    for (; r + 8 < mm; r += 16) {
      let s = f64x2.mul(v128.load(c0 + r), v0);
      s = f64x2.add(s, f64x2.mul(v128.load(c1 + r), v1));
      s = f64x2.add(s, f64x2.mul(v128.load(c2 + r), v2));
      s = f64x2.add(s, f64x2.mul(v128.load(c3 + r), v3));
      v128.store(cj + r, f64x2.sub(v128.load(cj + r), s));
    }
    if (r < mm) store<f64>(cj + r, load<f64>(cj + r) - (load<f64>(c0 + r) * u0 + load<f64>(c1 + r) * u1 + load<f64>(c2 + r) * u2 + load<f64>(c3 + r) * u3));
  }
  for (; q < q1; q++) {
    const c0 = f + <usize>q * mm;
    const u = load<f64>(cj + <usize>8 * <usize>q);
    if (u == 0) continue;
    const v = f64x2.splat(u);
    let r = <usize>8 * <usize>(q + 1);
    for (; r + 8 < mm; r += 16) v128.store(cj + r, f64x2.sub(v128.load(cj + r), f64x2.mul(v128.load(c0 + r), v)));
    if (r < mm) store<f64>(cj + r, load<f64>(cj + r) - load<f64>(c0 + r) * u);
  }
}

/** Rows [r0, r1) of columns cj and ck −= Σ of four pivot columns c0..c3 times (u, w) (SIMD, scalar tail). */
// @ts-ignore: decorator
@inline function updatePair(cj: usize, ck: usize, c0: usize, c1: usize, c2: usize, c3: usize, r0: usize, r1: usize, u0: f64, u1: f64, u2: f64, u3: f64, w0: f64, w1: f64, w2: f64, w3: f64): void {
  const v0 = f64x2.splat(u0), v1 = f64x2.splat(u1), v2 = f64x2.splat(u2), v3 = f64x2.splat(u3);
  const y0 = f64x2.splat(w0), y1 = f64x2.splat(w1), y2 = f64x2.splat(w2), y3 = f64x2.splat(w3);
  let r = r0;
  for (; r + 8 < r1; r += 16) {
    const x0 = v128.load(c0 + r), x1 = v128.load(c1 + r), x2 = v128.load(c2 + r), x3 = v128.load(c3 + r);
    let s = f64x2.mul(x0, v0);
    let t = f64x2.mul(x0, y0);
    s = f64x2.add(s, f64x2.mul(x1, v1));
    t = f64x2.add(t, f64x2.mul(x1, y1));
    s = f64x2.add(s, f64x2.mul(x2, v2));
    t = f64x2.add(t, f64x2.mul(x2, y2));
    s = f64x2.add(s, f64x2.mul(x3, v3));
    t = f64x2.add(t, f64x2.mul(x3, y3));
    v128.store(cj + r, f64x2.sub(v128.load(cj + r), s));
    v128.store(ck + r, f64x2.sub(v128.load(ck + r), t));
  }
  if (r < r1) {
    const x0 = load<f64>(c0 + r), x1 = load<f64>(c1 + r), x2 = load<f64>(c2 + r), x3 = load<f64>(c3 + r);
    store<f64>(cj + r, load<f64>(cj + r) - (x0 * u0 + x1 * u1 + x2 * u2 + x3 * u3));
    store<f64>(ck + r, load<f64>(ck + r) - (x0 * w0 + x1 * w1 + x2 * w2 + x3 * w3));
  }
}

/** Rows [r0, r1) of columns cj and ck −= column c0 times (u, w). */
// @ts-ignore: decorator
@inline function updatePairOne(cj: usize, ck: usize, c0: usize, r0: usize, r1: usize, u: f64, w: f64): void {
  for (let r = r0; r < r1; r += 8) {
    const x = load<f64>(c0 + r);
    store<f64>(cj + r, load<f64>(cj + r) - x * u);
    store<f64>(ck + r, load<f64>(ck + r) - x * w);
  }
}

/**
 * Columns j and j+1 −= the block's pivots q0..q1−1, on the rows q0..q1−1 and from row j
 * down only (eliminateLowerPair of dense-real.ts).
 */
function eliminateLowerPair(f: usize, m: i32, j: i32, q0: i32, q1: i32): void {
  const mm = <usize>8 * <usize>m;
  const cj = f + <usize>j * mm;
  const ck = cj + mm;
  const rq1 = <usize>8 * <usize>q1;
  const rj = <usize>8 * <usize>j;
  let q = q0;
  for (; q + 4 <= q1; q += 4) {
    const c0 = f + <usize>q * mm;
    const c1 = c0 + mm;
    const c2 = c1 + mm;
    const c3 = c2 + mm;
    const o = <usize>8 * <usize>q;
    const l10 = load<f64>(c0 + o, 8);
    const l20 = load<f64>(c0 + o, 16);
    const l21 = load<f64>(c1 + o, 16);
    const l30 = load<f64>(c0 + o, 24);
    const l31 = load<f64>(c1 + o, 24);
    const l32 = load<f64>(c2 + o, 24);
    const a = cj + o;
    const u0 = load<f64>(a);
    const u1 = load<f64>(a, 8) - l10 * u0;
    const u2 = load<f64>(a, 16) - l20 * u0 - l21 * u1;
    const u3 = load<f64>(a, 24) - l30 * u0 - l31 * u1 - l32 * u2;
    store<f64>(a, u1, 8);
    store<f64>(a, u2, 16);
    store<f64>(a, u3, 24);
    const b = ck + o;
    const w0 = load<f64>(b);
    const w1 = load<f64>(b, 8) - l10 * w0;
    const w2 = load<f64>(b, 16) - l20 * w0 - l21 * w1;
    const w3 = load<f64>(b, 24) - l30 * w0 - l31 * w1 - l32 * w2;
    store<f64>(b, w1, 8);
    store<f64>(b, w2, 16);
    store<f64>(b, w3, 24);
    if (u0 == 0 && u1 == 0 && u2 == 0 && u3 == 0 && w0 == 0 && w1 == 0 && w2 == 0 && w3 == 0) continue;
    updatePair(cj, ck, c0, c1, c2, c3, o + 32, rq1, u0, u1, u2, u3, w0, w1, w2, w3);
    updatePair(cj, ck, c0, c1, c2, c3, rj, mm, u0, u1, u2, u3, w0, w1, w2, w3);
  }
  for (; q < q1; q++) {
    const c0 = f + <usize>q * mm;
    const u = load<f64>(cj + <usize>8 * <usize>q);
    const w = load<f64>(ck + <usize>8 * <usize>q);
    if (u == 0 && w == 0) continue;
    updatePairOne(cj, ck, c0, <usize>8 * <usize>(q + 1), rq1, u, w);
    updatePairOne(cj, ck, c0, rj, mm, u, w);
  }
}

function swapRows(f: usize, m: i32, a: i32, b: i32, rowList: usize): void {
  const pa = rowList + <usize>4 * <usize>a;
  const pb = rowList + <usize>4 * <usize>b;
  const t = load<i32>(pa);
  store<i32>(pa, load<i32>(pb));
  store<i32>(pb, t);
  const mm = <usize>8 * <usize>m;
  let ia = f + <usize>8 * <usize>a;
  let ib = f + <usize>8 * <usize>b;
  for (let c = 0; c < m; c++) {
    const x = load<f64>(ia);
    store<f64>(ia, load<f64>(ib));
    store<f64>(ib, x);
    ia += mm;
    ib += mm;
  }
}

function swapColumns(f: usize, m: i32, a: i32, b: i32, colList: usize): void {
  const pa = colList + <usize>4 * <usize>a;
  const pb = colList + <usize>4 * <usize>b;
  const t = load<i32>(pa);
  store<i32>(pa, load<i32>(pb));
  store<i32>(pb, t);
  const mm = <usize>8 * <usize>m;
  const ca = f + <usize>a * mm;
  const cb = f + <usize>b * mm;
  for (let r: usize = 0; r < mm; r += 8) {
    const x = load<f64>(ca + r);
    store<f64>(ca + r, load<f64>(cb + r));
    store<f64>(cb + r, x);
  }
}

/**
 * Partial LDLᵀ of a real symmetric front with diagonal pivots and delays:
 * factorFrontSymmetric of shared/engine/dense-real.ts (its comment gives the method and
 * sources). save holds 8·m bytes. Returns the pivots eliminated.
 */
export function factorFront(f: usize, m: i32, kFs: i32, threshold: f64, rowList: usize, colList: usize, save: usize, nb: i32): i32 {
  const mm = <usize>8 * <usize>m;
  let p = 0;
  let kEnd = kFs;
  while (p < kEnd) {
    const b0 = p;
    while (p < kEnd && p - b0 < nb) {
      const cp = f + <usize>p * mm;
      if (p > b0) {
        memory.copy(save, cp + <usize>8 * <usize>b0, <usize>8 * <usize>(m - b0));
        eliminateColumn(f, m, p, b0, p);
      }
      // the column's largest magnitude below the diagonal, two rows at a time (pmax: no NaN here)
      let r = <usize>8 * <usize>(p + 1);
      let most = f64x2.splat(0);
      for (; r + 8 < mm; r += 16) most = f64x2.pmax(most, f64x2.abs(v128.load(cp + r)));
      let colMag = Math.max(f64x2.extract_lane(most, 0), f64x2.extract_lane(most, 1));
      if (r < mm) colMag = Math.max(colMag, Math.abs(load<f64>(cp + r)));
      const diagMag = Math.abs(load<f64>(cp + <usize>8 * <usize>p));
      if (!(diagMag > 0 && diagMag >= threshold * colMag)) {
        if (p > b0) memory.copy(cp + <usize>8 * <usize>b0, save, <usize>8 * <usize>(m - b0));
        kEnd--;
        if (kEnd != p) {
          swapRows(f, m, p, kEnd, rowList);
          swapColumns(f, m, p, kEnd, colList);
        }
        continue;
      }
      const inv = 1 / load<f64>(cp + <usize>8 * <usize>p);
      for (let r = <usize>8 * <usize>(p + 1); r < mm; r += 8) store<f64>(cp + r, load<f64>(cp + r) * inv);
      p++;
    }
    if (p > b0) {
      let j = p;
      for (; j + 1 < m; j += 2) eliminateLowerPair(f, m, j, b0, p);
      if (j < m) eliminateColumn(f, m, j, b0, p);
      if (p < kEnd) {
        for (let c = p; c < m; c++) {
          const cc = f + <usize>c * mm;
          for (let r = c + 1; r < m; r++) store<f64>(f + <usize>r * mm + <usize>8 * <usize>c, load<f64>(cc + <usize>8 * <usize>r));
        }
      }
    }
  }
  return p;
}

/**
 * Extend-add of a child's contribution block (mc × mc, packed, at cb) into its parent
 * front f (m rows): column jj to column target[jj], its rows in nRuns stretches
 * runs[3g..3g+2] = [block row, front row, length] (Int32 arrays).
 */
export function extendAdd(f: usize, m: i32, cb: usize, mc: i32, target: usize, runs: usize, nRuns: i32): void {
  let src = cb;
  const stride = <usize>8 * <usize>mc;
  for (let jj = 0; jj < mc; jj++) {
    const dst = f + <usize>8 * <usize>load<i32>(target + <usize>4 * <usize>jj) * <usize>m;
    for (let g = 0; g < nRuns; g++) {
      const run = runs + <usize>12 * <usize>g;
      const a = src + <usize>8 * <usize>load<i32>(run);
      const o = dst + <usize>8 * <usize>load<i32>(run, 4);
      const len = <usize>8 * <usize>load<i32>(run, 8);
      let q: usize = 0;
      for (; q + 8 < len; q += 16) v128.store(o + q, f64x2.add(v128.load(o + q), v128.load(a + q)));
      if (q < len) store<f64>(o + q, load<f64>(o + q) + load<f64>(a + q));
    }
    src += stride;
  }
}

/**
 * Packs the symmetric mc×mc block whose lower triangle starts at src (column stride
 * `stride` bytes) into dst with both triangles (copyLowerSymmetric of dense-real.ts).
 */
export function copyLowerSymmetric(dst: usize, src: usize, stride: usize, mc: i32): void {
  const md = <usize>8 * <usize>mc;
  for (let c = 0; c < mc; c++) {
    const from = src + <usize>c * stride;
    const col = dst + <usize>c * md;
    let across = dst + <usize>c * (md + 8);
    for (let r = c; r < mc; r++) {
      const x = load<f64>(from + <usize>8 * <usize>r);
      store<f64>(col + <usize>8 * <usize>r, x);
      store<f64>(across, x);
      across += md;
    }
  }
}

/**
 * Zeroes a front (`entries` doubles at f) and assembles E − H into it: f[offset[a]] +=
 * h[a] + energy·diagonal[a] for a in [from, to), as RealFronts.assemble of mouth-schur.ts.
 */
export function assembleFront(f: usize, entries: i32, offset: usize, h: usize, diagonal: usize, from: i32, to: i32, energy: f64): void {
  memory.fill(f, 0, <usize>8 * <usize>entries);
  for (let a = from; a < to; a++) {
    const o = f + <usize>8 * <usize>load<i32>(offset + <usize>4 * <usize>a);
    store<f64>(o, load<f64>(o) + (load<f64>(h + <usize>8 * <usize>a) + energy * load<f64>(diagonal + <usize>8 * <usize>a)));
  }
}
