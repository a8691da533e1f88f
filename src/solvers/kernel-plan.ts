/**
 * Which kernel set a solve runs on, and the kernel memory it runs in (src/kernels-host).
 *
 * 'wasm': the matrix, the preconditioner's factors and workspace, the Krylov basis and work vectors
 * are allocated in one WebAssembly memory, created with its full size before anything is put in it
 * (so it never grows and no view is ever invalidated), and every kernel whose arrays all live there
 * runs in WebAssembly (src/kernels). 'typescript': everything stays on the JavaScript heap and the
 * TypeScript kernels run — the reference and the fallback.
 *
 * Size: the matrix arrays, plus an upper bound on what the recipe allocates (preconditioner ≤ 3 ×
 * the matrix arrays + 32 vectors; Krylov basis (restart + 1) vectors, twice for FGMRES; the slab
 * inner recipe's basis; 16 work vectors). Pages never written are never backed by physical memory,
 * so the bound costs address space, not RSS. Over 4 GiB (the most one memory can hold) 'auto' falls
 * back to TypeScript and says why; 'wasm' is then an error.
 *
 * The matrix moves into kernel memory: the system's bsr (and, when bs = 1, its csr, which then
 * shares the same arrays) is replaced by views of the arena, so the JavaScript copies can be
 * collected. A later solve on the same system reuses the arena when its bound fits, else a larger
 * arena is created and the matrix moved again.
 *
 * A prepared solve (prepareSolve in run-recipe.ts) keeps its plan open from setup to dispose: the
 * preconditioner's arrays stay in the arena, suspend() deactivates it between solves, and each
 * solve runs in a scope() that hands back what it allocated. While a plan is open its arena is
 * busy: another plan on the same system gets an arena of its own (the matrix is copied again), so
 * one prepared solve never releases another's factors.
 */
import type { Bsr, Csr } from '../sparse/types.js';
import type { SystemMatrix } from '../precond/types.js';
import type { Recipe } from './recipe.js';
import { UserError } from '../util/errors.js';
import { KernelArena, MAX_KERNEL_MEMORY_BYTES, activeArena, setActiveArena } from '../kernels-host/arena.js';
import { kernelModule, kernelModuleProblem } from '../kernels-host/module.js';

export type KernelChoice = 'auto' | 'wasm' | 'typescript';
export const KERNEL_CHOICES: readonly KernelChoice[] = ['auto', 'wasm', 'typescript'];
export const KERNELS_ENV = 'SLABBENCH_KERNELS';

/** The choice from SLABBENCH_KERNELS (default auto); a bad value is a UserError naming it. */
export function kernelChoiceFromEnv(): KernelChoice {
  const v = process.env[KERNELS_ENV];
  if (v === undefined || v === '') return 'auto';
  if ((KERNEL_CHOICES as readonly string[]).includes(v)) return v as KernelChoice;
  throw new UserError(`environment variable ${KERNELS_ENV}: expected one of ${KERNEL_CHOICES.join(', ')}, got "${v}"`);
}

export function parseKernelChoice(v: string, where = 'option --kernels'): KernelChoice {
  if ((KERNEL_CHOICES as readonly string[]).includes(v)) return v as KernelChoice;
  throw new UserError(`${where}: expected one of ${KERNEL_CHOICES.join(', ')}, got "${v}"`);
}

export interface KernelPlan {
  kernels: 'wasm' | 'typescript';
  /** Why TypeScript kernels run although the choice was auto (absent when the choice was typescript). */
  note?: string;
  /** Bytes of the kernel memory (0 without one). */
  memoryBytes: number;
  /** Copy of v in kernel memory (or v itself without one). */
  adopt(v: Float64Array): Float64Array;
  /** Release the solve's buffers (the matrix stays) and deactivate the arena. */
  finish(): { spilledBytes: number; usedBytes: number };
  /** Deactivate the arena, keeping everything allocated so far (a prepared preconditioner). */
  suspend(): void;
  /**
   * Activate the arena for one solve; the returned leave() releases what the solve allocated,
   * restores the arena active before, and returns the bytes that did not fit kernel memory
   * (those allocated before suspend() plus this solve's).
   */
  scope(): () => number;
}

interface Cached { arena: KernelArena; matrixMark: number; busy: boolean }
const arenas = new WeakMap<object, Cached>();

