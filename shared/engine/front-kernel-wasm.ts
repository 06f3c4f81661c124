/**
 * The WebAssembly front kernel: factorFront of dense-complex.ts, and a front's assembly
 * and extend-add as lu-numeric-factorisation.ts does them in TypeScript, compiled from
 * wasm/front-kernel.ts (AssemblyScript, 128-bit SIMD) by scripts/build-wasm.mjs.
 * The TypeScript path stays the reference: tests compare the two on random fronts and
 * whole factorisations, bit for bit (tests/engine/front-kernel-wasm.test.ts).
 *
 * The bytes come from a generated TypeScript module (base64), so this loads in Node,
 * worker threads and browsers alike, without Node APIs. Each WasmFrontKernel is one
 * instance with its own linear memory; the caller's front buffers live in that memory
 * (views from f64()/i32()), so the kernel works on them without copies.
 */
import { FRONT_KERNEL_WASM_BASE64 } from './front-kernel-wasm-bytes';
import { compileWasm, WasmArena, type ArenaExports } from './wasm-arena';

interface FrontKernelExports extends ArenaExports {
  factorFront(
    f: number,
    m: number,
    kFs: number,
    threshold: number,
    rowList: number,
    colList: number,
    save: number,
    pack: number,
    nb: number,
    symmetric: number,
  ): number;
  copyColumns(dst: number, src: number, rowBytes: number, cols: number, srcStride: number): void;
  checkValues(values: number, count: number, pairs: number, npairs: number): number;
  front(
    plan: number,
    s: number,
    f: number,
    m: number,
    k: number,
    d: number,
    prevDirect: number,
    prevF: number,
    threshold: number,
    save: number,
    pack: number,
    nb: number,
    out: number,
    unknownsOut: number,
    symmetric: number,
  ): number;
}

let compiled: object | null | undefined;

/** The compiled module, or null where WebAssembly or its SIMD instructions are missing. */
function frontKernelModule(): object | null {
  if (compiled !== undefined) return compiled;
  return (compiled = compileWasm(FRONT_KERNEL_WASM_BASE64));
}

/** True when this runtime can run the WebAssembly kernel (else the TypeScript kernel is used). */
export function wasmKernelAvailable(): boolean {
  return frontKernelModule() !== null;
}

export class WasmFrontKernel extends WasmArena<FrontKernelExports> {
  constructor() {
    const module = frontKernelModule();
    if (!module) throw new Error('WasmFrontKernel: WebAssembly with SIMD is not available in this runtime');
    super(module);
  }

  /**
   * factorFront (dense-complex.ts) on the front at byte offset f; rowList, colList
   * (Int32, m entries), save (16·m bytes) and pack (packBytes(m, nb): the packed
   * multipliers of one block of nb pivots) are byte offsets in this memory too;
   * symmetric as for factorFront of dense-complex.ts.
   */
  factorFront(
    f: number,
    m: number,
    kFs: number,
    threshold: number,
    rowList: number,
    colList: number,
    save: number,
    pack: number,
    nb = 32,
    symmetric = false,
  ): number {
    return this.exports.factorFront(f, m, kFs, threshold, rowList, colList, save, pack, nb, symmetric ? 1 : 0);
  }

  /** Bytes of the pack buffer factorFront needs for fronts up to m rows and blocks of nb pivots (nb a multiple of 4). */
  static packBytes(m: number, nb = 32): number {
    return 32 * m * nb + 128;
  }

  /**
   * One front of a sparse LU in one call: zeroes the front at f (m rows: k own pivots, d
   * delayed from its children, then the rest), adds the matrix entries and extend-adds
   * the children's contribution blocks (the child prevDirect from the previous front
   * buffer at prevF), factorFront on it, then packs its L panel and U12 one after the
   * other at out (done·(2m − done) complex) and its original unknowns into unknownsOut
   * (2·m Int32). plan is the plan table of lu-numeric-factorisation.ts (the addresses of
   * the plan's arrays, indices T_* of wasm/front-kernel.ts); symmetric as for
   * factorFront. Returns the pivots eliminated.
   */
  front(
    plan: number,
    s: number,
    f: number,
    m: number,
    k: number,
    d: number,
    prevDirect: number,
    prevF: number,
    threshold: number,
    save: number,
    pack: number,
    out: number,
    unknownsOut: number,
    symmetric: boolean,
    nb = 32,
  ): number {
    return this.exports.front(plan, s, f, m, k, d, prevDirect, prevF, threshold, save, pack, nb, out, unknownsOut, symmetric ? 1 : 0);
  }

  /** Copies cols columns of rowBytes bytes from src (column stride srcStride bytes) into a packed block at dst. */
  copyColumns(dst: number, src: number, rowBytes: number, cols: number, srcStride: number): void {
    this.exports.copyColumns(dst, src, rowBytes, cols, srcStride);
  }

  /**
   * Checks count complex values at byte offset values: bit 0 of the result when all are
   * finite, bit 1 too when the two entries of each of npairs index pairs (Int32 at pairs)
   * are equal.
   */
  checkValues(values: number, count: number, pairs: number, npairs: number): number {
    return this.exports.checkValues(values, count, pairs, npairs);
  }
}
