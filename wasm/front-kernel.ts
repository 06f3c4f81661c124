// AssemblyScript source of the WebAssembly front kernel (compiled by scripts/build-wasm.mjs
// into shared/engine/front-kernel-wasm-bytes.ts). It is a port of factorFront in
// shared/engine/dense-complex.ts and of the front assembly in lu-numeric-factorisation.ts,
// which stay the reference the tests compare it with: same blocking, same pivot rule,
// same delays, and the same floating-point operations on every entry in the same order
// (so the same factors, bit for bit, but for the sign of a zero); the updates use 128-bit
// SIMD, one complex number per f64x2.
//
// All pointers are byte addresses in this module's linear memory. A front of m rows is
// column-major, interleaved (re, im): element (r, c) at f + 16·(c·m + r).

// memory.copy and memory.fill are calls into the runtime in V8 (tens of nanoseconds each,
// and the kernel makes one per pivot and per copied column): short blocks are moved with
// a SIMD loop instead. Sizes are multiples of 16 bytes (one complex number).

/** Copies n bytes (a multiple of 16; the blocks do not overlap) from src to dst. */
function copyBytes(dst: usize, src: usize, n: usize): void {
  if (n >= 2048) {
    memory.copy(dst, src, n);
    return;
  }
  for (let o: usize = 0; o < n; o += 16) v128.store(dst + o, v128.load(src + o));
}

/** Zeroes n bytes (a multiple of 16) at dst. */
function zeroBytes(dst: usize, n: usize): void {
  if (n >= 2048) {
    memory.fill(dst, 0, n);
    return;
  }
  const z = i64x2.splat(0);
  for (let o: usize = 0; o < n; o += 16) v128.store(dst + o, z);
}

/** First free byte of linear memory (the caller allocates its buffers from here up). */
export function heapBase(): usize {
  return (__heap_base + 15) & ~(<usize>15);
}

// x · u on one interleaved complex number as (xr, xr) ⊙ (ur, ui) + (xi, xi) ⊙ (−ui, ur):
// lane by lane the same products, added in the same order, as the TypeScript kernel
// (xr·ur − xi·ui, xr·ui + xi·ur), so both give bit-identical fronts.
// @ts-ignore: decorator
@inline function rot(u: v128): v128 {
  return f64x2.mul(v128.shuffle<f64>(u, u, 1, 0), f64x2.replace_lane(f64x2.splat(1.0), 0, -1.0));
}
// @ts-ignore: decorator
@inline function lo(x: v128): v128 {
  return v128.shuffle<f64>(x, x, 0, 0);
}
// @ts-ignore: decorator
@inline function hi(x: v128): v128 {
  return v128.shuffle<f64>(x, x, 1, 1);
}

/** Unit lower 4×4 triangle of pivots q..q+3 applied to rows q+1..q+3 of the column at cj (scalar, sequential). */
function triangle4(f: usize, m: i32, cj: usize, q: i32): void {
  const c0 = f + <usize>16 * <usize>q * <usize>m;
  const c1 = c0 + <usize>16 * <usize>m;
  const c2 = c1 + <usize>16 * <usize>m;
  const a0 = cj + <usize>16 * <usize>q;
  const u0r = load<f64>(a0), u0i = load<f64>(a0, 8);
  let l = c0 + <usize>16 * <usize>(q + 1);
  const u1r = load<f64>(a0, 16) - (load<f64>(l) * u0r - load<f64>(l, 8) * u0i);
  const u1i = load<f64>(a0, 24) - (load<f64>(l) * u0i + load<f64>(l, 8) * u0r);
  store<f64>(a0, u1r, 16);
  store<f64>(a0, u1i, 24);
  l = c0 + <usize>16 * <usize>(q + 2);
  let l2 = c1 + <usize>16 * <usize>(q + 2);
  const u2r = load<f64>(a0, 32) - (load<f64>(l) * u0r - load<f64>(l, 8) * u0i) - (load<f64>(l2) * u1r - load<f64>(l2, 8) * u1i);
  const u2i = load<f64>(a0, 40) - (load<f64>(l) * u0i + load<f64>(l, 8) * u0r) - (load<f64>(l2) * u1i + load<f64>(l2, 8) * u1r);
  store<f64>(a0, u2r, 32);
  store<f64>(a0, u2i, 40);
  l = c0 + <usize>16 * <usize>(q + 3);
  l2 = c1 + <usize>16 * <usize>(q + 3);
  const l3 = c2 + <usize>16 * <usize>(q + 3);
  store<f64>(a0, load<f64>(a0, 48) - (load<f64>(l) * u0r - load<f64>(l, 8) * u0i + (load<f64>(l2) * u1r - load<f64>(l2, 8) * u1i) + (load<f64>(l3) * u2r - load<f64>(l3, 8) * u2i)), 48);
  store<f64>(a0, load<f64>(a0, 56) - (load<f64>(l) * u0i + load<f64>(l, 8) * u0r + (load<f64>(l2) * u1i + load<f64>(l2, 8) * u1r) + (load<f64>(l3) * u2i + load<f64>(l3, 8) * u2r)), 56);
}

