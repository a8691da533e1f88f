/**
 * Memory projection for space-time DG Jacobians: bytes of the BSR matrix, each preconditioner's
 * factors and the Krylov basis, for the all-at-once space-time system and for slab-by-slab
 * solves (one slab's Jacobian and factors held at a time).
 *
 * Sizes:
 *  - basis functions per element: C(p + D, D) with D = d + 1 (polynomials of total degree p on a
 *    D-simplex; Proriol/Koornwinder/Dubiner — 3D+t: 15 for p = 2, 35 for p = 3);
 *    block size bs = equations · C(p + D, D); unknowns n = elements · bs.
 *  - stored blocks: one diagonal block per element plus one block per (element, neighbour across an
 *    interior face). A space-time simplex has D + 1 = d + 2 faces, so elements · (d + 3) is an upper
 *    bound. For the structured Kuhn mesh of `slabbench generate` (cells^d boxes per time layer,
 *    (d+1)! simplices per box, `layers` layers per slab) the count is exact:
 *      blocks = E·(d+3) − B_space − d!·c^d·(S + 1),
 *    where c^d stands for Π_k c_k (cells may differ per axis), B_space = Σ_k d!·2·(c^d / c_k)·layers·S
 *    counts the boundary faces on the space sides of the non-periodic axes k, and the d!·c^d·(S+1)
 *    term removes the initial and final faces and the upper (zero, upwind-in-time) block of every
 *    slab-interface face. One slab alone: E_s·(d+3) − B_space,s − 2·d!·c^d.
 *  - BSR bytes: values blocks·bs²·8, column indices blocks·4, row pointers (elements + 1)·4.
 *    CSR bytes (the format the point methods jacobi and ilu0 run on; a solve holds only the
 *    format its recipe needs): values nnz·8, column indices nnz·4, row pointers (n + 1)·4,
 *    nnz = blocks·bs².
 *  - preconditioner bytes, as stored by src/precond with the default options (natural ordering,
 *    explicit block inverses), workspace included, so they equal what `solve` reports:
 *      none         nothing
 *      jacobi       inverse diagonal, n·8
 *      block-jacobi the inverse of each diagonal block, elements·bs²·8 (the default
 *                   blockInverse; 'lu' keeps LU factors of the same size plus pivots elements·bs·4);
 *                   workspace one block and its pivots, bs²·8 + bs·4
 *      block-gs     the same diagonal-block inverses (natural ordering; another ordering adds
 *                   its visiting order and inverse, 2·elements·4; A itself is read in place);
 *                   workspace (2·bs + bs²)·8 + bs·4
 *      ilu0         scalar ILU(0) on the pattern of A: factors nnz·8 and diagonal positions n·4;
 *                   the factors share the row pointers and column indices of A's CSR, which is
 *                   the matrix the solve holds (counted as the Jacobian, in CSR)
 *      block-ilu0   one factor block per stored block, blocks·bs²·8 (diagonal blocks kept
 *                   inverted, so no pivots), plus the factor pattern in sweep order: a block
 *                   column index per block, blocks·4, and two row-pointer arrays, 2·(elements+1)·4;
 *                   workspace one block vector, bs·8
 *      block-iluk   block-ilu0's storage on the level-k factor pattern, given its block count
 *                   (fillBlocks; the pattern depends on more than the mesh sizes)
 *      slab         one slab at a time with the default inner recipe (GMRES(30) + block ILU(0)):
 *                   the inner block-ilu0 bytes and inner basis 31·n_s·8 of one slab, a buffer for
 *                   one slab's diagonal part (the one-slab BSR bytes) and two slab vectors 2·n_s·8
 *      p-multigrid  with its defaults, from the counts: level l keeps the C(q_l + D, D) modes of
 *                   degree ≤ q_l on the fine block pattern (generatorModes); its blocks, vectors,
 *                   smoother and coarse preconditioner are projected per level by
 *                   projectPreconditioner (src/run/estimate-pattern.ts), the code estimate FILE uses
 *    schwarz, direct and air are projected on a matrix only (estimate-pattern.ts; notProjected says why).
 *  - Krylov basis, reserved for a full cycle (an upper bound: GMRES allocates a vector when it first
 *    writes it, so a run stopping after k < m iterations holds k + 1; results report this figure as
 *    memory.basisReservedBytes): GMRES (m+1)·n·8, FGMRES (2m+1)·n·8 (the preconditioned vectors
 *    too), GMRES-DR (m+k+2)·n·8 (the basis and the k+1 vectors of the next cycle's deflated start),
 *    GCRO-DR (m+1+4k)·n·8 (the basis, the recycled U_k and C_k and their next versions), BiCGStab
 *    8·n·8 (eight work vectors with a preconditioner), m = min(restart, n), k = min(deflate, m − 1)
 *    with deflate's default defaultDeflate(restart) (reservedBasisBytes, src/solvers/krylov.ts).
 *    The small Hessenberg and rotation arrays are left out.
 */

