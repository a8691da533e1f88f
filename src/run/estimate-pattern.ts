/**
 * Memory projection on a block pattern: the bytes each preconditioner keeps, counted from the
 * pattern (block rows, stored blocks, block size and, where the method needs them, the block
 * column indices, the slab offsets and the layout's `modes`) before anything is factored. The
 * counts follow the allocations of src/precond exactly, so on a matrix they equal what `solve`
 * reports (tests/run/estimate-generated.test.ts checks every registered preconditioner).
 *
 * What each method's projection needs:
 *  - none, jacobi, block-jacobi, block-gs, ilu0, block-ilu0: counts only (block rows, blocks, bs,
 *    scalar entries);
 *  - block-iluk: the level-k pattern, computed symbolically (src/sparse/fill-levels.ts);
 *  - slab: the slab offsets (or the strongly connected components) and each slab's diagonal part,
 *    on which the inner preconditioner is projected (the largest slab's figure, as slab.ts keeps);
 *  - schwarz: the partition (src/sparse/partition.ts, deterministic from the pattern), its
 *    overlapped subdomains and their sub-patterns, on which the subdomain solver is projected;
 *  - direct: the minimum-degree ordering and its symbolic fill (symbolicBlockLu of direct.ts, the
 *    same count its setup checks against the limit before factoring);
 *  - p-multigrid: the layout's `modes` (degrees per mode): level l keeps the modes of degree ≤ q_l,
 *    on the fine block pattern, so its bytes follow from the counts; plus each level's smoother and
 *    the coarse preconditioner, projected on that level, and the coarse Krylov workspace;
 *  - air: its coarse levels follow from the values (strength of connection, C/F splitting), which
 *    no count gives: with the matrix values at hand the AIR setup is run and its bytes are reported
 *    as measured ('measured by setup'); on a pattern alone it is refused, naming that reason.
 * Options: the projections follow the recipe given (the defaults when estimate makes it); an option
 * whose storage is not modelled here (a non-natural ordering) is refused, naming it.
 */
import type { Bsr, ModalLayout } from '../sparse/types.js';
import type { SystemMatrix } from '../precond/types.js';
import type { PMultigridOptions, Recipe } from '../solvers/recipe.js';
import { DEFAULT_INNER_RECIPE, defaultPMultigrid, parseRecipe } from '../solvers/recipe.js';
import { krylovWorkspaceBytes, reservedBasisBytes, type BasisKrylov } from '../solvers/krylov.js';
import { defaultDeflate } from '../solvers/options.js';
import { createPreconditioner } from '../precond/registry.js';
import { totalBytes } from '../precond/common.js';
import { validSlabOffsets } from '../precond/block-tools.js';
import { directKeptBytes, symbolicBlockLu, DIRECT_MAX_BYTES, DIRECT_MAX_FILLED_BLOCKS, directBytes } from '../precond/direct.js';
import { EXACT_MAX_BYTES, EXACT_MAX_UNKNOWNS, SCHWARZ_DEFAULTS, overlappedRows, schwarzSubdomainRecipe } from '../precond/schwarz.js';
import { pMultigridDegrees, pMultigridSmootherRecipe } from '../precond/p-multigrid.js';
import { truncatedModes } from '../precond/p-multigrid-levels.js';
import { fillPattern } from '../sparse/fill-levels.js';
import { partitionBlocks } from '../sparse/partition.js';
import { stronglyConnectedBlocks } from '../sparse/structure.js';
import { UserError } from '../util/errors.js';

/** A block matrix as the projection sees it. */
export interface PatternMatrix {
  /** Block rows (= block columns). */
  nb: number;
  bs: number;
  /** Stored blocks. */
  blocks: number;
  /** Scalar entries of the CSR a point method factors (blocks·bs² when every block is full). */
  nnz: number;
  /** The block pattern (needed by block-iluk, slab, schwarz and direct). */
  rowPtr?: Int32Array;
  colInd?: Int32Array;
  slabOffsets?: Int32Array;
  modes?: ModalLayout;
  /** The matrix with its values, for air (whose storage the values decide). */
  system?: SystemMatrix;
}

export type ProjectionSource = 'counted' | 'measured by setup';
export interface Projection { total: number; parts: Record<string, number>; source: ProjectionSource }
export type ProjectionOutcome = Projection | { refused: string };

export const isRefused = (p: ProjectionOutcome): p is { refused: string } => 'refused' in p;

const counted = (parts: Record<string, number>): Projection => ({ total: totalBytes(parts), parts, source: 'counted' });