// Packed multipliers. While a block of pivots is eliminated, each finished group of four
// pivots q..q+3 has its multipliers L[r, q..q+3], rows r ≥ q+4, copied once into a packed
// block: row r at pk + 128·r holds lo(l0), hi(l0), lo(l1), hi(l1), ..., lo(l3), hi(l3)
// with lo(l) = (re, re) and hi(l) = (im, im). The updates then read them with plain
// loads instead of two shuffles per multiplier and column, and compute exactly the same
// products and sums as before: lo(x)·u + hi(x)·rot(u) per pivot, four pivots summed in
// order, then subtracted. Row swaps inside the block are mirrored in the packed rows.
//
// The rotated U entries rot(u) of a pass go through memory (uScratch, the first 128 bytes of the
// pack buffer) before the loop: computed in registers, V8's compiler
// rebuilds them (constant, shuffle, multiply) in every iteration of the row loop, which
// cost a quarter of the update's time (measured: 12 → 17 GFlop/s on a 300-row front).

/** 128 bytes of scratch for rot(u) (set by factorFront to the start of its pack buffer). */
let uScratch: usize = 0;

/** The packed block of group g (pivots b0+4g..b0+4g+3) of the current block of pivots. */
// @ts-ignore: decorator
@inline function groupBlock(pack: usize, m: i32, g: i32): usize {
  return pack + 128 + <usize>128 * <usize>m * <usize>g;
}

/** Packs rows q+4..m−1 of the multiplier columns q..q+3 into pk (layout above). */
function packGroup(f: usize, m: i32, q: i32, pk: usize): void {
  const mm = <usize>16 * <usize>m;
  const c0 = f + <usize>q * mm;
  const c1 = c0 + mm;
  const c2 = c1 + mm;
  const c3 = c2 + mm;
  for (let r = <usize>16 * <usize>(q + 4); r < mm; r += 16) {
    const x0 = v128.load(c0 + r), x1 = v128.load(c1 + r), x2 = v128.load(c2 + r), x3 = v128.load(c3 + r);
    const d = pk + <usize>8 * r;
    v128.store(d, lo(x0));
    v128.store(d, hi(x0), 16);
    v128.store(d, lo(x1), 32);
    v128.store(d, hi(x1), 48);
    v128.store(d, lo(x2), 64);
    v128.store(d, hi(x2), 80);
    v128.store(d, lo(x3), 96);
    v128.store(d, hi(x3), 112);
  }
}

/**
 * Column cj −= Σ of the four pivots of a packed group over rows [r0, r1) (byte offsets
 * 16·row), with the group's U entries at a. Skipped when all four are zero, as in the
 * TypeScript kernel (the difference can only be the sign of a zero).
 */
function groupPass(pk: usize, cj: usize, a: usize, r0: usize, r1: usize): void {
  if (r0 >= r1) return;
  const u0 = v128.load(a), u1 = v128.load(a, 16), u2 = v128.load(a, 32), u3 = v128.load(a, 48);
  if (!v128.any_true(v128.or(v128.or(u0, u1), v128.or(u2, u3)))) return;
  // (rot(u) through memory: see uScratch)
  v128.store(uScratch, rot(u0));
  v128.store(uScratch, rot(u1), 16);
  v128.store(uScratch, rot(u2), 32);
  v128.store(uScratch, rot(u3), 48);
  const b0 = v128.load(uScratch), b1 = v128.load(uScratch, 16), b2 = v128.load(uScratch, 32), b3 = v128.load(uScratch, 48);
  for (let r = r0; r < r1; r += 16) {
    const x = pk + <usize>8 * r;
    let s = f64x2.mul(v128.load(x), u0);
    s = f64x2.add(s, f64x2.mul(v128.load(x, 16), b0));
    s = f64x2.add(s, f64x2.mul(v128.load(x, 32), u1));
    s = f64x2.add(s, f64x2.mul(v128.load(x, 48), b1));
    s = f64x2.add(s, f64x2.mul(v128.load(x, 64), u2));
    s = f64x2.add(s, f64x2.mul(v128.load(x, 80), b2));
    s = f64x2.add(s, f64x2.mul(v128.load(x, 96), u3));
    s = f64x2.add(s, f64x2.mul(v128.load(x, 112), b3));
    v128.store(cj + r, f64x2.sub(v128.load(cj + r), s));
  }
}

/** Column cj −= L[·, q]·U[q, j] over rows [r0, r1) (byte offsets), one pivot, multipliers read from F. */
function rankOne(f: usize, m: i32, cj: usize, q: i32, r0: usize, r1: usize): void {
  if (r0 >= r1) return;
  const c0 = f + <usize>q * <usize>16 * <usize>m;
  const u = v128.load(cj + <usize>16 * <usize>q);
  if (!v128.any_true(u)) return;
  v128.store(uScratch, rot(u));
  const b0 = v128.load(uScratch);
  for (let r = r0; r < r1; r += 16) {
    const x0 = v128.load(c0 + r);
    const s = f64x2.add(f64x2.mul(lo(x0), u), f64x2.mul(hi(x0), b0));
    v128.store(cj + r, f64x2.sub(v128.load(cj + r), s));
  }
}