import type { ModalLayout } from '../sparse/types.js';
import { defaultRecipeFor, isRefused, projectPreconditioner } from './estimate-pattern.js';
import { BASIS_KRYLOV, reservedBasisBytes } from '../solvers/krylov.js';
import { defaultDeflate } from '../solvers/options.js';

export type BlockCountSource = 'exact' | 'structured-mesh' | 'upper-bound';

export interface EstimateInput {
  /** Space dimension d; elements are (d+1)-simplices. */
  spaceDim: 1 | 2 | 3;
  /** Polynomial total degree p ≥ 0. */
  order: number;
  /** Unknowns per basis function (1 for scalar advection, d+1 or d+2 for acoustics). */
  equations: number;
  /** Number of time slabs. */
  slabs: number;
  /** GMRES/FGMRES basis vectors per cycle. */
  restart: number;
  /** Harmonic Ritz vectors GMRES-DR and GCRO-DR keep (default defaultDeflate(restart)); 0 ≤ deflate < restart. */
  deflate?: number;
  /** Total space-time elements (give this, or cells). */
  elements?: number;
  /** Cells per space direction of the structured Kuhn mesh: one count for every axis, or one per axis (give this, or elements). */
  cells?: number | number[];
  /** Time layers per slab (with cells; default 1). */
  layersPerSlab?: number;
  /** Periodic space boundaries (with cells; default false): all axes, or one flag per axis. */
  periodic?: boolean | boolean[];
  /** Exact number of stored blocks of the whole matrix (overrides the face-count estimate). */
  blocks?: number;
  /**
   * Stored blocks of block-iluk's level-k factor pattern for the whole matrix (its
   * `preconditionerStats.factorBlocks`); without it block-iluk is not projected.
   */
  fillBlocks?: number;
}

export const ESTIMATE_PRECONDITIONERS = ['none', 'jacobi', 'block-jacobi', 'block-gs', 'ilu0', 'block-ilu0', 'block-iluk', 'slab', 'p-multigrid'] as const;
/** Projected by estimateMatrix on a matrix file only (their storage needs the pattern or the values). */
export const MATRIX_ONLY_PRECONDITIONERS = ['schwarz', 'direct', 'air'] as const;
export type EstimatePreconditioner = (typeof ESTIMATE_PRECONDITIONERS)[number];
export const ESTIMATE_KRYLOV = BASIS_KRYLOV;
export type EstimateKrylov = (typeof ESTIMATE_KRYLOV)[number];

export interface Footprint {
  elements: number;
  unknowns: number;
  blocks: number;
  /** The Jacobian in BSR (what block methods and the operator use). */
  jacobian: { values: number; indices: number; total: number };
  /** The Jacobian in CSR (what a solve with jacobi or ilu0 holds instead). */
  jacobianCsr: { values: number; indices: number; total: number };
  /**
   * Bytes per preconditioner, with the named parts. block-iluk is present only when the stored
   * blocks of its level-k factor pattern are given (EstimateInput.fillBlocks, whole matrix only):
   * the level-k pattern is not a function of the mesh sizes alone.
   */
  preconditioners: Record<Exclude<EstimatePreconditioner, 'block-iluk' | 'p-multigrid'>, { total: number; parts: Record<string, number> }>
    & { 'block-iluk'?: { total: number; parts: Record<string, number> }; 'p-multigrid'?: { total: number; parts: Record<string, number> } };
  /** Why a preconditioner has no projection from the mesh sizes (block-iluk without fillBlocks, p-multigrid at p = 0, schwarz, direct, air). */
  notProjected: Record<string, string>;
  krylov: Record<EstimateKrylov, number>;
}

