import { accessSync, constants as fsConstants, statSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { Option, type Command } from 'commander';
import { loadSystem, type LoadedSystem } from '../sparse/load.js';
import { readMatrixMarketColumns, writeMatrixMarketColumns } from '../sparse/matrix-market.js';
import { csrSpmv } from '../sparse/csr.js';
import {
  RECIPE_FIELDS, RECIPE_FLAGS, describeRecipeField, recipeFromOptions, recordedRecipe, type Recipe, type RecordedRecipe,
  AIR_FIELDS, AIR_FLAGS, describeAirField, type AirOptions,
  PMG_FLAGS, PMG_COARSE_PREFIX, PMG_CYCLES, PMG_SMOOTHERS,
} from '../solvers/recipe.js';
import { prepareSolve } from '../solvers/run-recipe.js';
import type { SolveResult, WorkCounts } from '../solvers/types.js';
import { addWork, zeroWork } from '../solvers/work.js';
import { EXIT, fileError, optionError } from '../util/errors.js';
import { relative } from '../solvers/result.js';
import { parseKernelChoice } from '../solvers/kernel-plan.js';
import { writeFileAtomic } from '../util/atomic-write.js';
import { formatBytesDetailed, formatNumber, jsonNonFiniteAsNull, plural } from '../report/format.js';
import type { RepeatTimes } from '../run/results-types.js';
import { collectGarbage, repeatDifferences, summarizeRepeats } from '../run/timing.js';
import { parseRepeats } from './timing-options.js';

/** What each AIR option means (--precond air; the accepted values come from the recipe validator). */
const AIR_HELP: Record<keyof AirOptions, string> = {
  strength: 'AIR strength threshold θ on Frobenius block norms, relative to the row\'s largest off-diagonal block (default 0.25)',
  distance: 'AIR restriction neighbourhood: F points within this many strong connections (default 2)',
  prolongation: 'AIR prolongation: one-point (W = −A_ff⁻¹A_fc, strongest C neighbour) or injection (default one-point)',
  relaxation: 'AIR post-relaxation: block Jacobi sweeps on F and C points in this order (default ffc)',
  preRelaxation: 'AIR pre-relaxation pattern, or none (default none)',
  sweeps: 'AIR repetitions of the relaxation pattern per level (default 1)',
  maxLevels: 'AIR most levels, coarsest included (default 25)',
  coarsest: 'AIR stops coarsening at a level with at most this many unknowns; solved by dense LU (default 256)',
  cycle: 'AIR cycle (default V)',
  scaling: 'AIR on D⁻¹A (block-diagonal) or on A (none) (default block-diagonal)',
};

/** What each recipe option means (the accepted values come from the recipe validator). */
const FIELD_HELP: Record<(typeof RECIPE_FIELDS)[number], string> = {
  krylov: 'iterative method; none = stationary iteration x ← x + ω M⁻¹(b − Ax) (default gmres)',
  restart: 'GMRES/FGMRES/GMRES-DR/GCRO-DR basis vectors per cycle (default 30)',
  deflate: 'gmres-dr and gcro-dr: harmonic Ritz vectors kept at each restart (gcro-dr: and carried to the next solve of a sequence); below restart (default 10, or restart/3 rounded down when smaller)',
  side: 'GMRES preconditioning side: right watches ‖b − Ax‖, left watches ‖M⁻¹(b − Ax)‖ (default right)',
  orthogonalization: 'Gram–Schmidt variant: mgs = modified, cgs2 = classical with one reorthogonalization (default mgs)',
  preconditioner: 'preconditioner (default none)',
  sweep: 'block Gauss–Seidel sweep direction; symmetric = forward then backward (default forward)',
  ordering: 'block ordering for block-gs, block-ilu0 and block-iluk (default natural)',
  omega: 'relaxation: inside block-gs (SOR), else the stationary step factor (default 1)',
  sweeps: 'block Gauss–Seidel sweeps per application (default 1)',
  shift: 'diagonal shift added before factorizing; 0 = a zero pivot fails the run (default 0)',
  blockInverse: 'diagonal blocks of block-jacobi and block-gs: inverse (explicit inverses, one block mat-vec per apply) or lu (LU factors with partial pivoting, two triangular solves per apply); default inverse',
  fillLevel: 'block-iluk level of fill k: keep fill blocks of level ≤ k (Saad 2003 §10.3.3); 0 = block ILU(0) (default 1)',
  rtol: 'stop when the watched ‖r‖ ≤ rtol · reference norm (default 1e-8)',
  atol: 'or when the watched ‖r‖ ≤ atol; 0 disables (default 0)',
  maxIterations: 'maximum inner iterations in total, whatever the restart (default 1000)',
  divergence: 'stop (residual-growth) when ‖r‖ > divergence · reference norm (default 1e10)',
  relativeTo: 'reference norm: ‖b‖ (rhs) or the starting residual ‖r₀‖ (start-residual); default rhs',
  parts: 'schwarz: number of parts of the block graph (default 4)',
  overlap: 'schwarz: overlap in block layers (default 1)',
  schwarzKind: 'schwarz: restricted or plain additive combination (default restricted)',
  subdomain: 'schwarz: subdomain solve, a preconditioner name or exact (default block-ilu0)',
  partitionSlabs: 'schwarz: parts across slabs or each inside one slab (default across)',
  partitionMethod: 'schwarz: graph (bisection of the block graph) or coordinates (bisection of the layout\'s centroids); default graph',
};

interface SolveCommandOptions {
  /** One file, or several (--rhs repeated); each a vector or an n×k array (k right-hand sides). */
  rhs?: string | string[];
  x0?: string;
  writeSolution?: string;
  exact?: string;
  blockSize?: string;
  layout?: string;
  json?: string;
  repeats?: number;
  warmup?: boolean;
  kernels?: string;
  allowNonFinite?: boolean;
  [recipeOption: string]: unknown;
}

/** Where a right-hand side came from: a file (column: 1-based, when the file has several), or b = A·1. */
export type RhsSource = { source: 'file'; file: string; column?: number } | { source: 'A·1' };

/** ‖x − x_exact‖₂ and ‖x − x_exact‖₂/‖x_exact‖₂ against --exact (column: 1-based, when the file has several). */
export interface ExactError {
  file: string;
  column?: number;
  norm2: number;
  relative2: number;
}

/** One right-hand side of several: its result (the first carries the setup), source and error. */
export type RightHandSideReport = SolveResult & { index: number; rhs: RhsSource; exactError?: ExactError };

/** The cost of one setup and k solves, in total and per right-hand side (README "solve"). */
export interface AmortizedCost {
  rightHandSides: number;
  /** The one setup succeeded (else every solve reports preconditioner-error, setupFailure says why). */
  setupOk: boolean;
  setupFailure?: string;
  setupSeconds: number;
  /** Sum over the right-hand sides. */
  solveSeconds: number;
  totalSeconds: number;
  /** (setup + all solves) / k. */
  secondsPerRightHandSide: number;
  work: { setup: WorkCounts; solve: WorkCounts; perRightHandSide: WorkCounts };
}

/** The `--json` document: the SolveResult fields at the top level, plus what was solved and how. */
export interface SolveReport extends SolveResult {
  schema: 'slabbench-solve/1';
  matrix: { file: string; n: number; nnz: number; bs: number; blockSizeSource: string; nSlabs: number | null };
  /** The (first) right-hand side. */
  rhs: RhsSource;
  /** The recipe's name and the fields its methods read (an option with no effect is refused). */
  recipe: RecordedRecipe;
  /** The timing protocol as run: warm-up, every repeat's seconds, median/min/max (timing is the median repeat's).
   *  With several right-hand sides a repeat is one setup and all the solves: its solveSeconds is their sum. */
  repeats: RepeatTimes;
  /** Only when b = A·1 (exact solution all ones): max |x_i − 1| and ‖x − 1‖₂/‖1‖₂. */
  errorVsOnes?: { max: number; relative2: number };
  /** --x0: the file and its columns (1: one guess for every right-hand side, else one per right-hand side). */
  initialGuess?: { file: string; columns: number };
  /** --exact: the (first) solution's error. */
  exactError?: ExactError;
  /** --write-solution: where x was written (an n×k array, one column per right-hand side). */
  solution?: { file: string; columns: number };
  /** Several right-hand sides only: one entry each, in order (the top-level result is the first's). */
  rightHandSides?: RightHandSideReport[];
  /** Several right-hand sides only: setup once + every solve, in total and per right-hand side. */
  amortized?: AmortizedCost;
}

/** Every right-hand side solved (the exit code). */
export function allSolved(r: SolveReport): boolean {
  return r.rightHandSides ? r.rightHandSides.every((h) => h.converged) : r.converged;
}

export function solveReportJson(r: SolveReport): string {
  return jsonNonFiniteAsNull(r);
}

const bytes = formatBytesDetailed;

const num = formatNumber;

function recipeText(r: RecordedRecipe): string {
  const method = r.krylov === 'none' ? `stationary iteration${r.preconditioner !== 'block-gs' && r.omega !== 1 ? ` (ω ${r.omega})` : ''}`
    : r.krylov === 'bicgstab' ? 'bicgstab'
      : r.krylov === 'gmres-dr' || r.krylov === 'gcro-dr' ? `${r.krylov}(${r.restart}, ${r.deflate}, right, ${r.orthogonalization})`
      : `${r.krylov}(${r.restart}, ${r.krylov === 'fgmres' ? 'right' : r.side}, ${r.orthogonalization})`;
  let pc = r.preconditioner;
  const diagonal = r.blockInverse === 'inverse' ? 'inverse blocks' : 'LU blocks';
  if (r.preconditioner === 'block-jacobi') pc += ` (${diagonal})`;
  if (r.preconditioner === 'block-gs') pc += ` (${r.sweep} ×${r.sweeps}, ω ${r.omega}, ${r.ordering}, ${diagonal})`;
  if (r.preconditioner === 'block-ilu0') pc += ` (${r.ordering})`;
  if (r.preconditioner === 'slab' && r.inner) pc += ` [inner: ${recipeText(r.inner)}, rtol ${r.inner.rtol}]`;
  if (r.preconditioner === 'air' && r.air) {
    const a = r.air;
    pc += ` (${a.cycle}-cycle, θ ${a.strength}, distance ${a.distance}, ${a.prolongation}, ${a.preRelaxation === 'none' ? '' : `pre ${a.preRelaxation}, `}post ${a.relaxation} ×${a.sweeps}, coarsest ≤ ${a.coarsest}, scaling ${a.scaling})`;
  }
  if (r.preconditioner === 'p-multigrid' && r.pMultigrid) {
    const o = r.pMultigrid;
    const s = o.smoother;
    const sm = `${s.preconditioner}${s.preconditioner === 'block-gs' ? ` ${s.sweep}` : ''}, ω ${s.omega}`;
    pc += ` (levels ${o.levels ? o.levels.join(',') : 'p..0'}, ${o.cycle.toUpperCase()}-cycle, ${o.preSweeps}+${o.postSweeps} × ${sm}) [coarse: ${recipeText(o.coarse)}, rtol ${o.coarse.rtol}]`;
  }
  if (r.shift) pc += `, shift ${r.shift}`;
  return `${method} + ${pc}`;
}

function exactText(e: ExactError): string {
  return `vs ${e.file}${e.column !== undefined ? ` column ${e.column}` : ''}: ‖x − x_exact‖ = ${num(e.norm2)}, ‖x − x_exact‖/‖x_exact‖ = ${num(e.relative2)}`;
}

function rhsText(s: RhsSource): string {
  return s.source === 'A·1' ? 'b = A·1' : `${s.file}${s.column !== undefined ? ` column ${s.column}` : ''}`;
}

function workText(w: WorkCounts): string {
  return `${num(w.flops)} flops, ${bytes(w.bytes)} moved`;
}

/** The short human summary. */
export function formatSolveReport(rep: SolveReport): string {
  const lines: string[] = [];
  const row = (label: string, text: string): void => { lines.push(`  ${label.padEnd(15)}${text}`); };
  const m = rep.matrix;
  lines.push(`${m.file}: ${m.n} × ${m.n}, ${m.nnz} nonzeros, block size ${m.bs} (${m.blockSizeSource})${m.nSlabs ? `, ${m.nSlabs} slabs` : ''}`);
  row('recipe', `${recipeText(rep.recipe)}; rtol ${rep.recipe.rtol}${rep.recipe.atol ? `, atol ${rep.recipe.atol}` : ''}, at most ${plural(rep.recipe.maxIterations, 'iteration')}`);
  if (rep.initialGuess) row('x0', `${rep.initialGuess.file}${rep.initialGuess.columns > 1 ? ` (one column per right-hand side)` : ''}`);
  if (rep.rightHandSides && rep.amortized) {
    formatSeveral(rep, rep.rightHandSides, rep.amortized, row);
  } else {
    formatOne(rep, row);
  }
  if (rep.solution) row('solution', `written to ${rep.solution.file}${rep.solution.columns > 1 ? ` (${rep.solution.columns} columns)` : ''}`);
  return lines.join('\n');
}

type Row = (label: string, text: string) => void;

/** Several right-hand sides: the setup once, one line per right-hand side, the amortized cost. */
function formatSeveral(rep: SolveReport, all: RightHandSideReport[], am: AmortizedCost, row: Row): void {
  row('setup', `once, ${num(am.setupSeconds)} s, ${workText(am.work.setup)} (${am.setupOk ? 'ok' : `failed: ${am.setupFailure ?? ''}`})`);
  for (const h of all) {
    const base = h.relativeTo === 'rhs' ? '‖b‖' : '‖r₀‖';
    row(`rhs ${h.index}`, `${rhsText(h.rhs)}: ${h.outcome} (${h.cause}) after ${plural(h.iterations, 'iteration')}, ‖b − Ax‖/${base} = ${num(h.trueRelativeResidual)}; `
      + `solve ${num(h.timing.solveSeconds)} s, ${workText(h.work.solve)}`);
    if (h.exactError) row('', exactText(h.exactError));
    if (h.failure && am.setupOk) row('', `failure: ${h.failure.message}`);
  }
  row('amortized', `(setup + ${plural(am.rightHandSides, 'solve')}) / ${am.rightHandSides} = ${num(am.secondsPerRightHandSide)} s, ${workText(am.work.perRightHandSide)} per right-hand side; `
    + `total ${num(am.totalSeconds)} s`);
  const rp = rep.repeats;
  if (rp && rp.count > 1) {
    row('repeats', `${rp.count} timed${rp.warmup ? ' after a warm-up solve' : ''} (each one setup and all the solves); median ${num(rp.median.totalSeconds)} s, `
      + `min ${num(rp.min.totalSeconds)} s, max ${num(rp.max.totalSeconds)} s (figures above: the median repeat)`);
  }
  if (rp && !rp.consistent) row('warning', `repeats differed, not deterministic: ${(rp.differences ?? []).join('; ')}`);
  if (rep.kernels) row('kernels', rep.kernels === 'wasm' ? 'WebAssembly' : `TypeScript${rep.kernelsNote ? ` (${rep.kernelsNote})` : ''}`);
  const mem = rep.memory;
  row('memory', `matrix ${bytes(mem.matrixBytes)}, preconditioner ${bytes(mem.preconditionerBytes)}, Krylov ${bytes(mem.krylovBytes)}, work ${bytes(mem.workBytes)} (one solve); peak RSS ${bytes(mem.peakBytes)}`);
}

/** One right-hand side. */
function formatOne(rep: SolveReport, row: Row): void {
  const sw = rep.work.solve;
  row('result', `${rep.outcome} (${rep.cause}) after ${plural(rep.iterations, 'iteration')} (${plural(rep.restarts, 'restart')}; `
    + `${plural(sw.matvecs, 'matvec')}, ${plural(sw.preconditionerApplies, 'preconditioner apply', 'preconditioner applies')}`
    + `${sw.innerIterations > 0 ? `, ${plural(sw.innerIterations, 'inner iteration')}` : ''})`);
  if (rep.failure) {
    const f = rep.failure;
    const named = f.blockRow === undefined || f.message.includes(`block row ${f.blockRow}`);
    row('failure', `${f.message}${named ? '' : ` [block row ${f.blockRow}]`}`);
  }
  const base = rep.relativeTo === 'rhs' ? '‖b‖' : '‖r₀‖';
  const watched = rep.watched === 'plain' ? 'plain residual ‖b − Ax‖' : 'left-preconditioned residual ‖M⁻¹r‖';
  row('residual', `true ‖b − Ax‖/${base} = ${num(rep.trueRelativeResidual)}; watched: ${watched}, last ${num(rep.history[rep.history.length - 1])}`);
  if (rep.residualMismatch) row('warning', 'a recursive residual estimate and the recomputed residual disagreed by more than 10× (see residualChecks)');
  if (rep.errorVsOnes) row('error', `b = A·1: max |x − 1| = ${num(rep.errorVsOnes.max)}, ‖x − 1‖/‖1‖ = ${num(rep.errorVsOnes.relative2)}`);
  if (rep.exactError) row('error', exactText(rep.exactError));
  const t = rep.timing;
  const rp = rep.repeats;
  if (rp && rp.count > 1) {
    row('repeats', `${rp.count} timed${rp.warmup ? ' after a warm-up solve' : ''}; setup + solve median ${num(rp.median.totalSeconds)} s, `
      + `min ${num(rp.min.totalSeconds)} s, max ${num(rp.max.totalSeconds)} s (time below: the median repeat)`);
  }
  if (rp && !rp.consistent) row('warning', `repeats differed, not deterministic: ${(rp.differences ?? []).join('; ')}`);
  row('time', `setup ${num(t.setupSeconds)} s, solve ${num(t.solveSeconds)} s`
    + (t.preconditionerApplications > 0 ? ` (${plural(t.preconditionerApplications, 'preconditioner application')}, ${num(t.secondsPerPreconditionerApply * 1e3)} ms each)` : ''));
  const ps = rep.preconditionerStats as { levels?: number; operatorComplexity?: number; gridComplexity?: number; perLevel?: Array<{ blockRows: number }> } | undefined;
  if (rep.recipe.preconditioner === 'air' && ps && ps.levels !== undefined && ps.perLevel) {
    row('levels', `${ps.levels} (block rows ${ps.perLevel.map((l) => l.blockRows).join(' / ')}); operator complexity ${num(ps.operatorComplexity ?? 0)}, grid complexity ${num(ps.gridComplexity ?? 0)}`);
  }
  const su = rep.work.setup;
  row('work', `setup ${num(su.flops)} flops, ${bytes(su.bytes)} moved; solve ${num(sw.flops)} flops, ${bytes(sw.bytes)} moved (work model, README)`);
  const mem = rep.memory;
  if (rep.kernels) row('kernels', rep.kernels === 'wasm' ? 'WebAssembly' : `TypeScript${rep.kernelsNote ? ` (${rep.kernelsNote})` : ''}`);
  row('memory', `matrix ${bytes(mem.matrixBytes)}, preconditioner ${bytes(mem.preconditionerBytes)}, Krylov ${bytes(mem.krylovBytes)}, work ${bytes(mem.workBytes)}; peak RSS ${bytes(mem.peakBytes)}`);
  const pmg = rep.recipe.preconditioner === 'p-multigrid' ? rep.preconditionerStats as { levels?: Array<{ degree: number; rows: number }>; coarseSolves?: number; coarseIterationsTotal?: number } | undefined : undefined;
  if (pmg?.levels) {
    const per = pmg.coarseSolves ? ` (${num(pmg.coarseIterationsTotal! / pmg.coarseSolves)} coarse iterations per coarse solve)` : '';
    row('levels', `${pmg.levels.map((l) => `degree ${l.degree}: ${l.rows} rows`).join(' → ')}${per}`);
  }
  if (rep.ritz && rep.ritz.re.length > 0) {
    const re = rep.ritz.re;
    const imMax = Math.max(...rep.ritz.im.map(Math.abs));
    row('ritz values', `${re.length}, real parts ${num(re[0])} … ${num(re[re.length - 1])}, max |imag| ${num(imMax)}`);
  }
}

function parseBlockSize(v: string): number {
  if (!/^\d+$/.test(v.trim()) || Number(v) < 1) throw optionError('--block-size', `expected a positive integer, got "${v}"`);
  return Number(v);
}

/**
 * Refuse a --json path that cannot be written, before any work: the folder must exist and be
 * writable, and the path must not be a folder or a read-only file.
 */
export function checkWritablePath(path: string, option: string): void {
  const full = resolve(path);
  const dir = dirname(full);
  let dirStat;
  try { dirStat = statSync(dir); } catch { throw optionError(option, `cannot write "${path}": folder ${dir} does not exist`); }
  if (!dirStat.isDirectory()) throw optionError(option, `cannot write "${path}": ${dir} is not a folder`);
  try { accessSync(dir, fsConstants.W_OK); } catch { throw optionError(option, `cannot write "${path}": folder ${dir} is not writable`); }
  let st;
  try { st = statSync(full); } catch { return; }
  if (st.isDirectory()) throw optionError(option, `cannot write "${path}": it is a folder (give a file name)`);
  try { accessSync(full, fsConstants.W_OK); } catch { throw optionError(option, `cannot write "${path}": the file is read-only`); }
}

/** The option's files as a list (--rhs repeated, or given once). */
function fileList(v: string | string[] | undefined): string[] {
  return v === undefined ? [] : Array.isArray(v) ? v : [v];
}

/** Columns of a vector file (--rhs, --x0, --exact) with n rows each, else a one-line error naming the file. */
async function readColumns(path: string, n: number, what: string, allowNonFinite: boolean): Promise<Float64Array[]> {
  const cols = await readMatrixMarketColumns(path, allowNonFinite ? { allowNonFinite } : {});
  const rows = cols.length > 0 ? cols[0].length : 0;
  if (cols.length === 0) throw fileError(path, undefined, `${what}: the file has no columns`);
  if (rows !== n) {
    throw fileError(path, undefined, cols.length === 1
      ? `${what} has length ${rows}, expected ${n} (the matrix size)`
      : `${what}: the array has ${rows} rows, expected ${n} (the matrix size)`);
  }
  return cols;
}

/** ‖x − e‖₂ and its ratio to ‖e‖₂ (0/0 = 0). */
function exactErrorOf(x: Float64Array, e: Float64Array, file: string, column: number | undefined): ExactError {
  let d = 0, s = 0;
  for (let i = 0; i < x.length; i++) { const t = x[i] - e[i]; d += t * t; s += e[i] * e[i]; }
  const norm2 = Math.sqrt(d);
  const out: ExactError = { file, norm2, relative2: relative(norm2, Math.sqrt(s)) };
  if (column !== undefined) out.column = column;
  return out;
}

export async function runSolve(file: string, opts: SolveCommandOptions): Promise<SolveReport> {
  const recipe = recipeFromOptions(opts);
  const kernels = opts.kernels === undefined ? undefined : parseKernelChoice(opts.kernels);
  const blockSize = opts.blockSize === undefined ? undefined : parseBlockSize(opts.blockSize);
  if (opts.json !== undefined && opts.json !== '-') checkWritablePath(opts.json, '--json');
  if (opts.writeSolution !== undefined) {
    if (opts.writeSolution === '-') throw optionError('--write-solution', 'expected a file name (the solution is not written to stdout)');
    checkWritablePath(opts.writeSolution, '--write-solution');
    if (opts.json !== undefined && opts.json !== '-' && resolve(opts.json) === resolve(opts.writeSolution)) {
      throw optionError('--write-solution', `names the same file as --json ("${opts.writeSolution}")`);
    }
  }
  const allowNonFinite = opts.allowNonFinite === true;
  const sys: LoadedSystem = await loadSystem(file, { blockSize, layoutPath: opts.layout, allowNonFinite });
  const n = sys.n; // a loaded system is square (systemFromMatrix checks)
  // every input is read and checked before any solve, so a bad one leaves nothing written
  const rhsFiles = fileList(opts.rhs);
  const bs: Float64Array[] = [];
  const sources: RhsSource[] = [];
  for (const f of rhsFiles) {
    const cols = await readColumns(f, n, 'right-hand side', allowNonFinite);
    cols.forEach((c, j) => { bs.push(c); sources.push(cols.length > 1 ? { source: 'file', file: f, column: j + 1 } : { source: 'file', file: f }); });
  }
  if (bs.length === 0) {
    const b = new Float64Array(n);
    csrSpmv(sys.csr, new Float64Array(n).fill(1), b);
    bs.push(b);
    sources.push({ source: 'A·1' });
  }
  const k = bs.length;
  let x0s: Float64Array[] | undefined;
  if (opts.x0 !== undefined) {
    x0s = await readColumns(opts.x0, n, 'initial guess', allowNonFinite);
    if (x0s.length !== 1 && x0s.length !== k) {
      throw fileError(opts.x0, undefined, `initial guess: the array has ${x0s.length} columns, expected 1 (one guess for every right-hand side) or ${k} (one per right-hand side)`);
    }
  }
  let exacts: Float64Array[] | undefined;
  if (opts.exact !== undefined) {
    exacts = await readColumns(opts.exact, n, 'exact solution', allowNonFinite);
    if (exacts.length !== k) {
      throw fileError(opts.exact, undefined, `exact solution: the file has ${plural(exacts.length, 'column')}, expected ${k} (one per right-hand side)`);
    }
  }
  const x0For = (j: number): Float64Array | undefined => (x0s === undefined ? undefined : x0s[x0s.length === 1 ? 0 : j]);

  const progress = process.stderr.isTTY && opts.json !== '-';
  let last = 0;
  let current = 0;
  const onIteration = progress
    ? (it: number, rel: number): void => {
      const now = Date.now();
      if (now - last > 250) {
        last = now;
        process.stderr.write(`\r  ${k > 1 ? `right-hand side ${current + 1}/${k}, ` : ''}iteration ${it}, relative residual ${num(rel)}   `);
      }
    }
    : undefined;
  // one setup, then every right-hand side (the prepared preconditioner is reused)
  const setupAndSolve = (count: number): { setup: { ok: boolean; message?: string }; solved: Array<{ result: SolveResult; x: Float64Array }> } => {
    const prepared = prepareSolve(sys, recipe, { lastUse: true, kernels });
    try {
      const solved: Array<{ result: SolveResult; x: Float64Array }> = [];
      for (let j = 0; j < count; j++) {
        current = j;
        solved.push(prepared.solve(bs[j], { x0: x0For(j), onIteration }));
      }
      return { setup: prepared.setup, solved };
    } finally {
      prepared.dispose();
    }
  };
  // Timing protocol (README): an untimed warm-up (setup + the first right-hand side), then the
  // timed repeats (each one setup and every solve) with a GC before each.
  const warmup = opts.warmup !== false;
  const warm = warmup ? setupAndSolve(1) : undefined;
  const count = opts.repeats ?? 1;
  const runs: Array<ReturnType<typeof setupAndSolve>> = [];
  let gc = true;
  for (let r = 0; r < count; r++) {
    gc = collectGarbage() && gc;
    runs.push(setupAndSolve(k));
  }
  if (progress && last > 0) process.stderr.write('\r\x1b[K');
  const solveSum = (run: ReturnType<typeof setupAndSolve>): number => run.solved.reduce((t, s) => t + s.result.timing.solveSeconds, 0);
  const summary = summarizeRepeats(runs.map((r) => r.solved[0].result.timing.setupSeconds), runs.map(solveSum), { warmup, gc });
  const differences = runs.slice(1).flatMap((r, i) => r.solved.flatMap((s, j) => repeatDifferences(runs[0].solved[j].result, s.result, i + 2)
    .map((d) => (k > 1 ? `right-hand side ${j + 1}: ${d}` : d))));
  const stored = runs[summary.stored];
  const { result, x } = stored.solved[0];
  // the matrix was copied into kernel memory once in this process (by the warm-up when there is
  // one): both copies briefly existed, so the peak RSS includes it whichever solve is reported
  const moved = Math.max(0, ...[warm, ...runs].flatMap((r) => (r ? r.solved.map((q) => q.result.kernelMatrixMovedBytes ?? 0) : [])));
  if (moved > 0) result.kernelMatrixMovedBytes = moved;
  const report: SolveReport = {
    schema: 'slabbench-solve/1',
    ...result,
    matrix: {
      file, n, nnz: sys.nnz, bs: sys.bs, blockSizeSource: sys.blockSizeSource,
      nSlabs: sys.slabOffsets ? sys.slabOffsets.length - 1 : null,
    },
    rhs: sources[0],
    recipe: recordedRecipe(recipe),
    repeats: { ...summary, consistent: differences.length === 0, ...(differences.length ? { differences } : {}) },
  };
  if (sources[0].source === 'A·1') {
    let max = 0, sq = 0;
    for (let i = 0; i < n; i++) { const e = Math.abs(x[i] - 1); if (!(e <= max)) max = e; sq += e * e; }
    report.errorVsOnes = { max, relative2: n > 0 ? Math.sqrt(sq / n) : 0 };
  }
  if (opts.x0 !== undefined && x0s) report.initialGuess = { file: opts.x0, columns: x0s.length };
  const exactFor = (j: number): ExactError | undefined => (exacts === undefined || opts.exact === undefined ? undefined
    : exactErrorOf(stored.solved[j].x, exacts[j], opts.exact, k > 1 ? j + 1 : undefined));
  const e0 = exactFor(0);
  if (e0) report.exactError = e0;
  if (k > 1) {
    report.rightHandSides = stored.solved.map((s, j) => {
      const h: RightHandSideReport = { ...s.result, index: j + 1, rhs: sources[j] };
      const e = exactFor(j);
      if (e) h.exactError = e;
      return h;
    });
    const setupWork = { ...result.work.setup };
    const solveWork = zeroWork();
    for (const s of stored.solved) addWork(solveWork, s.result.work.solve);
    const per = { ...setupWork };
    addWork(per, solveWork);
    for (const key of Object.keys(per) as Array<keyof WorkCounts>) per[key] /= k;
    const setupSeconds = result.timing.setupSeconds;
    const solveSeconds = solveSum(stored);
    report.amortized = {
      rightHandSides: k,
      setupOk: stored.setup.ok,
      ...(stored.setup.ok ? {} : { setupFailure: stored.setup.message ?? '' }),
      setupSeconds, solveSeconds, totalSeconds: setupSeconds + solveSeconds,
      secondsPerRightHandSide: (setupSeconds + solveSeconds) / k,
      work: { setup: setupWork, solve: solveWork, perRightHandSide: per },
    };
  }
  if (opts.writeSolution !== undefined) {
    const comments = [`solution of A x = b by slabbench solve: ${file}, ${recipeText(report.recipe)}`,
      `right-hand side${k > 1 ? 's' : ''}: ${sources.map(rhsText).join('; ')}`,
      `outcome: ${stored.solved.map((s) => s.result.outcome).join(', ')}`];
    await writeMatrixMarketColumns(opts.writeSolution, stored.solved.map((s) => s.x), { comments });
    report.solution = { file: opts.writeSolution, columns: k };
  }
  return report;
}

function collect(value: string, previous: string[] | undefined): string[] {
  return [...(previous ?? []), value];
}

export function registerSolve(program: Command): void {
  const cmd = program
    .command('solve')
    .description('Solve A x = b with one recipe (Krylov method + preconditioner) and report iterations, residuals, time and memory.')
    .argument('<file>', 'matrix file (.mtx or .mtx.gz); NAME.layout.json beside it is used when present')
    .option('--rhs <file>', 'right-hand side (Matrix Market vector, n×1 matrix, or n×k array = k right-hand sides); repeatable; several: one setup, each solved; default b = A·1, so the exact solution is all ones', collect)
    .option('--x0 <file>', 'initial guess (same formats as --rhs; default 0); with several right-hand sides one column for all or one per right-hand side')
    .option('--write-solution <file>', 'write x as a Matrix Market array (atomically; n×k with several right-hand sides), whatever the outcome')
    .option('--exact <file>', 'known solution (same formats; one column per right-hand side): report ‖x − x_exact‖₂ and ‖x − x_exact‖/‖x_exact‖ beside the residual')
    .option('--block-size <n>', 'block size when there is no layout (default: detected from the pattern)')
    .option('--layout <file>', 'layout file to use instead of NAME.layout.json')
    .option('--json <file>', 'write the full result as JSON to FILE (atomically), or to stdout with "-" (then nothing else goes to stdout)')
    .option('--repeats <n>', 'timed solves, each with a fresh setup; the median one is reported (default 1)', parseRepeats)
    .option('--no-warmup', 'skip the untimed warm-up solve before the timed one(s) (default: warm up, so JIT compilation stays out of the time)')
    .option('--kernels <set>', 'kernel set: wasm (WebAssembly), typescript, or auto = wasm when the solve fits one 4 GiB WebAssembly memory (default auto, or SLABBENCH_KERNELS)')
    .option('--allow-non-finite', 'accept NaN and ±Inf entries in the matrix and right-hand side (the solve then stops with cause non-finite-value)');
  for (const field of RECIPE_FIELDS) {
    cmd.option(`--${RECIPE_FLAGS[field]} <value>`, `${FIELD_HELP[field]}; ${describeRecipeField(field)}`);
  }
  for (const field of RECIPE_FIELDS) {
    // listed once in the help text below rather than sixteen times
    cmd.addOption(new Option(`--inner-${RECIPE_FLAGS[field]} <value>`, `slab inner recipe: as --${RECIPE_FLAGS[field]}`).hideHelp());
  }
  for (const field of AIR_FIELDS) {
    cmd.option(`--${AIR_FLAGS[field]} <value>`, `${AIR_HELP[field]}; ${describeAirField(field)}`);
    cmd.addOption(new Option(`--inner-${AIR_FLAGS[field]} <value>`, `slab inner recipe: as --${AIR_FLAGS[field]}`).hideHelp());
  }
  const pmgHelp: Array<[string, string]> = [
    [`--${PMG_FLAGS.levels} <list>`, 'p-multigrid: polynomial degrees of the levels, finest first, e.g. 2,1,0 (default p, p−1, …, 0)'],
    [`--${PMG_FLAGS.cycle} <value>`, `p-multigrid: cycle, one of ${PMG_CYCLES.join(', ')} (default v)`],
    [`--${PMG_FLAGS.preSweeps} <n>`, 'p-multigrid: smoothing steps before the coarse correction, 0-100 (default 1)'],
    [`--${PMG_FLAGS.postSweeps} <n>`, 'p-multigrid: smoothing steps after the coarse correction, 0-100 (default 1)'],
    [`--${PMG_FLAGS.smoother} <name>`, `p-multigrid: smoother, one of ${PMG_SMOOTHERS.join(', ')} (default block-gs)`],
    [`--${PMG_FLAGS.omega} <value>`, 'p-multigrid smoother: step damping ω in x ← x + ω M⁻¹(b − Ax); for block-gs its SOR factor (default 1)'],
    [`--${PMG_FLAGS.sweep} <value>`, 'p-multigrid smoother block-gs: forward, backward or symmetric (default symmetric)'],
    [`--${PMG_FLAGS.ordering} <value>`, 'p-multigrid smoother block-gs/block-ilu0: block ordering (default natural)'],
    [`--${PMG_FLAGS.blockInverse} <value>`, 'p-multigrid smoother block-jacobi/block-gs: inverse or lu (default inverse)'],
    [`--${PMG_FLAGS.shift} <value>`, 'p-multigrid smoother: diagonal shift before factorizing (default 0)'],
    [`--${PMG_FLAGS.fillLevel} <k>`, 'p-multigrid smoother block-iluk: level of fill, 0-64 (default 1)'],
  ];
  for (const [flags, text] of pmgHelp) cmd.option(flags, text);
  for (const field of RECIPE_FIELDS) {
    cmd.addOption(new Option(`--${PMG_COARSE_PREFIX}${RECIPE_FLAGS[field]} <value>`, `p-multigrid coarse recipe: as --${RECIPE_FLAGS[field]}`).hideHelp());
  }
  // the old spelling of --ordering: accepted by the parser only to say the new name
  cmd.addOption(new Option('--order <value>').hideHelp());
  cmd.addOption(new Option('--inner-order <value>').hideHelp());
  cmd.addHelpText('after', `
p-multigrid coarse solve (--precond p-multigrid): every recipe option has a --pmg-coarse-… twin
(--pmg-coarse-krylov, --pmg-coarse-precond, --pmg-coarse-rtol, --pmg-coarse-max-iters, …);
coarse defaults: gmres(30) + block-ilu0, rtol 1e-6, at most 200 iterations, which makes the
preconditioner variable (use --krylov fgmres). --pmg-coarse-krylov none --pmg-coarse-rtol 0
--pmg-coarse-max-iters K is a fixed K-step coarse solve that plain GMRES accepts. The --pmg-…
options apply to the slab inner recipe when that one is p-multigrid (--inner-precond p-multigrid).

Inner recipe (--precond slab only): every recipe option above, from --krylov to --relative-to, has an
--inner-… twin (--inner-krylov, --inner-precond, --inner-rtol, --inner-max-iters, …) that sets how
each slab is solved; inner defaults: gmres(30) + block-ilu0, rtol 1e-10, at most 500 iterations.

Several right-hand sides (--rhs repeated and/or n×k array files, in order): the preconditioner is
set up once and each right-hand side solved with it; the report has one line per right-hand side
(iterations, outcome, residual, solve time and work) and the amortized cost (setup + all solves) / k.
--x0 then has 1 column (for all) or k, --exact k columns, --write-solution writes k columns.

Stopping: solved when ‖b − Ax‖ ≤ rtol·‖b‖ (x₀ = 0) under right preconditioning (the default);
with --side left the left-preconditioned residual ‖M⁻¹(b − Ax)‖ ≤ rtol·‖M⁻¹b‖ is watched instead.
The true residual is recomputed at every restart and at the end and reported either way.

Examples:
  $ slabbench solve duct.mtx
  $ slabbench solve duct.mtx --precond block-ilu0 --ordering mdf --restart 50 --rtol 1e-10
  $ slabbench solve tank.mtx --rhs tank-rhs.mtx --krylov bicgstab --precond block-jacobi --block-size 6
  $ slabbench solve duct.mtx --krylov gmres-dr --restart 30 --deflate 10 --precond block-ilu0
  $ slabbench solve corridor.mtx --krylov none --precond block-gs --sweep symmetric --omega 1.2
  $ slabbench solve channel.mtx --krylov fgmres --precond slab --inner-krylov gmres --inner-precond block-ilu0 --inner-rtol 1e-6
  $ slabbench solve room.mtx --precond ilu0 --json - | jq .iterations
  $ slabbench solve duct.mtx --precond block-ilu0 --repeats 5 --json - | jq .repeats.median
  $ slabbench solve duct.mtx --rhs duct-rhs.mtx --x0 duct-previous.mtx --write-solution duct-x.mtx
  $ slabbench solve duct.mtx --rhs duct-rhs.mtx --exact duct-x-exact.mtx --json - | jq .exactError
  $ slabbench solve tank.mtx --precond block-ilu0 --rhs tank-rhs1.mtx --rhs tank-rhs2.mtx
  $ slabbench solve tank.mtx --precond block-ilu0 --rhs tank-rhs-8cols.mtx --json - | jq .amortized
  $ slabbench solve tank.mtx --precond air --air-strength 0.25 --air-distance 2 --air-relax ffc
  $ slabbench solve tank.mtx --krylov fgmres --precond slab --inner-precond air --inner-krylov gmres --inner-air-distance 1
  $ slabbench solve duct.mtx --krylov fgmres --precond p-multigrid --pmg-levels 2,1,0 --pmg-cycle w
  $ slabbench solve duct.mtx --precond p-multigrid --pmg-smoother block-jacobi --pmg-smoother-omega 0.7 --pmg-coarse-krylov none --pmg-coarse-rtol 0 --pmg-coarse-max-iters 4

Exit codes: 0 solved, 1 unsolved or failed (iteration-budget, residual-growth, method-breakdown,
non-finite-value, preconditioner-error), 2 unreadable or malformed input or bad option, 3 internal error.
With several right-hand sides: 0 only when every one is solved.`);
  cmd.action(async (file: string, opts: SolveCommandOptions) => {
    const report = await runSolve(file, opts);
    if (opts.json === '-') {
      process.stdout.write(`${solveReportJson(report)}\n`);
    } else {
      if (opts.json !== undefined) await writeFileAtomic(opts.json, `${solveReportJson(report)}\n`);
      process.stdout.write(`${formatSolveReport(report)}\n`);
    }
    process.exitCode = allSolved(report) ? EXIT.ok : EXIT.failed;
  });
}