/**
 * Column p −= Σ_{b0 ≤ q < p} L[·, q]·U[q, p] below each pivot, inside the block of
 * pivots b0.. (eliminateColumn of dense-complex.ts): finished groups from the packed
 * blocks, the pivots of the unfinished group one by one.
 */
function panelColumn(f: usize, m: i32, cj: usize, b0: i32, p: i32, pack: usize): void {
  const mm = <usize>16 * <usize>m;
  let q = b0;
  let g = 0;
  for (; q + 4 <= p; q += 4) {
    triangle4(f, m, cj, q);
    groupPass(groupBlock(pack, m, g), cj, cj + <usize>16 * <usize>q, <usize>16 * <usize>(q + 4), mm);
    g++;
  }
  for (; q < p; q++) rankOne(f, m, cj, q, <usize>16 * <usize>(q + 1), mm);
}

/**
 * The right-looking update of columns p..m−1 by the block of pivots b0..p−1, with the
 * same operations on every entry as eliminateColumn of dense-complex.ts: first the U
 * rows b0..p−1 of each column (triangles and the packed groups on rows above p), then
 * the rows p..m−1 group by group across all columns (so a group's packed block stays
 * in cache), and the pivots of an unfinished last group one by one.
 */
function trailingUpdate(f: usize, m: i32, b0: i32, p: i32, pack: usize): void {
  const mm = <usize>16 * <usize>m;
  const groups = (p - b0) >> 2;
  const qr = b0 + 4 * groups;
  const rp = <usize>16 * <usize>p;
  for (let j = p; j < m; j++) {
    const cj = f + <usize>j * mm;
    for (let g = 0; g < groups; g++) {
      const q = b0 + 4 * g;
      triangle4(f, m, cj, q);
      groupPass(groupBlock(pack, m, g), cj, cj + <usize>16 * <usize>q, <usize>16 * <usize>(q + 4), rp);
    }
    for (let q = qr; q < p; q++) rankOne(f, m, cj, q, <usize>16 * <usize>(q + 1), rp);
  }
  for (let g = 0; g < groups; g++) {
    const pk = groupBlock(pack, m, g);
    const a = <usize>16 * <usize>(b0 + 4 * g);
    for (let j = p; j < m; j++) {
      const cj = f + <usize>j * mm;
      groupPass(pk, cj, cj + a, rp, mm);
    }
  }
  if (qr < p) {
    for (let j = p; j < m; j++) remainderPass(f, m, f + <usize>j * mm, qr, p - qr, rp, mm);
  }
}

/**
 * Column cj −= L[·, q]·U[q, j] for the cnt (1 to 3) pivots q0.. of an unfinished group,
 * over rows [r0, r1): the rankOne passes of those pivots fused into one sweep, each entry
 * getting the same subtractions in the same order (pivots with U[q, j] = 0 are skipped).
 */
function remainderPass(f: usize, m: i32, cj: usize, q0: i32, cnt: i32, r0: usize, r1: usize): void {
  if (r0 >= r1) return;
  const mm = <usize>16 * <usize>m;
  // the pivots with a nonzero U entry, in order (at most three)
  let c0: usize = 0, c1: usize = 0, c2: usize = 0;
  let n = 0;
  for (let q = q0; q < q0 + cnt; q++) {
    const u = v128.load(cj + <usize>16 * <usize>q);
    if (!v128.any_true(u)) continue;
    v128.store(uScratch + <usize>32 * <usize>n, u);
    v128.store(uScratch + <usize>32 * <usize>n, rot(u), 16);
    const c = f + <usize>q * mm;
    if (n == 0) c0 = c;
    else if (n == 1) c1 = c;
    else c2 = c;
    n++;
  }
  if (n == 0) return;
  const u0 = v128.load(uScratch), b0 = v128.load(uScratch, 16);
  if (n == 1) {
    for (let r = r0; r < r1; r += 16) {
      const x0 = v128.load(c0 + r);
      v128.store(cj + r, f64x2.sub(v128.load(cj + r), f64x2.add(f64x2.mul(lo(x0), u0), f64x2.mul(hi(x0), b0))));
    }
    return;
  }
  const u1 = v128.load(uScratch, 32), b1 = v128.load(uScratch, 48);
  if (n == 2) {
    for (let r = r0; r < r1; r += 16) {
      const x0 = v128.load(c0 + r), x1 = v128.load(c1 + r);
      let y = f64x2.sub(v128.load(cj + r), f64x2.add(f64x2.mul(lo(x0), u0), f64x2.mul(hi(x0), b0)));
      y = f64x2.sub(y, f64x2.add(f64x2.mul(lo(x1), u1), f64x2.mul(hi(x1), b1)));
      v128.store(cj + r, y);
    }
    return;
  }
  const u2 = v128.load(uScratch, 64), b2 = v128.load(uScratch, 80);
  for (let r = r0; r < r1; r += 16) {
    const x0 = v128.load(c0 + r), x1 = v128.load(c1 + r), x2 = v128.load(c2 + r);
    let y = f64x2.sub(v128.load(cj + r), f64x2.add(f64x2.mul(lo(x0), u0), f64x2.mul(hi(x0), b0)));
    y = f64x2.sub(y, f64x2.add(f64x2.mul(lo(x1), u1), f64x2.mul(hi(x1), b1)));
    y = f64x2.sub(y, f64x2.add(f64x2.mul(lo(x2), u2), f64x2.mul(hi(x2), b2)));
    v128.store(cj + r, y);
  }
}

