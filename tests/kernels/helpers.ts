// Shared pieces of the WebAssembly-against-TypeScript tests (not a test file itself).
import { KernelArena, setActiveArena } from '../../src/kernels-host/arena.js';
import type { Bsr } from '../../src/sparse/types.js';

/** Run fn with a fresh arena of `bytes` active; the arena is deactivated afterwards. */
export function withArena<T>(bytes: number, fn: (arena: KernelArena) => T): T {
  const arena = new KernelArena(bytes);
  setActiveArena(arena);
  try { return fn(arena); } finally { setActiveArena(null); }
}

/** Copy of a typed array in the arena. */
export function inArena<T extends Float64Array | Int32Array>(arena: KernelArena, a: T): T {
  const v = (a instanceof Float64Array ? arena.f64(a.length) : arena.i32(a.length)) as T | null;
  if (v === null) throw new Error('test arena too small');
  v.set(a);
  return v;
}

export function bsrInArena(arena: KernelArena, a: Bsr): Bsr {
  return { ...a, rowPtr: inArena(arena, a.rowPtr), colInd: inArena(arena, a.colInd), values: inArena(arena, a.values) };
}

/** Bitwise equality of two Float64Arrays (Object.is per entry, so −0 ≠ +0 and NaN = NaN). */
export function firstDifference(a: Float64Array, b: Float64Array): string | undefined {
  if (a.length !== b.length) return `lengths ${a.length} and ${b.length}`;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return `entry ${i}: ${a[i]} vs ${b[i]}`;
  return undefined;
}

/** Block sizes with a specialized WebAssembly path (1–8) and generic ones (both tile shapes). */
export const BLOCK_SIZES = [1, 2, 3, 4, 5, 6, 7, 8, 9, 12, 16, 30, 11, 17];

/**
 * Block sizes that reach every branch of the block mat-vec tiles' column loop (two column pairs per
 * pass, then at most one pair, then at most one odd column): the two-row tile (bs mod 4 = 1, 2, 3:
 * 10, 14 here, 5, 7, 11, 17 above; every bs through the generic path), the three-row tile (bs mod 4
 * = 3: 15, 27 here, 6, 9, 12, 30 above) and the four-row tile (bs divisible by 4 outside the
 * three-row range: 36, 40 here, 4, 8, 16 above).
 */
export const TILE_BLOCK_SIZES = [10, 14, 15, 27, 36, 40];