export interface MemoryEstimate {
  spaceDim: 1 | 2 | 3;
  order: number;
  equations: number;
  nBasis: number;
  bs: number;
  slabs: number;
  restart: number;
  /** The deflate the gmres-dr and gcro-dr rows assume (given, or defaultDeflate(restart)). */
  deflate: number;
  blockCountSource: BlockCountSource;
  allAtOnce: Footprint;
  /** One slab (the largest when elements do not divide evenly). */
  slab: Footprint;
}

/** Binomial coefficient for the small arguments used here. */
export function binomial(n: number, k: number): number {
  let r = 1;
  for (let i = 1; i <= k; i++) r = (r * (n - k + i)) / i;
  return Math.round(r);
}

function factorial(k: number): number {
  let r = 1;
  for (let i = 2; i <= k; i++) r *= i;
  return r;
}

/** Basis functions of total degree ≤ p on a D-simplex, D = d + 1: C(p + D, D). */
export function spaceTimeBasisSize(spaceDim: number, order: number): number {
  return binomial(order + spaceDim + 1, spaceDim + 1);
}

/** Elements of the structured Kuhn space-time mesh: Π cells_k · layers · slabs · (d+1)!. */
export function kuhnElements(spaceDim: number, cells: number | number[], layersPerSlab: number, slabs: number): number {
  const c = perAxis(cells, spaceDim);
  return c.reduce((a, b) => a * b, 1) * layersPerSlab * slabs * factorial(spaceDim + 1);
}

function perAxis<T>(v: T | T[], d: number): T[] {
  return Array.isArray(v) ? v : Array<T>(d).fill(v);
}

const sum = (p: Record<string, number>): { total: number; parts: Record<string, number> } =>
  ({ total: Object.values(p).reduce((a, b) => a + b, 0), parts: p });

/** Inner recipe of the slab preconditioner's default (GMRES(30) + block ILU(0)): its restart. */
const SLAB_INNER_RESTART = 30;

/**
 * The modal layout of the generator's space-time basis (src/dg/basis.ts): hierarchical, C(q + D, D)
 * modes of total degree ≤ q on a D-simplex, D = d + 1, equation-major.
 */
export function generatorModes(spaceDim: number, order: number, equations: number): ModalLayout {
  const degrees: number[] = [];
  for (let q = 0; q <= order; q++) {
    const fresh = spaceTimeBasisSize(spaceDim, q) - (q > 0 ? spaceTimeBasisSize(spaceDim, q - 1) : 0);
    for (let i = 0; i < fresh; i++) degrees.push(q);
  }
  return { nEquations: equations, arrangement: 'equation-major', degrees };
}