/** A PatternMatrix of a BSR pattern (values only when given). */
export function patternOf(a: Pick<Bsr, 'nBlockRows' | 'bs' | 'rowPtr' | 'colInd'>, extra: Partial<PatternMatrix> = {}): PatternMatrix {
  const blocks = a.rowPtr[a.nBlockRows];
  return { nb: a.nBlockRows, bs: a.bs, blocks, nnz: blocks * a.bs * a.bs, rowPtr: a.rowPtr, colInd: a.colInd, ...extra };
}

/** The pattern as a value-less Bsr for the graph algorithms (they read indices only). */
function indexOnly(m: PatternMatrix): Bsr {
  return { nBlockRows: m.nb, nBlockCols: m.nb, bs: m.bs, rowPtr: m.rowPtr!, colInd: m.colInd!, values: new Float64Array(0) };
}

/** Block ILU(0) on a pattern of nb block rows and k blocks (natural order): factors, factor pattern, workspace. */
export function blockIlu0Parts(nb: number, k: number, bs: number): Record<string, number> {
  return {
    'factors (L, U and inverse diagonal blocks)': k * bs * bs * 8,
    'factor pattern': k * 4 + 2 * (nb + 1) * 4,
    workspace: bs * 8,
  };
}

/** The parts of the count-only methods (block rows, blocks, block size, scalar entries). */
export function countedParts(name: string, m: Pick<PatternMatrix, 'nb' | 'bs' | 'blocks' | 'nnz'>, recipe: Recipe): Record<string, number> | undefined {
  const { nb, bs } = m;
  const bb = bs * bs, n = nb * bs;
  const lu = recipe.blockInverse === 'lu';
  switch (name) {
    case 'none': return {};
    case 'jacobi': return { 'inverse diagonal': n * 8 };
    case 'ilu0': return { 'factors (L+U values)': m.nnz * 8, 'diagonal positions': n * 4 };
    case 'block-jacobi':
      return lu ? { 'factors (diagonal-block LU)': nb * bb * 8, pivots: nb * bs * 4 } : { 'inverse blocks': nb * bb * 8, workspace: bb * 8 + bs * 4 };
    case 'block-gs': {
      const p: Record<string, number> = { [lu ? 'factors (diagonal-block LU)' : 'inverse blocks']: nb * bb * 8 };
      if (lu) p.pivots = nb * bs * 4;
      p.workspace = (lu ? bs : 2 * bs + bb) * 8 + (lu ? 0 : bs * 4);
      if (recipe.sweep === 'symmetric') p['row prefixes (symmetric sweeps)'] = n * 8;
      return p;
    }
    case 'block-ilu0': return blockIlu0Parts(nb, m.blocks, bs);
    default: return undefined;
  }
}

const NATURAL_ONLY = new Set(['block-gs', 'block-ilu0', 'block-iluk']);

/** The bytes the preconditioner of `recipe` keeps on matrix m (see the file comment). */
export function projectPreconditioner(m: PatternMatrix, recipe: Recipe): ProjectionOutcome {
  const name = recipe.preconditioner;
  if (NATURAL_ONLY.has(name) && recipe.ordering !== 'natural') {
    return { refused: `${name} with ordering ${recipe.ordering}: estimate projects the natural ordering only (another adds its permutation and, for some orderings, depends on the values)` };
  }
  const simple = countedParts(name, m, recipe);
  if (simple) return counted(simple);
  const needPattern = (): { refused: string } | undefined => (m.rowPtr && m.colInd ? undefined
    : { refused: `${name}: its storage depends on the block pattern, which the mesh sizes do not give; estimate a matrix file (slabbench estimate FILE)` });
  switch (name) {
    case 'block-iluk': {
      const no = needPattern(); if (no) return no;
      const fill = fillPattern(indexOnly(m), recipe.fillLevel);
      if ('tooBig' in fill) return { refused: `block-iluk: the level-${recipe.fillLevel} pattern is too large to count` };
      return counted(blockIlu0Parts(m.nb, fill.rowPtr[m.nb], m.bs));
    }
    case 'slab': { const no = needPattern(); return no ?? projectSlab(m, recipe.inner ?? DEFAULT_INNER_RECIPE); }
    case 'schwarz': { const no = needPattern(); return no ?? projectSchwarz(m, recipe); }
    case 'direct': { const no = needPattern(); return no ?? projectDirect(m); }
    case 'p-multigrid': return projectPMultigrid(m, recipe);
    case 'air': return projectMeasured(m, recipe);
    default: return { refused: `${name}: estimate has no projection for this preconditioner` };
  }
}

