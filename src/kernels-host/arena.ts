/**
 * Kernel memory: one WebAssembly.Memory per arena, created with its full size up front (initial =
 * maximum pages), so it never grows and every typed-array view made on it stays valid for the
 * arena's life. A bump allocator hands out 16-byte aligned ranges; mark()/release() return the top
 * to an earlier mark (a solve's buffers are released after the solve, the matrix below them stays).
 * Offset 0 is never handed out (the kernels read address 0 as "no array"); the first page is left
 * unused. Pages the kernels never touch are never backed by physical memory (the operating system
 * maps them on first write), so sizing by an upper bound costs address space, not RSS.
 */
import { WA, instantiateKernels, type KernelExports, type WasmMemory } from './module.js';

export const WASM_PAGE_BYTES = 65536;
/** Largest memory a WebAssembly module (32-bit addresses) can have: 65536 pages = 4 GiB. */
export const MAX_KERNEL_MEMORY_BYTES = 65536 * WASM_PAGE_BYTES;
const BASE = WASM_PAGE_BYTES;

export class KernelArena {
  readonly memory: WasmMemory;
  readonly buffer: ArrayBuffer;
  readonly k: KernelExports;
  readonly bytes: number;
  private top = BASE;
  /** Bytes asked for that did not fit (allocated on the JavaScript heap instead). */
  spilledBytes = 0;
  /** Kernel calls handed to WebAssembly so far (the tests check that a path really dispatched). */
  dispatched = 0;
  /** Kernel calls made while this arena was active that ran in TypeScript (an array outside it). */
  missed = 0;

  constructor(bytes: number) {
    const pages = Math.ceil((bytes + BASE) / WASM_PAGE_BYTES);
    if (pages > 65536) throw new RangeError(`kernel memory of ${bytes} bytes exceeds ${MAX_KERNEL_MEMORY_BYTES}`);
    this.memory = new WA.Memory({ initial: pages, maximum: pages });
    this.buffer = this.memory.buffer;
    this.bytes = pages * WASM_PAGE_BYTES;
    this.k = instantiateKernels(this.memory);
  }

  private take(bytes: number): number {
    const at = this.top;
    const end = at + Math.ceil(bytes / 16) * 16;
    if (end > this.bytes) return -1;
    this.top = end;
    return at;
  }

  /** A zeroed Float64Array of n entries in this memory, or null when it does not fit. */
  f64(n: number): Float64Array | null {
    const at = this.take(n * 8);
    if (at < 0) return null;
    const v = new Float64Array(this.buffer, at, n);
    v.fill(0);
    return v;
  }

  /** A zeroed Int32Array of n entries in this memory, or null when it does not fit. */
  i32(n: number): Int32Array | null {
    const at = this.take(n * 4);
    if (at < 0) return null;
    const v = new Int32Array(this.buffer, at, n);
    v.fill(0);
    return v;
  }

  mark(): number { return this.top; }
  release(mark: number): void { if (mark >= BASE && mark <= this.top) this.top = mark; }
  usedBytes(): number { return this.top - BASE; }
}

let current: KernelArena | null = null;

/** The arena allocations go to and kernels dispatch on (null: TypeScript kernels everywhere). */
export function activeArena(): KernelArena | null { return current; }
export function setActiveArena(a: KernelArena | null): void { current = a; }

/** A zeroed Float64Array in the active arena, or on the JavaScript heap (no arena, or no room). */
export function kernelF64(n: number): Float64Array {
  const a = current;
  if (a !== null) {
    const v = a.f64(n);
    if (v !== null) return v;
    a.spilledBytes += n * 8;
  }
  return new Float64Array(n);
}

/** A zeroed Int32Array in the active arena, or on the JavaScript heap. */
export function kernelI32(n: number): Int32Array {
  const a = current;
  if (a !== null) {
    const v = a.i32(n);
    if (v !== null) return v;
    a.spilledBytes += n * 4;
  }
  return new Int32Array(n);
}

/**
 * src itself when no arena is active or src lives in it already, else its copy in the active arena
 * (for arrays built on the JavaScript heap that kernels will read).
 */
export function kernelResident<T extends Float64Array | Int32Array>(src: T): T {
  const a = current;
  if (a === null || src.buffer === a.buffer) return src;
  return (src instanceof Float64Array ? kernelCopyF64(src) : kernelCopyI32(src as Int32Array)) as T;
}

/** A copy of src in the active arena (or the JavaScript heap). */
export function kernelCopyF64(src: Float64Array): Float64Array { const v = kernelF64(src.length); v.set(src); return v; }
export function kernelCopyI32(src: Int32Array): Int32Array { const v = kernelI32(src.length); v.set(src); return v; }

/**
 * Run fn and hand the active arena's space it allocated back afterwards (for buffers that live
 * only during fn, e.g. the slab preconditioner's per-slab inner factors). fn's arrays must not be
 * used after it returns.
 */
export function withScratch<T>(fn: () => T): T {
  const a = current;
  if (a === null) return fn();
  const mark = a.mark();
  try { return fn(); } finally { if (current === a) a.release(mark); }
}

type Arr = Float64Array | Int32Array;

/**
 * The kernels of the active arena when every array lives in it, else null (the caller then runs
 * its TypeScript loop). The check is a few property reads; it runs once per kernel call.
 */
export function wasmFor(a: Arr, b?: Arr, c?: Arr, d?: Arr): KernelExports | null {
  const A = current;
  if (A === null) return null;
  const buf = A.buffer;
  if (a.buffer !== buf || (b !== undefined && b.buffer !== buf) || (c !== undefined && c.buffer !== buf) || (d !== undefined && d.buffer !== buf)) {
    A.missed++;
    return null;
  }
  A.dispatched++;
  return A.k;
}

/** True when every array lives in the active arena. */
export function allInArena(arrays: ReadonlyArray<Arr | null | undefined>): boolean {
  const A = current;
  if (A === null) return false;
  for (const a of arrays) if (a && a.buffer !== A.buffer) { A.missed++; return false; }
  A.dispatched++;
  return true;
}

/** Byte address of element i of a (an arena array). */
export function ptr(a: Arr, i = 0): number { return a.byteOffset + i * a.BYTES_PER_ELEMENT; }