function footprint(elements: number, blocks: number, bs: number, restart: number, deflate: number, slab?: Footprint, fillBlocks?: number, modes?: ModalLayout): Footprint {
  const n = elements * bs;
  const bb = bs * bs;
  const nnz = blocks * bb;
  const values = blocks * bb * 8;
  const indices = blocks * 4 + (elements + 1) * 4;
  const csrIndices = nnz * 4 + (n + 1) * 4;
  const diagInverse = { 'inverse blocks': elements * bb * 8 };
  const blockIluOn = (nBlocks: number): { total: number; parts: Record<string, number> } =>
    sum({ factors: nBlocks * bb * 8, 'factor pattern': nBlocks * 4 + 2 * (elements + 1) * 4, workspace: bs * 8 });
  const blockIlu0 = blockIluOn(blocks);
  const notProjected: Record<string, string> = {};
  if (fillBlocks === undefined) notProjected['block-iluk'] = 'its level-k pattern depends on more than the mesh sizes (the library takes its block count as fillBlocks)';
  // p-multigrid: every level lives on the fine block pattern, so the counts give its bytes
  let pmg: { total: number; parts: Record<string, number> } | undefined;
  if (modes) {
    const p = projectPreconditioner({ nb: elements, bs, blocks, nnz, modes }, defaultRecipeFor('p-multigrid'));
    if (isRefused(p)) notProjected['p-multigrid'] = p.refused; else pmg = { total: p.total, parts: p.parts };
  }
  for (const name of MATRIX_ONLY_PRECONDITIONERS) {
    notProjected[name] = name === 'air'
      ? 'its coarse levels follow from the matrix values (strength of connection, C/F splitting): estimate a matrix file, where its setup runs'
      : `its storage follows from the block pattern (${name === 'schwarz' ? 'the partition and its overlapped subdomains' : 'the fill of the minimum-degree block LU'}): estimate a matrix file`;
  }
  const s = slab; // one slab's footprint (undefined when this is the one-slab footprint itself)
  const ns = s ? s.unknowns : n;
  const mInner = Math.max(1, Math.min(SLAB_INNER_RESTART, ns));
  return {
    elements, unknowns: n, blocks,
    jacobian: { values, indices, total: values + indices },
    jacobianCsr: { values: nnz * 8, indices: csrIndices, total: nnz * 8 + csrIndices },
    preconditioners: {
      none: sum({}),
      jacobi: sum({ 'inverse diagonal': n * 8 }),
      'block-jacobi': sum({ ...diagInverse, workspace: bb * 8 + bs * 4 }),
      'block-gs': sum({ ...diagInverse, workspace: (2 * bs + bb) * 8 + bs * 4 }),
      ilu0: sum({ factors: nnz * 8, 'diagonal positions': n * 4 }),
      'block-ilu0': blockIlu0,
      // block ILU(0) on the level-k pattern (src/precond/block-iluk.ts), natural ordering
      ...(fillBlocks !== undefined ? { 'block-iluk': blockIluOn(fillBlocks) } : {}),
      ...(pmg ? { 'p-multigrid': pmg } : {}),
      slab: sum({
        'inner block-ilu0 (one slab)': (s ? s.preconditioners['block-ilu0'] : blockIlu0).total,
        'inner Krylov basis (one slab)': (mInner + 1) * ns * 8,
        'slab matrix buffer': (s ? s.jacobian : { total: values + indices }).total,
        'slab vectors': 2 * ns * 8,
      }),
    },
    krylov: reservedBasisBytes(restart, n, deflate),
    notProjected,
  };
}

/** The Jacobian bytes a solve with this preconditioner holds: CSR for the point methods, else BSR. */
export function jacobianBytes(f: Footprint, preconditioner: EstimatePreconditioner): number {
  return preconditioner === 'jacobi' || preconditioner === 'ilu0' ? f.jacobianCsr.total : f.jacobian.total;
}

function check(cond: boolean, what: string): void {
  if (!cond) throw new RangeError(`estimateMemory: ${what}`);
}

const isPosInt = (v: unknown): v is number => typeof v === 'number' && Number.isSafeInteger(v) && v >= 1;