// A symmetric front (factorFront with symmetric ≠ 0) reads and updates its lower triangle
// only: the U entries of a column come from the L columns (U[q, j] = L[j, q]·d_q, d_q the
// pivot) instead of the triangles of the unsymmetric path, and the rows of column j are
// updated from row j down (from the pivot row for a pivot column).

/** U[q, j] = L[j, q]·d_q for the pivots q0..q1−1 into column j (uFromL of dense-complex.ts). */
function uFromL(f: usize, m: i32, j: i32, q0: i32, q1: i32): void {
  const mm = <usize>16 * <usize>m;
  const cj = f + <usize>j * mm;
  for (let q = q0; q < q1; q++) {
    const cq = f + <usize>q * mm;
    const d = v128.load(cq + <usize>16 * <usize>q);
    const l = v128.load(cq + <usize>16 * <usize>j);
    v128.store(cj + <usize>16 * <usize>q, f64x2.add(f64x2.mul(lo(l), d), f64x2.mul(hi(l), rot(d))));
  }
}

/** panelColumn for a symmetric front: U rows of column p from L, then its rows p..m−1. */
function panelColumnLower(f: usize, m: i32, cp: usize, b0: i32, p: i32, pack: usize): void {
  const mm = <usize>16 * <usize>m;
  uFromL(f, m, p, b0, p);
  const rp = <usize>16 * <usize>p;
  let q = b0;
  let g = 0;
  for (; q + 4 <= p; q += 4) {
    groupPass(groupBlock(pack, m, g), cp, cp + <usize>16 * <usize>q, rp, mm);
    g++;
  }
  if (q < p) remainderPass(f, m, cp, q, p - q, rp, mm);
}

/** trailingUpdate for a symmetric front: U rows of every column j ≥ p from L, then its rows j..m−1. */
function trailingUpdateLower(f: usize, m: i32, b0: i32, p: i32, pack: usize): void {
  const mm = <usize>16 * <usize>m;
  const groups = (p - b0) >> 2;
  const qr = b0 + 4 * groups;
  for (let j = p; j < m; j++) uFromL(f, m, j, b0, p);
  for (let g = 0; g < groups; g++) {
    const pk = groupBlock(pack, m, g);
    const a = <usize>16 * <usize>(b0 + 4 * g);
    for (let j = p; j < m; j++) {
      const cj = f + <usize>j * mm;
      groupPass(pk, cj, cj + a, <usize>16 * <usize>j, mm);
    }
  }
  if (qr < p) {
    for (let j = p; j < m; j++) remainderPass(f, m, f + <usize>j * mm, qr, p - qr, <usize>16 * <usize>j, mm);
  }
}

/** Swaps rows a and b (both below every finished group) in the first `groups` packed blocks. */
function swapPackedRows(pack: usize, m: i32, a: i32, b: i32, groups: i32): void {
  for (let g = 0; g < groups; g++) {
    const pa = groupBlock(pack, m, g) + <usize>128 * <usize>a;
    const pb = groupBlock(pack, m, g) + <usize>128 * <usize>b;
    for (let o: usize = 0; o < 128; o += 16) {
      const x = v128.load(pa + o);
      v128.store(pa + o, v128.load(pb + o));
      v128.store(pb + o, x);
    }
  }
}

