/**
 * One matrix × recipe run, as executed inside a worker thread (or in-process): load the matrix (kept
 * while consecutive tasks use the same one), build the right-hand side, call solveSystem.
 * Solver and preconditioner failures are results (a reason); only a run that cannot start is an error.
 *
 * Timing protocol: an untimed warm-up solve (unless `warmup` is false), then `repeats` timed solves,
 * each with a fresh preconditioner setup and a full garbage collection before it (timing.ts). The
 * stored result is the repeat with the median setup + solve time; every repeat's seconds are kept in
 * `record.repeats`, and repeats that did not compute the same thing flag the run (`consistent: false`).
 */
import { recordedRecipe, type Recipe } from '../solvers/recipe.js';
import type { SolveResult } from '../solvers/types.js';
import { csrSpmv } from '../sparse/csr.js';
import { isMatrixStore } from '../sparse/system.js';
import { UserError } from '../util/errors.js';
import type { RunDeps, LoadedForRun } from './deps.js';
import type { MatrixInfo, RunRecord } from './results-types.js';
import { matrixInfo } from './results.js';
import { collectGarbage, repeatDifferences, summarizeRepeats } from './timing.js';
import { executeSequence, loadSequence, sequenceInfo, sequenceKey, type LoadedSequence, type TaskSequence } from './sequence.js';

export interface TaskMatrix {
  name: string;
  source: 'file' | 'generated';
  /** Absolute path of the .mtx file. */
  mtx: string;
  /** Absolute path of the right-hand side; absent: b = A·1 (exact solution all ones). */
  rhs?: string;
  blockSize?: number;
  note?: string;
  /** Path recorded in MatrixInfo (relative to the results folder when possible). */
  displayPath: string;
  /** A sequence of systems (mtx/rhs above are its first system); see src/run/sequence.ts. */
  sequence?: TaskSequence;
}

export interface RunTask {
  id: number;
  matrix: TaskMatrix;
  recipe: Recipe;
  /** Solve once untimed before the timed repeats, so JIT compilation does not land in the timings. */
  warmup?: boolean;
  /** Timed repeats (default 1). */
  repeats?: number;
}

export interface TaskDone {
  id: number;
  record: RunRecord;
  /** Sent when this call loaded the matrix (first use in this thread). */
  info?: MatrixInfo;
}

interface Loaded {
  key: string;
  system?: LoadedForRun;
  b?: Float64Array;
  error?: string;
  infoSent: boolean;
}

/** Holds the last matrix (or sequence) a thread loaded; tasks arrive matrix by matrix, so one is enough. */
export interface TaskCache { last?: Loaded; lastSequence?: LoadedSequence }

function errorText(e: unknown): string {
  if (e instanceof UserError) return e.message;
  const err = e as NodeJS.ErrnoException;
  if (err && typeof err.code === 'string' && typeof err.path === 'string') return `${err.path}: ${err.code}`;
  return `internal error: ${err?.message ?? String(e)}`;
}

async function load(m: TaskMatrix, deps: RunDeps): Promise<Loaded> {
  const key = JSON.stringify([m.mtx, m.rhs ?? null, m.blockSize ?? null]);
  try {
    const system = await deps.loadSystem(m.mtx, m.blockSize !== undefined ? { blockSize: m.blockSize } : undefined);
    const n = system.csr.nRows;
    if (system.csr.nCols !== n) throw new UserError(`${m.mtx}: matrix is ${n}×${system.csr.nCols}; a solve needs a square matrix`);
    let b: Float64Array;
    if (m.rhs !== undefined) {
      b = await deps.readMatrixMarketVector(m.rhs);
      if (b.length !== n) throw new UserError(`${m.rhs}: right-hand side has ${b.length} entries; the matrix has ${n} rows`);
    } else {
      b = new Float64Array(n);
      csrSpmv(system.csr, new Float64Array(n).fill(1), b);
    }
    return { key, system, b, infoSent: false };
  } catch (e) {
    return { key, error: errorText(e), infoSent: false };
  }
}