const pad = (bytes: number): number => Math.ceil(bytes / 16) * 16;
const arraysBytes = (m: Bsr | Csr): number => pad(m.rowPtr.byteLength) + pad(m.colInd.byteLength) + pad(m.values.byteLength);

/** Point methods read the scalar CSR (src/precond/jacobi.ts, ilu0.ts). */
function usesCsr(recipe: Recipe): boolean {
  const pointish = (name: string): boolean => name === 'ilu0' || name === 'jacobi';
  return pointish(recipe.preconditioner) || (recipe.inner !== undefined && pointish(recipe.inner.preconditioner));
}

/** Upper bound on the bytes a solve of recipe allocates besides the matrix. */
export function solveBoundBytes(system: SystemMatrix, recipe: Recipe, format: 'csr' | 'bsr' = 'bsr'): number {
  const n = system.n ?? system.bsr.nBlockRows * system.bsr.bs;
  const vec = pad(n * 8);
  const matrix = arraysBytes(format === 'csr' ? system.csr : system.bsr);
  const deflate = recipe.deflate ?? 0;
  // GMRES-DR: k + 1 more vectors (the new V_{k+1}); GCRO-DR: U, C and their replacements (4k)
  const basis = (recipe.restart + 1) * (recipe.krylov === 'fgmres' ? 2 : 1)
    + (recipe.krylov === 'gmres-dr' ? deflate + 1 : recipe.krylov === 'gcro-dr' ? 4 * deflate : 0);
  const inner = recipe.inner ? (recipe.inner.restart + 1) * 2 + 16 : 0;
  const precond = recipe.preconditioner === 'none' ? 0 : (PRECONDITIONER_MATRIX_COPIES[recipe.preconditioner] ?? 3) * matrix + 32 * vec;
  return precond + (basis + inner + 16) * vec + (1 << 20);
}

/**
 * Bound on a preconditioner's storage in copies of the matrix arrays (default 3: factors of the
 * same pattern, a permuted copy, the diagonal inverses). The multilevel and partitioned methods
 * hold more: AIR its coarse operators, Z and W, a scaled copy of the matrix and dense scratch; p-multigrid its coarse levels and a smoother per level; schwarz overlapped subdomain
 * copies and their factors; block-iluk fill; direct the fill of a sparse LU. What exceeds the bound
 * is allocated on the JavaScript heap (spilledBytes; those kernels run in TypeScript). A larger
 * bound costs address space, not RAM; solves whose bound would pass one memory's 4 GiB are capped
 * there (see planKernels).
 */
const PRECONDITIONER_MATRIX_COPIES: Readonly<Record<string, number>> = {
  air: 8, 'p-multigrid': 5, schwarz: 5, 'block-iluk': 6, direct: 12,
};

function moveMatrix(system: SystemMatrix, arena: KernelArena, withCsr: boolean, format: 'csr' | 'bsr'): void {
  const copy = <T extends Float64Array | Int32Array>(a: T): T => {
    const v = (a instanceof Float64Array ? arena.f64(a.length) : arena.i32(a.length)) as T | null;
    if (v === null) throw new Error('kernel memory: sizing error (matrix does not fit)');
    v.set(a);
    return v;
  };
  if (format === 'csr') {
    // a point method on a loaded system holds only the CSR (src/sparse/system.ts): move that alone
    const c = system.csr;
    (system as { csr: Csr }).csr = { ...c, rowPtr: copy(c.rowPtr), colInd: copy(c.colInd), values: copy(c.values) };
    return;
  }
  const b = system.bsr;
  const bsr: Bsr = { ...b, rowPtr: copy(b.rowPtr), colInd: copy(b.colInd), values: copy(b.values) };
  const target = system as { bsr: Bsr; csr: Csr };
  let csr: Csr | undefined;
  if (b.bs === 1) {
    csr = { nRows: b.nBlockRows, nCols: b.nBlockCols, rowPtr: bsr.rowPtr, colInd: bsr.colInd, values: bsr.values };
  } else if (withCsr) {
    const c = system.csr;
    csr = { ...c, rowPtr: copy(c.rowPtr), colInd: copy(c.colInd), values: copy(c.values) };
  }
  target.bsr = bsr;
  if (csr !== undefined) {
    try { target.csr = csr; } catch { /* a read-only csr (a getter) keeps its own arrays: point kernels then run in TypeScript */ }
  }
}

