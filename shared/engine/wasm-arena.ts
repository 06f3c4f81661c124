/**
 * What the two WebAssembly front kernels (front-kernel-wasm.ts, complex; front-kernel-real-wasm.ts,
 * real) share: compiling a module from its generated base64 bytes, and one instance whose
 * linear memory holds the caller's buffers (reserve() a stretch, then f64()/i32() views on it).
 * No Node APIs, so this loads in Node, worker threads and browsers alike.
 */

// The few WebAssembly JS API members used here, typed locally: the server's TypeScript
// library set (ES2023 + Node types) does not declare the WebAssembly namespace's classes.
interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}
interface WasmApi {
  Module: new (bytes: Uint8Array) => object;
  Instance: new (module: object, imports: object) => { exports: unknown };
}
const wasmApi = (globalThis as { WebAssembly?: WasmApi }).WebAssembly;

/** The exports every kernel module has: its memory and where its heap starts. */
export interface ArenaExports {
  memory: WasmMemory;
  heapBase(): number;
}

/** The module compiled from base64 bytes, or null where WebAssembly or its SIMD instructions are missing. */
export function compileWasm(base64: string): object | null {
  if (!wasmApi) return null;
  try {
    const text = atob(base64);
    return new wasmApi.Module(Uint8Array.from(text, (c) => c.charCodeAt(0)));
  } catch {
    return null;
  }
}

const PAGE = 65536;

/** One instance of a compiled kernel module with its linear memory. */
export abstract class WasmArena<E extends ArenaExports> {
  protected readonly exports: E;
  private top: number;

  /** `module` comes from compileWasm. */
  protected constructor(module: object) {
    if (!wasmApi) throw new Error('WasmArena: WebAssembly is not available in this runtime');
    this.exports = new wasmApi.Instance(module, {}).exports as E;
    this.top = this.exports.heapBase();
  }

  /**
   * Reserves `bytes` of linear memory (16-byte aligned) and returns its byte offset.
   * Growing the memory detaches every view handed out before: take them again.
   */
  reserve(bytes: number): number {
    const at = this.top;
    this.top = (at + bytes + 15) & ~15;
    const memory = this.exports.memory;
    if (this.top > memory.buffer.byteLength) memory.grow(Math.ceil((this.top - memory.buffer.byteLength) / PAGE));
    return at;
  }

  f64(offset: number, length: number): Float64Array {
    return new Float64Array(this.exports.memory.buffer, offset, length);
  }

  i32(offset: number, length: number): Int32Array {
    return new Int32Array(this.exports.memory.buffer, offset, length);
  }
}