/** The diagonal part of block rows rows[] (ascending, or a contiguous range) as its own pattern. */
function subPattern(m: PatternMatrix, rows: Int32Array, local: Int32Array): PatternMatrix {
  const { rowPtr, colInd } = m as Required<PatternMatrix>;
  for (let i = 0; i < rows.length; i++) local[rows[i]] = i;
  const ptr = new Int32Array(rows.length + 1);
  const cols: number[] = [];
  for (let i = 0; i < rows.length; i++) {
    for (let k = rowPtr[rows[i]]; k < rowPtr[rows[i] + 1]; k++) if (local[colInd[k]] >= 0) cols.push(local[colInd[k]]);
    ptr[i + 1] = cols.length;
  }
  for (let i = 0; i < rows.length; i++) local[rows[i]] = -1;
  return patternOf({ nBlockRows: rows.length, bs: m.bs, rowPtr: ptr, colInd: Int32Array.from(cols) }, m.modes ? { modes: m.modes } : {});
}

function projectSlab(m: PatternMatrix, inner: Recipe): ProjectionOutcome {
  const a = indexOnly(m);
  const { nb, bs } = m;
  const bb = bs * bs;
  let offsets: Int32Array;
  let perm: Int32Array | null = null;
  if (validSlabOffsets(m.slabOffsets, nb)) offsets = m.slabOffsets;
  else {
    const comp = stronglyConnectedBlocks(a);
    offsets = comp.componentOffsets;
    for (let i = 0; i < nb; i++) if (comp.order[i] !== i) { perm = comp.order; break; }
  }
  const local = new Int32Array(nb).fill(-1);
  let maxRows = 0, maxBlocks = 0, peak = 0;
  for (let s = 0; s + 1 < offsets.length; s++) {
    const rows = perm ? Int32Array.from(perm.subarray(offsets[s], offsets[s + 1])).sort() : Int32Array.from({ length: offsets[s + 1] - offsets[s] }, (_, i) => offsets[s] + i);
    const sub = subPattern(m, rows, local);
    maxRows = Math.max(maxRows, sub.nb);
    maxBlocks = Math.max(maxBlocks, sub.blocks);
    const p = projectPreconditioner(sub, inner);
    if (isRefused(p)) return { refused: `slab (inner ${inner.preconditioner}): ${p.refused}` };
    peak = Math.max(peak, p.total);
  }
  const parts: Record<string, number> = {
    'inner preconditioner (peak, one slab at a time)': peak,
    'inner Krylov basis (peak, one slab at a time)': krylovWorkspaceBytes(inner, maxRows * bs),
    'slab matrix buffer': (maxRows + 1) * 4 + maxBlocks * 4 + maxBlocks * bb * 8,
    'slab vectors': 2 * maxRows * bs * 8,
  };
  if (perm) {
    parts.permutation = nb * 4;
    parts['permuted matrix'] = (nb + 1) * 4 + m.blocks * 4 + m.blocks * bb * 8;
    parts.workspace = 2 * nb * bs * 8;
  }
  return counted(parts);
}