function swapRows(f: usize, m: i32, a: i32, b: i32, rowList: usize): void {
  const pa = rowList + <usize>4 * <usize>a;
  const pb = rowList + <usize>4 * <usize>b;
  const t = load<i32>(pa);
  store<i32>(pa, load<i32>(pb));
  store<i32>(pb, t);
  const mm = <usize>16 * <usize>m;
  let ia = f + <usize>16 * <usize>a;
  let ib = f + <usize>16 * <usize>b;
  for (let c = 0; c < m; c++) {
    const x = v128.load(ia);
    v128.store(ia, v128.load(ib));
    v128.store(ib, x);
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
  const mm = <usize>16 * <usize>m;
  const ca = f + <usize>a * mm;
  const cb = f + <usize>b * mm;
  for (let r: usize = 0; r < mm; r += 16) {
    const x = v128.load(ca + r);
    v128.store(ca + r, v128.load(cb + r));
    v128.store(cb + r, x);
  }
}

// Pivot search, two rows per step: |x|² = re² + im² as in the TypeScript kernel, lane 0
// on rows p, p+2, ..., lane 1 on rows p+1, p+3, ...; each lane keeps its first strictly
// largest entry, and of the two the larger wins, the lower row on a tie: the same row
// as the sequential search (the first strictly largest; −1 when all are zero).
let searchedRow: i32 = -1;

/** Largest |F[r, ·]|² over rows r0..r1−1 of the column at cp (0 if none); its first row goes to searchedRow (−1 if 0). */
function pivotSearch(cp: usize, r0: i32, r1: i32): f64 {
  let bestV = f64x2.splat(0.0);
  let rowV = i64x2.splat(-1);
  let idx = i64x2.replace_lane(i64x2.splat(<i64>r0), 1, <i64>(r0 + 1));
  const two = i64x2.splat(2);
  let r = r0;
  for (; r + 2 <= r1; r += 2) {
    const a = v128.load(cp + <usize>16 * <usize>r);
    const b = v128.load(cp + <usize>16 * <usize>r, 16);
    const sa = f64x2.mul(a, a);
    const sb = f64x2.mul(b, b);
    const mag = f64x2.add(v128.shuffle<f64>(sa, sb, 0, 2), v128.shuffle<f64>(sa, sb, 1, 3));
    const gt = f64x2.gt(mag, bestV);
    bestV = v128.bitselect(mag, bestV, gt);
    rowV = v128.bitselect(idx, rowV, gt);
    idx = i64x2.add(idx, two);
  }
  let m0 = f64x2.extract_lane(bestV, 0);
  let i0 = <i32>i64x2.extract_lane(rowV, 0);
  const m1 = f64x2.extract_lane(bestV, 1);
  const i1 = <i32>i64x2.extract_lane(rowV, 1);
  if (m1 > m0 || (m1 == m0 && i1 >= 0 && (i0 < 0 || i1 < i0))) {
    m0 = m1;
    i0 = i1;
  }
  if (r < r1) {
    const xr = load<f64>(cp + <usize>16 * <usize>r), xi = load<f64>(cp + <usize>16 * <usize>r, 8);
    const mag = xr * xr + xi * xi;
    if (mag > m0) {
      m0 = mag;
      i0 = r;
    }
  }
  searchedRow = i0;
  return m0;
}

/** max(start, |F[r, ·]|² over rows r0..r1−1) of the column at cp, as the sequential `if (mag > colMag)` loop. */
function columnMax(cp: usize, r0: i32, r1: i32, start: f64): f64 {
  let bestV = f64x2.splat(start);
  let r = r0;
  for (; r + 2 <= r1; r += 2) {
    const a = v128.load(cp + <usize>16 * <usize>r);
    const b = v128.load(cp + <usize>16 * <usize>r, 16);
    const sa = f64x2.mul(a, a);
    const sb = f64x2.mul(b, b);
    const mag = f64x2.add(v128.shuffle<f64>(sa, sb, 0, 2), v128.shuffle<f64>(sa, sb, 1, 3));
    bestV = v128.bitselect(mag, bestV, f64x2.gt(mag, bestV));
  }
  let best = f64x2.extract_lane(bestV, 0);
  const b1 = f64x2.extract_lane(bestV, 1);
  if (b1 > best) best = b1;
  if (r < r1) {
    const xr = load<f64>(cp + <usize>16 * <usize>r), xi = load<f64>(cp + <usize>16 * <usize>r, 8);
    const mag = xr * xr + xi * xi;
    if (mag > best) best = mag;
  }
  return best;
}

/** Copies the lower triangle of F[from.., from..] onto its upper triangle (mirrorLower of dense-complex.ts). */
function mirrorLower(f: usize, m: i32, from: i32): void {
  const mm = <usize>16 * <usize>m;
  for (let c = from; c + 1 < m; c++) {
    const col = f + <usize>c * mm;
    let across = col + mm + <usize>16 * <usize>c;
    for (let r = <usize>16 * <usize>(c + 1); r < mm; r += 16) {
      v128.store(across, v128.load(col + r));
      across += mm;
    }
  }
}

/**
 * Partial LU of a front with threshold partial pivoting among the fully-summed rows
 * and delayed pivots: factorFront of shared/engine/dense-complex.ts (its JSDoc states
 * the method and sources). save holds 16·m bytes, pack 32·m·nb + 128 bytes (packed
 * multipliers of one block of nb pivots, nb a multiple of 4, and 128 bytes for the rotated
 * U entries of a group). With symmetric ≠ 0 the front is complex symmetric and only diagonal
 * pivots are taken, only the lower triangle is read and updated (see uFromL), and the
 * Schur complement gets both triangles only when pivots were delayed (the symmetric mode
 * of factorFront in dense-complex.ts).
 * Returns the pivots eliminated.
 */
export function factorFront(f: usize, m: i32, kFs: i32, threshold: f64, rowList: usize, colList: usize, save: usize, pack: usize, nb: i32, symmetric: i32): i32 {
  const sym = symmetric != 0;
  const u2 = threshold * threshold;
  const mm = <usize>16 * <usize>m;
  uScratch = pack;
  let p = 0;
  let kEnd = kFs;
  let firstDelay = -1;
  while (p < kEnd) {
    const b0 = p;
    while (p < kEnd && p - b0 < nb) {
      const cp = f + <usize>p * mm;
      if (p > b0) {
        copyBytes(save, cp + <usize>16 * <usize>b0, <usize>16 * <usize>(m - b0));
        if (sym) panelColumnLower(f, m, cp, b0, p, pack);
        else panelColumn(f, m, cp, b0, p, pack);
      }
      const bestMag = pivotSearch(cp, p, kFs);
      const best = searchedRow;
      const colMag = columnMax(cp, kFs, m, bestMag);
      const dr = load<f64>(cp + <usize>16 * <usize>p), di = load<f64>(cp + <usize>16 * <usize>p, 8);
      const diagMag = dr * dr + di * di;
      let piv = -1;
      if (diagMag > 0 && diagMag >= u2 * colMag) piv = p;
      else if (!sym && bestMag > 0 && bestMag >= u2 * colMag) piv = best;
      if (piv < 0) {
        if (p > b0) copyBytes(cp + <usize>16 * <usize>b0, save, <usize>16 * <usize>(m - b0));
        if (firstDelay < 0) firstDelay = p;
        kEnd--;
        if (kEnd != p) {
          if (sym) {
            // (a symmetric swap moves entries across the diagonal: both triangles first)
            mirrorLower(f, m, p);
            swapRows(f, m, p, kEnd, rowList);
            swapPackedRows(pack, m, p, kEnd, (p - b0) >> 2);
          }
          swapColumns(f, m, p, kEnd, colList);
        }
        continue;
      }
      if (piv != p) {
        swapRows(f, m, p, piv, rowList);
        swapPackedRows(pack, m, p, piv, (p - b0) >> 2);
      }
      const pr = load<f64>(cp + <usize>16 * <usize>p), pi = load<f64>(cp + <usize>16 * <usize>p, 8);
      const den = pr * pr + pi * pi;
      const ir = pr / den, ii = -pi / den;
      // (a and rot(a) through memory, as rot(u) in the updates: see uScratch)
      v128.store(uScratch, f64x2.replace_lane(f64x2.splat(ir), 1, ii));
      v128.store(uScratch, rot(v128.load(uScratch)), 16);
      const a = v128.load(uScratch);
      const b = v128.load(uScratch, 16);
      for (let r = <usize>16 * <usize>(p + 1); r < mm; r += 16) {
        const x = v128.load(cp + r);
        v128.store(cp + r, f64x2.add(f64x2.mul(lo(x), a), f64x2.mul(hi(x), b)));
      }
      p++;
      if (((p - b0) & 3) == 0) packGroup(f, m, p - 4, groupBlock(pack, m, (p - b0 - 4) >> 2));
    }
    if (p > b0) {
      if (sym) trailingUpdateLower(f, m, b0, p, pack);
      else trailingUpdate(f, m, b0, p, pack);
    }
    // A symmetric front tries its delayed columns again when pivots were taken after the
    // first of them was set aside: the updates may have made their diagonals acceptable.
    if (p == kEnd && sym && kEnd < kFs && p > firstDelay) {
      kEnd = kFs;
      firstDelay = -1;
    }
  }
  // (the parent adds only the lower triangle of a block without delayed pivots; with them
  // the block's order in the parent is not monotone, so it gets both triangles)
  if (sym && p < kFs) mirrorLower(f, m, p);
  return p;
}

/**
 * Extend-add of a child's contribution block into its parent front f (m rows): column
 * jj of the block (mc columns, column stride ld doubles, at cb) goes to parent column
 * map[jj], in nRuns contiguous stretches runs[3g..3g+2] = [block offset, parent
 * offset, length], all in doubles (the runs SparseLuPlan.factor computes).
 */
function extendAdd(f: usize, m: i32, cb: usize, ld: i32, mc: i32, map: usize, runs: usize, nRuns: i32): void {
  let src = cb;
  const stride = <usize>8 * <usize>ld;
  for (let jj = 0; jj < mc; jj++) {
    const dst = f + <usize>16 * <usize>load<i32>(map + <usize>4 * <usize>jj) * <usize>m;
    for (let g = 0; g < nRuns; g++) {
      const run = runs + <usize>12 * <usize>g;
      const a = src + <usize>8 * <usize>load<i32>(run);
      const o = dst + <usize>8 * <usize>load<i32>(run, 4);
      const len = <usize>8 * <usize>load<i32>(run, 8);
      for (let q: usize = 0; q < len; q += 16) v128.store(o + q, f64x2.add(v128.load(o + q), v128.load(a + q)));
    }
    src += stride;
  }
}

/**
 * extendAdd of a symmetric child's block without delayed pivots: its lower triangle only
 * (column jj from block row jj down), whose place in the parent is the parent's lower
 * triangle, since the map is increasing.
 */
function extendAddLower(f: usize, m: i32, cb: usize, ld: i32, mc: i32, map: usize, runs: usize, nRuns: i32): void {
  let src = cb;
  const stride = <usize>8 * <usize>ld;
  for (let jj = 0; jj < mc; jj++) {
    const dst = f + <usize>16 * <usize>load<i32>(map + <usize>4 * <usize>jj) * <usize>m;
    const from = 2 * jj;
    for (let g = 0; g < nRuns; g++) {
      const run = runs + <usize>12 * <usize>g;
      const a0 = load<i32>(run);
      const len0 = load<i32>(run, 8);
      if (a0 + len0 <= from) continue;
      const skip = from > a0 ? from - a0 : 0;
      const a = src + <usize>8 * <usize>(a0 + skip);
      const o = dst + <usize>8 * <usize>(load<i32>(run, 4) + skip);
      const len = <usize>8 * <usize>(len0 - skip);
      for (let q: usize = 0; q < len; q += 16) v128.store(o + q, f64x2.add(v128.load(o + q), v128.load(a + q)));
    }
    src += stride;
  }
}

/**
 * Checks matrix values before a factorisation (count complex entries at values): returns
 * bit 0 set when every part is finite, and bit 1 too when the entries of each of the
 * npairs pairs (Int32 entry indices e, t at pairs) are equal (a_rc = a_cr, complex
 * symmetric values, sparse-lu.ts). x·0 is 0 exactly when x is finite.
 */
export function checkValues(values: usize, count: i32, pairs: usize, npairs: i32): i32 {
  const zero = f64x2.splat(0);
  let finite = f64x2.eq(zero, zero);
  for (let e = 0; e < count; e++) finite = v128.and(finite, f64x2.eq(f64x2.mul(v128.load(values + <usize>16 * <usize>e), zero), zero));
  if (!i64x2.all_true(finite)) return 0;
  for (let q = 0; q < npairs; q++) {
    const at = pairs + <usize>8 * <usize>q;
    const a = v128.load(values + <usize>16 * <usize>load<i32>(at));
    const b = v128.load(values + <usize>16 * <usize>load<i32>(at, 4));
    if (!i64x2.all_true(f64x2.eq(a, b))) return 1;
  }
  return 3;
}

/** Copies cols columns of rowBytes bytes each, from src (column stride srcStride bytes) to a packed block at dst. */
export function copyColumns(dst: usize, src: usize, rowBytes: usize, cols: i32, srcStride: usize): void {
  for (let c = 0; c < cols; c++) {
    copyBytes(dst, src, rowBytes);
    dst += rowBytes;
    src += srcStride;
  }
}

// The plan table: byte addresses of the plan's arrays in this memory (Int32 unless
// noted), written by the caller (lu-numeric-factorisation.ts) and rewritten whenever
// one of them moves. Indices into the table:
const T_FIRST = 0; // first[s]: first pivot label of front s (ns + 1)
const T_CHILD_PTR = 1; // childPtr (ns + 1)
const T_CHILD_LIST = 2; // childList
const T_NONFS_PTR = 3; // nonfsPtr (ns + 1)
const T_NONFS = 4; // nonfs: labels of each front's non-fully-summed rows
const T_REL_MAP = 5; // relMap: position of each child's non-fully-summed index in its parent
const T_ASM_PTR = 6; // asmPtr (ns + 1)
const T_ASM_ENTRY = 7; // asmEntry: matrix entry of each assembled value
const T_ASM_ROW = 8; // asmRow, asmCol: its place in the front (before delays shift it)
const T_ASM_COL = 9;
const T_VALUES = 10; // the matrix values (f64, interleaved re, im)
const T_CB_DIM = 11; // per front: contribution-block dimension
const T_CB_START = 12; // its start, in doubles (in the stack, or in the previous front buffer)
const T_CB_LD = 13; // its column stride, in doubles
const T_DELAY_OUT = 14; // delayed pivots passed to the parent
const T_DELAY_START = 15; // where their rows and columns start in the delay stack
const T_DELAY_STACK = 16; // the delay stack (labels)
const T_MAP = 17; // work: parent position of each child index
const T_RUNS = 18; // work: runs of consecutive positions (3 per run)
const T_ROW_LIST = 19; // rowList, colList of the current front (labels)
const T_COL_LIST = 20;
const T_CB_STACK = 21; // the contribution-block stack (f64)
const T_PERM = 22; // perm: original unknown of each label

// @ts-ignore: decorator
@inline function tab(plan: usize, t: i32): usize {
  return <usize>load<i32>(plan + <usize>4 * <usize>t);
}
// @ts-ignore: decorator
@inline function at32(base: usize, q: i32): i32 {
  return load<i32>(base + <usize>4 * <usize>q);
}
// @ts-ignore: decorator
@inline function set32(base: usize, q: i32, v: i32): void {
  store<i32>(base + <usize>4 * <usize>q, v);
}

/**
 * Assembles front s into F (m rows: its k pivots, d pivots delayed from its children,
 * then its non-fully-summed rows): zeroes F, sets rowList and colList (labels), adds
 * the matrix entries whose first eliminated index lies in this front, and extend-adds
 * the children's contribution blocks, from the stack or, for the child prevDirect,
 * from the previous front buffer at prevF. The same additions in the same order as the
 * TypeScript loop of lu-numeric-factorisation.ts (on the lower triangle only, for a
 * symmetric front's children without delayed pivots).
 */
function assembleFront(plan: usize, s: i32, f: usize, m: i32, k: i32, d: i32, prevDirect: i32, prevF: usize, sym: bool): void {
  zeroBytes(f, <usize>16 * <usize>m * <usize>m);
  const rowList = tab(plan, T_ROW_LIST);
  const colList = tab(plan, T_COL_LIST);
  const f0 = at32(tab(plan, T_FIRST), s);
  for (let q = 0; q < k; q++) {
    set32(rowList, q, f0 + q);
    set32(colList, q, f0 + q);
  }
  const kFs = k + d;
  const nonfsPtr = tab(plan, T_NONFS_PTR);
  const nonfs = tab(plan, T_NONFS);
  const nf0 = at32(nonfsPtr, s);
  const nfLen = at32(nonfsPtr, s + 1) - nf0;
  for (let q = 0; q < nfLen; q++) {
    const v = at32(nonfs, nf0 + q);
    set32(rowList, kFs + q, v);
    set32(colList, kFs + q, v);
  }
  const asmPtr = tab(plan, T_ASM_PTR);
  const asmEntry = tab(plan, T_ASM_ENTRY);
  const asmRow = tab(plan, T_ASM_ROW);
  const asmCol = tab(plan, T_ASM_COL);
  const values = tab(plan, T_VALUES);
  const a1 = at32(asmPtr, s + 1);
  for (let a = at32(asmPtr, s); a < a1; a++) {
    let lr = at32(asmRow, a);
    let lc = at32(asmCol, a);
    if (lr >= k) lr += d;
    if (lc >= k) lc += d;
    const o = f + <usize>16 * (<usize>lc * <usize>m + <usize>lr);
    const e = values + <usize>16 * <usize>at32(asmEntry, a);
    v128.store(o, f64x2.add(v128.load(o), v128.load(e)));
  }
  const childPtr = tab(plan, T_CHILD_PTR);
  const childList = tab(plan, T_CHILD_LIST);
  const cbDim = tab(plan, T_CB_DIM);
  const cbStart = tab(plan, T_CB_START);
  const cbLd = tab(plan, T_CB_LD);
  const delayOut = tab(plan, T_DELAY_OUT);
  const delayStart = tab(plan, T_DELAY_START);
  const delayStack = tab(plan, T_DELAY_STACK);
  const relMap = tab(plan, T_REL_MAP);
  const map = tab(plan, T_MAP);
  const runs = tab(plan, T_RUNS);
  const cbStack = tab(plan, T_CB_STACK);
  let off = 0;
  const c1 = at32(childPtr, s + 1);
  for (let t = at32(childPtr, s); t < c1; t++) {
    const c = at32(childList, t);
    const mc = at32(cbDim, c);
    const dc = at32(delayOut, c);
    const ds = at32(delayStart, c);
    for (let q = 0; q < dc; q++) {
      set32(map, q, k + off + q);
      set32(rowList, k + off + q, at32(delayStack, ds + q));
      set32(colList, k + off + q, at32(delayStack, ds + dc + q));
    }
    const rp = at32(nonfsPtr, c);
    for (let q = dc; q < mc; q++) {
      const rel = at32(relMap, rp + q - dc);
      set32(map, q, rel < k ? rel : rel + d);
    }
    off += dc;
    // Runs of consecutive parent positions: [child offset, parent offset, length]·2, in doubles.
    let nRuns = 0;
    for (let ii = 0; ii < mc; ) {
      const start = at32(map, ii);
      let len = 1;
      while (ii + len < mc && at32(map, ii + len) == start + len) len++;
      set32(runs, 3 * nRuns, 2 * ii);
      set32(runs, 3 * nRuns + 1, 2 * start);
      set32(runs, 3 * nRuns + 2, 2 * len);
      nRuns++;
      ii += len;
    }
    const base = c == prevDirect ? prevF : cbStack;
    if (sym && dc == 0) extendAddLower(f, m, base + <usize>8 * <usize>at32(cbStart, c), at32(cbLd, c), mc, map, runs, nRuns);
    else extendAdd(f, m, base + <usize>8 * <usize>at32(cbStart, c), at32(cbLd, c), mc, map, runs, nRuns);
  }
}

/** out[q] = perm[rowList[q]], out[m + q] = perm[colList[q]] for q < m: a front's original unknowns. */
function frontUnknowns(plan: usize, m: i32, out: usize): void {
  const perm = tab(plan, T_PERM);
  const rowList = tab(plan, T_ROW_LIST);
  const colList = tab(plan, T_COL_LIST);
  for (let q = 0; q < m; q++) {
    set32(out, q, at32(perm, at32(rowList, q)));
    set32(out, m + q, at32(perm, at32(colList, q)));
  }
}

/**
 * One front of a sparse LU in one call: assembleFront, factorFront on it (its row and
 * column lists from the plan table), then its factors packed at out: the L panel
 * (columns 0..done−1, all m rows) followed by U12 (rows 0..done−1, columns done..m−1),
 * and the front's original unknowns (frontUnknowns) into unknownsOut; symmetric as
 * for factorFront. Returns the pivots eliminated.
 */
export function front(plan: usize, s: i32, f: usize, m: i32, k: i32, d: i32, prevDirect: i32, prevF: usize, threshold: f64, save: usize, pack: usize, nb: i32, out: usize, unknownsOut: usize, symmetric: i32): i32 {
  assembleFront(plan, s, f, m, k, d, prevDirect, prevF, symmetric != 0);
  const done = factorFront(f, m, k + d, threshold, tab(plan, T_ROW_LIST), tab(plan, T_COL_LIST), save, pack, nb, symmetric);
  const lBytes = <usize>16 * <usize>done * <usize>m;
  copyBytes(out, f, lBytes);
  if (done > 0 && m > done) copyColumns(out + lBytes, f + lBytes, <usize>16 * <usize>done, m - done, <usize>16 * <usize>m);
  frontUnknowns(plan, m, unknownsOut);
  return done;
}