/** Project the memory of one space-time DG problem (see the file comment for every formula). */
export function estimateMemory(input: EstimateInput): MemoryEstimate {
  const { spaceDim: d, order: p, equations, slabs, restart } = input;
  check(d === 1 || d === 2 || d === 3, `spaceDim must be 1, 2 or 3, got ${d}`);
  check(Number.isInteger(p) && p >= 0, `order must be an integer ≥ 0, got ${p}`);
  check(isPosInt(equations), `equations must be an integer ≥ 1, got ${equations}`);
  check(isPosInt(slabs), `slabs must be an integer ≥ 1, got ${slabs}`);
  check(isPosInt(restart), `restart must be an integer ≥ 1, got ${restart}`);
  const deflate = input.deflate ?? defaultDeflate(restart);
  check(Number.isInteger(deflate) && deflate >= 0 && deflate < restart, `deflate must be an integer from 0 to restart − 1 = ${restart - 1}, got ${deflate}`);
  check((input.elements === undefined) !== (input.cells === undefined), 'give exactly one of elements and cells');
  const nBasis = spaceTimeBasisSize(d, p);
  const bs = equations * nBasis;
  const dFact = factorial(d);

  let elements: number, slabElements: number, blocks: number, slabBlocks: number;
  let source: BlockCountSource;
  if (input.cells !== undefined) {
    const c = perAxis(input.cells, d), L = input.layersPerSlab ?? 1;
    const periodic = perAxis(input.periodic ?? false, d);
    check(c.length === d && c.every(isPosInt), `cells must be ${d} integer${d === 1 ? '' : 's'} ≥ 1, got ${JSON.stringify(input.cells)}`);
    check(periodic.length === d, `periodic must be one flag or ${d} flags, got ${JSON.stringify(input.periodic)}`);
    check(isPosInt(L), `layersPerSlab must be an integer ≥ 1, got ${L}`);
    elements = kuhnElements(d, c, L, slabs);
    slabElements = elements / slabs;
    const cellsPerLayer = c.reduce((a, b) => a * b, 1);
    const timeFaces = dFact * cellsPerLayer; // faces on one t = const plane
    // Per slab: each non-periodic axis k has two sides of (cells/c_k)·L boxes, d! faces per box side.
    let spaceSide = 0;
    for (let k = 0; k < d; k++) if (!periodic[k]) spaceSide += dFact * 2 * (cellsPerLayer / c[k]) * L;
    blocks = elements * (d + 3) - spaceSide * slabs - timeFaces * (slabs + 1);
    slabBlocks = slabElements * (d + 3) - spaceSide - 2 * timeFaces;
    source = 'structured-mesh';
  } else {
    check(isPosInt(input.elements), `elements must be an integer ≥ 1, got ${input.elements}`);
    elements = input.elements!;
    check(elements >= slabs, `elements (${elements}) must be at least slabs (${slabs})`);
    slabElements = Math.ceil(elements / slabs);
    blocks = elements * (d + 3);
    slabBlocks = slabElements * (d + 3);
    source = 'upper-bound';
  }
  if (input.fillBlocks !== undefined) check(isPosInt(input.fillBlocks), `fillBlocks must be an integer ≥ 1, got ${input.fillBlocks}`);
  if (input.blocks !== undefined) {
    check(isPosInt(input.blocks), `blocks must be an integer ≥ 1, got ${input.blocks}`);
    check(input.blocks >= elements, `blocks (${input.blocks}) must be at least the number of elements (${elements}): one diagonal block each`);
    // The split of an exact total over slabs is not known: each slab gets its share (an upper
    // bound, since the share includes the blocks coupling it to the previous slab).
    slabBlocks = Math.min(slabBlocks, Math.ceil(input.blocks / slabs));
    if (source === 'upper-bound') slabBlocks = Math.ceil(input.blocks / slabs);
    blocks = input.blocks;
    source = 'exact';
  }
  const modes = generatorModes(d, p, equations);
  const slab = footprint(slabElements, slabBlocks, bs, restart, deflate, undefined, undefined, modes);
  return {
    spaceDim: d, order: p, equations, nBasis, bs, slabs, restart, deflate, blockCountSource: source,
    allAtOnce: footprint(elements, blocks, bs, restart, deflate, slab, input.fillBlocks, modes),
    slab,
  };
}

/** Jacobian + preconditioner + Krylov basis: what one solve holds at its peak. */
export function peakBytes(f: Footprint, preconditioner: EstimatePreconditioner, krylov: EstimateKrylov): number {
  const p = f.preconditioners[preconditioner];
  if (!p) throw new RangeError(`peakBytes: no projection for ${preconditioner}: ${f.notProjected[preconditioner] ?? 'unknown'}`);
  return jacobianBytes(f, preconditioner) + p.total + f.krylov[krylov];
}