function projectSchwarz(m: PatternMatrix, recipe: Recipe): ProjectionOutcome {
  const a = indexOnly(m);
  const { nb, bs } = m;
  const parts = recipe.parts ?? SCHWARZ_DEFAULTS.parts;
  const subdomain = recipe.subdomain ?? SCHWARZ_DEFAULTS.subdomain;
  if (parts > nb) return { refused: `schwarz: parts ${parts} exceeds the matrix's ${nb} block rows` };
  const method = recipe.partitionMethod ?? SCHWARZ_DEFAULTS.partitionMethod;
  if (method === 'coordinates' && !m.system?.centroids) return { refused: "schwarz: partitionMethod 'coordinates' needs the layout's element centroids: estimate a matrix file whose layout has them" };
  const p = partitionBlocks(a, parts, {
    slabs: recipe.partitionSlabs ?? SCHWARZ_DEFAULTS.partitionSlabs, slabOffsets: m.slabOffsets, method, centroids: m.system?.centroids,
  });
  const rowsOf = overlappedRows(a, p, recipe.overlap ?? SCHWARZ_DEFAULTS.overlap);
  const sub = schwarzSubdomainRecipe(recipe, subdomain);
  const local = new Int32Array(nb).fill(-1);
  let matrices = 0, lists = 0, solvers = 0, dense = 0, denseValues = 0, maxRows = 0, largest = 0;
  const pointCsr = sub.preconditioner === 'ilu0' || sub.preconditioner === 'jacobi';
  for (let q = 0; q < p.nParts; q++) {
    const rows = rowsOf[q];
    const sp = subPattern(m, rows, local);
    maxRows = Math.max(maxRows, rows.length);
    const k = sp.blocks, mq = rows.length * bs;
    matrices += (rows.length + 1) * 4 + k * 4 + k * bs * bs * 8;
    // a point subdomain solver builds its CSR view of the subdomain (bsrToCsr: every block entry)
    if (pointCsr) matrices += (mq + 1) * 4 + sp.nnz * 12;
    lists += rows.length * 4 + (p.partOffsets[q + 1] - p.partOffsets[q]) * 4;
    if (subdomain === 'exact') { dense += mq * mq * 8 + mq * 4; denseValues += mq * mq * 8; largest = Math.max(largest, mq); continue; }
    const s = projectPreconditioner(sp, sub);
    if (isRefused(s)) return { refused: `schwarz subdomain ${q}: ${s.refused}` };
    solvers += s.total;
  }
  if (subdomain === 'exact' && (largest > EXACT_MAX_UNKNOWNS || denseValues > EXACT_MAX_BYTES)) {
    return { refused: `schwarz: exact subdomain solves need ${denseValues} bytes of dense factors (largest subdomain ${largest} unknowns), above the limit of ${EXACT_MAX_UNKNOWNS} unknowns per subdomain and ${EXACT_MAX_BYTES} bytes, so its setup refuses` };
  }
  const out: Record<string, number> = {
    'subdomain matrices': matrices,
    'subdomain row lists': lists + nb * 4 + nb * 4 + (p.nParts + 1) * 4,
    workspace: 2 * maxRows * bs * 8,
  };
  if (subdomain === 'exact') out['dense subdomain factors'] = dense;
  else out['subdomain preconditioners'] = solvers;
  return counted(out);
}

function projectDirect(m: PatternMatrix): ProjectionOutcome {
  const s = symbolicBlockLu(indexOnly(m), DIRECT_MAX_FILLED_BLOCKS);
  if ('tooLarge' in s) return { refused: `direct: the block LU would hold more than ${s.tooLarge} filled off-diagonal blocks after minimum-degree ordering (its limit is ${DIRECT_MAX_FILLED_BLOCKS}), so its setup refuses` };
  const need = directBytes(s, m.bs);
  if (need > DIRECT_MAX_BYTES) return { refused: `direct: the block LU needs ${need} bytes during setup, above its limit of ${DIRECT_MAX_BYTES} bytes, so its setup refuses` };
  return counted(directKeptBytes(s, m.bs));
}

function projectPMultigrid(m: PatternMatrix, recipe: Recipe): ProjectionOutcome {
  const opts: PMultigridOptions = recipe.pMultigrid ?? defaultPMultigrid();
  const modes = m.modes;
  if (!modes) return { refused: 'p-multigrid: needs the layout field "modes" (degrees per mode), and this matrix has none' };
  let degrees: number[];
  try { degrees = pMultigridDegrees(modes, m.bs, opts, recipe.name); } catch (e) {
    if (e instanceof UserError) return { refused: e.message };
    throw e;
  }
  if (degrees.length < 2) return { refused: 'p-multigrid: layout field modes.degrees has degree 0 only, so its setup fails (no lower degree to coarsen to)' };
  const smoother = pMultigridSmootherRecipe(opts, recipe.name);
  const parts: Record<string, number> = {};
  const L = degrees.length - 1;
  let lm = modes;
  for (let l = 0; l <= L; l++) {
    const q = degrees[l];
    const tag = `level ${l} (degree ${q})`;
    const coarsest = l === L;
    let bs = m.bs;
    if (l > 0) {
      lm = truncatedModes(lm, q);
      bs = lm.nEquations * lm.degrees.length;
      parts[`${tag} matrix values`] = m.blocks * bs * bs * 8;
      parts[`${tag} selection`] = bs * 4;
    }
    const n = m.nb * bs;
    const vec = (l === 0 ? 0 : 2 * n * 8) + (coarsest ? 0 : 2 * n * 8);
    if (vec > 0) parts[`${tag} vectors`] = vec;
    // level 0 is the input matrix itself (its CSR, for a point smoother); coarser levels are built
    // on the fine block pattern and their CSR view expands every block
    const level: PatternMatrix = { ...m, bs, nnz: l === 0 ? m.nnz : m.blocks * bs * bs, modes: lm, system: l === 0 ? m.system : undefined };
    const M = projectPreconditioner(level, coarsest ? opts.coarse : smoother);
    const role = coarsest ? 'coarse preconditioner' : 'smoother';
    if (isRefused(M)) return { refused: `p-multigrid ${tag} ${role}: ${M.refused}` };
    for (const [k, v] of Object.entries(M.parts)) parts[`${tag} ${role}: ${k}`] = v;
    if (coarsest) {
      const kb = krylovWorkspaceBytes(opts.coarse, n);
      if (kb > 0) parts[`${tag} coarse Krylov workspace (allocated per coarse solve)`] = kb;
    }
  }
  return counted(parts);
}