export async function executeTask(task: RunTask, deps: RunDeps, cache: TaskCache): Promise<TaskDone> {
  const m = task.matrix;
  if (m.sequence) return executeSequenceTask(task, m.sequence, deps, cache);
  const key = JSON.stringify([m.mtx, m.rhs ?? null, m.blockSize ?? null]);
  if (!cache.last || cache.last.key !== key) {
    cache.last = undefined; // let the previous matrix go before loading the next
    cache.lastSequence = undefined;
    cache.last = await load(m, deps);
  }
  const loaded = cache.last;
  const base = { matrix: m.name, recipe: task.recipe.name, recipeParams: recordedRecipe(task.recipe) };
  if (loaded.error !== undefined || !loaded.system || !loaded.b) {
    return { id: task.id, record: { ...base, error: loaded.error ?? 'matrix not loaded' } };
  }
  let info: MatrixInfo | undefined;
  if (!loaded.infoSent) {
    loaded.infoSent = true;
    info = matrixInfo({ name: m.name, source: m.source, path: m.displayPath, note: m.note }, loaded.system);
  }
  const sys = loaded.system;
  // a loaded system is passed as it is, so solveSystem can keep only the format each recipe needs
  const system = isMatrixStore(sys) ? sys
    : { csr: sys.csr, bsr: sys.bsr, ...(sys.slabOffsets ? { slabOffsets: sys.slabOffsets } : {}), ...(sys.modes ? { modes: sys.modes } : {}), ...(sys.centroids ? { centroids: sys.centroids } : {}) };
  try {
    const warmup = task.warmup === true;
    if (warmup) deps.solveSystem(system, loaded.b, task.recipe);
    const count = Math.max(1, task.repeats ?? 1);
    const results: SolveResult[] = [];
    let gc = true;
    for (let k = 0; k < count; k++) {
      gc = collectGarbage() && gc;
      results.push(deps.solveSystem(system, loaded.b, task.recipe).result);
    }
    const summary = summarizeRepeats(
      results.map((r) => r.timing.setupSeconds), results.map((r) => r.timing.solveSeconds), { warmup, gc },
    );
    const differences = results.slice(1).flatMap((r, k) => repeatDifferences(results[0], r, k + 2));
    const repeats = { ...summary, consistent: differences.length === 0, ...(differences.length ? { differences } : {}) };
    return { id: task.id, record: { ...base, result: results[summary.stored], repeats }, info };
  } catch (e) {
    return { id: task.id, record: { ...base, error: errorText(e) }, info };
  }
}

/** executeTask for a sequence matrix: load all its systems (kept for the next recipe), then run the sequence protocol. */
async function executeSequenceTask(task: RunTask, seq: TaskSequence, deps: RunDeps, cache: TaskCache): Promise<TaskDone> {
  const m = task.matrix;
  const key = sequenceKey(seq, m.blockSize);
  if (!cache.lastSequence || cache.lastSequence.key !== key) {
    cache.last = undefined;
    cache.lastSequence = undefined;
    cache.lastSequence = await loadSequence(seq, deps, m.blockSize, errorText);
  }
  const loaded = cache.lastSequence;
  const base = { matrix: m.name, recipe: task.recipe.name, recipeParams: recordedRecipe(task.recipe) };
  if (loaded.error !== undefined || !loaded.systems) return { id: task.id, record: { ...base, error: loaded.error ?? 'sequence not loaded' } };
  let info: MatrixInfo | undefined;
  if (!loaded.infoSent) {
    loaded.infoSent = true;
    info = sequenceInfo({ name: m.name, source: m.source, path: m.displayPath, note: m.note }, loaded, seq.kind);
  }
  try {
    const run = executeSequence(loaded, seq.kind, task.recipe, deps, { warmup: task.warmup === true, repeats: task.repeats ?? 1 });
    return { id: task.id, record: { ...base, ...run }, info };
  } catch (e) {
    return { id: task.id, record: { ...base, error: errorText(e) }, info };
  }
}