/**
 * Decide the kernel set for one solve and, for 'wasm', set up (or reuse) the system's kernel
 * memory, move the matrix into it and make it the active arena until finish().
 */
export function planKernels(
  system: SystemMatrix, recipe: Recipe, choice: KernelChoice, format: 'csr' | 'bsr' = 'bsr',
  limitBytes = MAX_KERNEL_MEMORY_BYTES - (1 << 16), extraBytes = 0,
): KernelPlan {
  const none = (note?: string): KernelPlan => ({
    kernels: 'typescript', note, memoryBytes: 0, adopt: (v) => v, finish: () => ({ spilledBytes: 0, usedBytes: 0 }),
    suspend: () => undefined, scope: () => () => 0,
  });
  if (choice === 'typescript') return none();
  if (kernelModule() === null) {
    if (choice === 'wasm') throw new UserError(`option --kernels wasm: ${kernelModuleProblem()}`);
    return none(kernelModuleProblem());
  }
  const csrOnly = format === 'csr';
  const withCsr = !csrOnly && system.bsr.bs > 1 && usesCsr(recipe);
  const matrix = csrOnly ? arraysBytes(system.csr) : arraysBytes(system.bsr) + (withCsr ? arraysBytes(system.csr) : 0);
  // the bound past the 4 GiB one memory holds is capped there: what then does not fit spills to
  // the JavaScript heap; the matrix with the Krylov and work vectors (the 'none' bound) must fit
  const base = matrix + solveBoundBytes(system, { ...recipe, preconditioner: 'none' }, format) + pad(extraBytes);
  const need = Math.min(matrix + solveBoundBytes(system, recipe, format) + pad(extraBytes), Math.max(limitBytes, base));
  let cached = arenas.get(system);
  const inArena = cached !== undefined && !cached.busy && (csrOnly
    ? system.csr.values.buffer === cached.arena.buffer
    : system.bsr.values.buffer === cached.arena.buffer && (!withCsr || system.csr.values.buffer === cached.arena.buffer));
  if (!(cached !== undefined && inArena && cached.arena.bytes - cached.matrixMark >= need - matrix)) {
    if (need > limitBytes) {
      const msg = `the solve needs ${(need / 2 ** 30).toFixed(2)} GiB of kernel memory, more than the ${(limitBytes / 2 ** 30).toFixed(2)} GiB one WebAssembly memory may hold`;
      if (choice === 'wasm') throw new UserError(`option --kernels wasm: ${msg}`);
      return none(msg);
    }
    const arena = new KernelArena(need);
    moveMatrix(system, arena, withCsr, format);
    cached = { arena, matrixMark: arena.mark(), busy: false };
    arenas.set(system, cached);
  }
  const entry = cached;
  const { arena, matrixMark } = entry;
  arena.release(matrixMark);
  arena.spilledBytes = 0;
  entry.busy = true;
  setActiveArena(arena);
  let finished: { spilledBytes: number; usedBytes: number } | null = null;
  let suspendedSpill = 0;
  return {
    kernels: 'wasm',
    memoryBytes: arena.bytes,
    adopt(v) {
      const c = arena.f64(v.length);
      if (c === null) { arena.spilledBytes += v.byteLength; return Float64Array.from(v); }
      c.set(v);
      return c;
    },
    finish() {
      if (finished === null) {
        finished = { spilledBytes: arena.spilledBytes, usedBytes: arena.usedBytes() };
        setActiveArena(null);
        arena.release(matrixMark);
        entry.busy = false;
      }
      return finished;
    },
    suspend() {
      suspendedSpill = arena.spilledBytes;
      setActiveArena(null);
    },
    scope() {
      if (finished !== null) throw new Error('kernel plan: scope() after finish()');
      const before = activeArena();
      const mark = arena.mark();
      arena.spilledBytes = suspendedSpill;
      setActiveArena(arena);
      return () => {
        const spilled = arena.spilledBytes;
        arena.release(mark);
        arena.spilledBytes = suspendedSpill;
        setActiveArena(before);
        return spilled;
      };
    },
  };
}
