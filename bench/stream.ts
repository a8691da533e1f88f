/**
 * Streaming-bandwidth baseline for benches: the triad y[i] = a[i] + s·b[i] on plain Float64Arrays
 * (the "triad" of McCalpin's STREAM benchmark, IEEE TCCA Newsletter 1995 — from memory — counted
 * the same way: 24 bytes per entry, two loads and one store, write-allocate traffic not counted).
 * A kernel's effective GB/s divided by this figure, measured in the same run, says how close to
 * memory-bound it is.
 */
import v8 from 'node:v8';
import vm from 'node:vm';
import { Bench, type Task } from 'tinybench';
import { KernelArena } from '../src/kernels-host/arena.js';

/** y = a + s·b (unchecked). */
export function triadKernel(a: Float64Array, b: Float64Array, y: Float64Array, s: number): void {
  const n = y.length;
  for (let i = 0; i < n; i++) y[i] = a[i] + s * b[i];
}

export interface StreamArrays {
  a: Float64Array;
  b: Float64Array;
  y: Float64Array;
  /** Bytes counted per triad call: 3 · 8 · length. */
  bytes: number;
}

/**
 * Arrays for the triad. Default 2^24 entries each (3 × 128 MiB), far beyond any cache, so the
 * loop streams from memory.
 */
export function streamArrays(length = 1 << 24): StreamArrays {
  const a = new Float64Array(length), b = new Float64Array(length), y = new Float64Array(length);
  for (let i = 0; i < length; i++) { a[i] = 1 + i * 1e-9; b[i] = 2 - i * 1e-9; }
  return { a, b, y, bytes: 24 * length };
}

/** Register the triad as a task of `bench`; read its figure with gbPerSecond(task, arrays.bytes). */
export function addStreamTask(bench: Bench, arrays: StreamArrays, name = 'stream triad'): void {
  bench.add(name, () => triadKernel(arrays.a, arrays.b, arrays.y, 1.5));
}

/** GB/s (10^9 bytes per second) from a finished task's median latency and the bytes per call. */
export function gbPerSecond(task: Task | undefined, bytesPerCall: number): number {
  const res = task?.result as { latency?: { p50: number } } | undefined;
  const ms = res?.latency?.p50;
  return ms === undefined || !(ms > 0) ? Number.NaN : bytesPerCall / (ms * 1e6);
}

/**
 * The same triad in WebAssembly (src/kernels/vector.ts `triad`, f64x2) on arrays in one kernel
 * memory: the yardstick the kernels are compared with, since they run in WebAssembly too. It reaches
 * about what a compiled C loop does; the JavaScript triad above is kept as a second figure (it pays
 * per-element checks and no SIMD, and reached about half of this one on the bench machine).
 */
export interface WasmStreamArrays extends StreamArrays { arena: KernelArena }

export function wasmStreamArrays(length = 1 << 24): WasmStreamArrays {
  const arena = new KernelArena(3 * 8 * length + (1 << 16));
  const a = arena.f64(length)!, b = arena.f64(length)!, y = arena.f64(length)!;
  for (let i = 0; i < length; i++) { a[i] = 1 + i * 1e-9; b[i] = 2 - i * 1e-9; }
  return { a, b, y, bytes: 24 * length, arena };
}

export function addWasmStreamTask(bench: Bench, arrays: WasmStreamArrays, name = 'stream triad (WebAssembly)'): void {
  const { k } = arrays.arena;
  const n = arrays.y.length, pa = arrays.a.byteOffset, pb = arrays.b.byteOffset, py = arrays.y.byteOffset;
  bench.add(name, () => k.triad(n, py, pa, 1.5, pb));
}

/**
 * Both triads in one tinybench run, plus a read-only stream: { wasm, js, read } in GB/s (medians).
 * `read` is the WebAssembly sum of squares (src/kernels/vector.ts `sumSquares`, f64x2, two
 * accumulators) over one of the triad's arrays, 8 bytes per entry and no store: about the rate at
 * which one core can read memory, which bounds a product or sweep that must read a matrix beyond
 * the last-level cache. It is not an upper bound: on the 2026-12-03 machine it read 9.3–10.8 GB/s
 * while the triad moved 10.4–13.1 GB/s of counted bytes and a compiled one-thread read 12–16 GB/s
 * (README "Benchmarks"), so floors computed from it can overstate by up to about 1.4×.
 */
export async function measureStreamBandwidths(opts: { length?: number; timeMs?: number } = {}): Promise<{ wasm: number; js: number; read: number }> {
  const w = wasmStreamArrays(opts.length);
  const j = streamArrays(opts.length);
  const bench = new Bench({ name: 'stream', time: opts.timeMs ?? 1000, warmupTime: 200 });
  addWasmStreamTask(bench, w);
  addStreamTask(bench, j);
  const n = w.a.length, pa = w.a.byteOffset;
  let sink = 0;
  bench.add('read stream (WebAssembly)', () => { sink += w.arena.k.sumSquares(n, pa); });
  await bench.run();
  if (!Number.isFinite(sink)) throw new Error('read stream: non-finite sum');
  return { wasm: gbPerSecond(bench.tasks[0], w.bytes), js: gbPerSecond(bench.tasks[1], j.bytes), read: gbPerSecond(bench.tasks[2], 8 * n) };
}

/**
 * Let the process settle before timing: a full garbage collection (exposed at run time through
 * V8's flag, common practice for benches) and a short pause. Without it, the first kernels timed
 * after generating a large matrix ran up to 1.5× slower while the freed memory was still being
 * reclaimed in the background (observed on the 2-core bench machine, not a property of the kernels).
 */
export async function settle(pauseMs = 500): Promise<void> {
  v8.setFlagsFromString('--expose-gc');
  const gc = vm.runInNewContext('gc') as (() => void) | undefined;
  if (typeof gc === 'function') gc();
  await new Promise((resolve) => setTimeout(resolve, pauseMs));
}
