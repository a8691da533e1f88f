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

/** Run the triad alone and return GB/s (median of the samples). */
export async function measureStreamBandwidth(opts: { length?: number; timeMs?: number } = {}): Promise<number> {
  const arrays = streamArrays(opts.length);
  const bench = new Bench({ name: 'stream', time: opts.timeMs ?? 1000, warmupTime: 200 });
  addStreamTask(bench, arrays);
  await bench.run();
  return gbPerSecond(bench.tasks[0], arrays.bytes);
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
