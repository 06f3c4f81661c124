/**
 * The real WebAssembly front kernel: factorFrontSymmetric of dense-real.ts compiled from
 * wasm/front-kernel-real.ts (AssemblyScript, 128-bit SIMD) by scripts/build-wasm.mjs, for
 * the mouth Schur complement (mouth-schur.ts). The TypeScript kernel stays the reference:
 * tests/engine/mouth-schur.test.ts compares the two. Loaded through wasm-arena.ts, like
 * front-kernel-wasm.ts; each instance has its own memory and the caller's buffers live in it.
 */
import { REAL_FRONT_KERNEL_WASM_BASE64 } from './front-kernel-real-wasm-bytes';
import { compileWasm, WasmArena, type ArenaExports } from './wasm-arena';

interface RealKernelExports extends ArenaExports {
  factorFront(f: number, m: number, kFs: number, threshold: number, rowList: number, colList: number, save: number, nb: number): number;
  extendAdd(f: number, m: number, cb: number, mc: number, target: number, runs: number, nRuns: number): void;
  copyLowerSymmetric(dst: number, src: number, stride: number, mc: number): void;
  assembleFront(f: number, entries: number, offset: number, h: number, diagonal: number, from: number, to: number, energy: number): void;
}

let compiled: object | null | undefined;

/** The compiled module, or null where WebAssembly or its SIMD instructions are missing. */
function realKernelModule(): object | null {
  if (compiled !== undefined) return compiled;
  return (compiled = compileWasm(REAL_FRONT_KERNEL_WASM_BASE64));
}

/** One instance of the real kernel with its linear memory; null where it cannot run. */
export class WasmRealFrontKernel extends WasmArena<RealKernelExports> {
  static create(): WasmRealFrontKernel | null {
    const module = realKernelModule();
    return module ? new WasmRealFrontKernel(module) : null;
  }

  /** factorFrontSymmetric (dense-real.ts) on the front at byte offset f; the other pointers are byte offsets too. */
  factorFront(f: number, m: number, kFs: number, threshold: number, rowList: number, colList: number, save: number, nb = 32): number {
    return this.exports.factorFront(f, m, kFs, threshold, rowList, colList, save, nb);
  }

  /**
   * Adds the packed mc×mc block at cb into the front f (m rows): column jj to column
   * target[jj], in nRuns stretches runs[3g..3g+2] = [block row, front row, length]
   * (target and runs: Int32 arrays at byte offsets in this memory).
   */
  extendAdd(f: number, m: number, cb: number, mc: number, target: number, runs: number, nRuns: number): void {
    this.exports.extendAdd(f, m, cb, mc, target, runs, nRuns);
  }

  /** Zeroes `entries` doubles at f, then f[offset[a]] += h[a] + energy·diagonal[a] for a in [from, to) (byte offsets of Int32/Float64 arrays). */
  assembleFront(f: number, entries: number, offset: number, h: number, diagonal: number, from: number, to: number, energy: number): void {
    this.exports.assembleFront(f, entries, offset, h, diagonal, from, to, energy);
  }

  /** copyLowerSymmetric (dense-real.ts): packs the block whose lower triangle starts at src (column stride in bytes) into dst, both triangles. */
  copyLowerSymmetric(dst: number, src: number, stride: number, mc: number): void {
    this.exports.copyLowerSymmetric(dst, src, stride, mc);
  }
}