/** Run the setup on the matrix itself and report the bytes it kept (air). */
function projectMeasured(m: PatternMatrix, recipe: Recipe): ProjectionOutcome {
  const name = recipe.preconditioner;
  if (!m.system) {
    return { refused: `${name}: its coarse levels follow from the matrix values (strength of connection, C/F splitting), which mesh sizes do not give; estimate a matrix file (slabbench estimate FILE), where the ${name} setup is run and its bytes are measured` };
  }
  const M = createPreconditioner(m.system, recipe);
  const out = M.setup();
  if (!out.ok) return { refused: `${name} setup failed: ${out.message}` };
  const parts = M.memory();
  return { total: totalBytes(parts), parts, source: 'measured by setup' };
}

/** The default recipe of a preconditioner (its Krylov method FGMRES when it is variable), as estimate projects it. */
export function defaultRecipeFor(name: string): Recipe {
  return parseRecipe({ preconditioner: name, ...(VARIABLE_BY_DEFAULT.has(name) ? { krylov: 'fgmres' } : {}) }, `estimate ${name}`);
}

/** Preconditioners whose default setting changes between applications (inner iterative solves). */
export const VARIABLE_BY_DEFAULT: ReadonlySet<string> = new Set(['slab', 'p-multigrid']);

/** The projection of every registered preconditioner on one matrix (`slabbench estimate FILE`). */
export interface MatrixEstimate {
  n: number;
  blockRows: number;
  bs: number;
  blocks: number;
  /** Scalar entries of the pattern as read. */
  nnz: number;
  slabs?: number;
  restart: number;
  /** The matrix in each format (a solve holds one: CSR for jacobi and ilu0, BSR otherwise). */
  jacobian: { bsr: number; csr: number };
  /** Per registered preconditioner (default options): its bytes with their parts and source, or why it is not projected. */
  preconditioners: Record<string, ProjectionOutcome>;
  /** The deflate the gmres-dr and gcro-dr figures assume. */
  deflate: number;
  /** Reserved Krylov basis at a full cycle (the most a solve holds). */
  krylov: Record<BasisKrylov, number>;
}

/** A matrix as estimate reads it: its block structure without building block values. */
export interface EstimatedMatrix {
  n: number;
  nnz: number;
  bs: number;
  blockStructure(): Bsr;
  slabOffsets?: Int32Array;
  modes?: ModalLayout;
}

/**
 * Project every preconditioner of `names` with its default options on matrix a. AIR's setup runs
 * on `system` (the matrix with its values) when given; without it air is refused.
 */
export function estimateMatrix(a: EstimatedMatrix, names: readonly string[], restart: number, system?: SystemMatrix, deflate = defaultDeflate(restart)): MatrixEstimate {
  const s = a.blockStructure();
  const nb = s.nBlockRows, bs = a.bs, blocks = s.rowPtr[nb];
  const m: PatternMatrix = {
    nb, bs, blocks, nnz: a.nnz, rowPtr: s.rowPtr, colInd: s.colInd,
    ...(a.slabOffsets ? { slabOffsets: a.slabOffsets } : {}), ...(a.modes ? { modes: a.modes } : {}), ...(system ? { system } : {}),
  };
  const preconditioners: Record<string, ProjectionOutcome> = {};
  for (const name of names) preconditioners[name] = projectPreconditioner(m, defaultRecipeFor(name));
  return {
    n: a.n, blockRows: nb, bs, blocks, nnz: a.nnz, restart, deflate,
    ...(a.slabOffsets ? { slabs: a.slabOffsets.length - 1 } : {}),
    jacobian: { bsr: (nb + 1) * 4 + blocks * 4 + blocks * bs * bs * 8, csr: (a.n + 1) * 4 + a.nnz * 12 },
    preconditioners,
    krylov: reservedBasisBytes(restart, a.n, deflate),
  };
}
