/**
 * One-level Schwarz on a partition of the block graph (src/sparse/partition.ts).
 *
 * Parts Ω_1…Ω_P of the block rows (graph bisection, or coordinate bisection of the layout's
 * centroids with partitionMethod 'coordinates') are grown by `overlap` layers of graph neighbours (the
 * symmetrized block pattern) into Ω'_i. Each subdomain matrix A_i = A(Ω'_i, Ω'_i) (couplings
 * leaving Ω'_i dropped) gets its own solver M_i:
 *   additive:   z = Σ_i R_iᵀ M_i⁻¹ R_i r        (R_i restricts to Ω'_i)
 *   restricted: z = Σ_i R̃_iᵀ M_i⁻¹ R_i r       (R̃_i keeps only the rows Ω_i the part owns)
 * Restricted additive Schwarz: Cai & Sarkis, SIAM J. Sci. Comput. 21(2), 1999; additive Schwarz:
 * Smith, Bjørstad & Gropp, Domain Decomposition, 1996. With overlap 0 both are block Jacobi
 * over the parts ("block Jacobi with ILU on each process" when M_i is block ILU(0)).
 *
 * Subdomain solves: any registered preconditioner except schwarz and slab, created through the
 * registry on A_i from the same recipe with `preconditioner` replaced (so shift, ordering,
 * blockInverse, sweeps… reach it unchanged), or 'exact': a dense LU of A_i with partial pivoting,
 * refused in setup (reason 'invalid') above EXACT_MAX_UNKNOWNS unknowns per subdomain or
 * EXACT_MAX_BYTES of dense factors in total.
 *
 * The subdomain matrices are copies (their bytes are reported as 'subdomain matrices'); a point
 * method's CSR view of a subdomain is built only when it asks for it.
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { Recipe, SchwarzKind, SubdomainSolver, PartitionSlabsMode } from '../solvers/recipe.js';
import type { Bsr, Csr } from '../sparse/types.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { addWork, denseWork, kernel, scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { kernelCopyI32, kernelF64, kernelI32 } from '../kernels-host/arena.js';
import { UserError } from '../util/errors.js';
import { bsrToCsr } from '../sparse/bsr.js';
import { blockGraph, partitionBlocks, partitionSummary, type Partition, type PartitionMethod } from '../sparse/partition.js';
import { checkApplyArgs, checkReady, isFailure, totalBytes } from './common.js';
import { PIVOT_RTOL, allFinite, luFactor, luSolve } from './dense.js';
import { validSlabOffsets } from './block-tools.js';
import { createPreconditioner } from './registry.js';

export const SCHWARZ_DEFAULTS = Object.freeze({
  parts: 4, overlap: 1, schwarzKind: 'restricted' as SchwarzKind, subdomain: 'block-ilu0' as SubdomainSolver,
  partitionSlabs: 'across' as PartitionSlabsMode, partitionMethod: 'graph' as PartitionMethod,
});
/** Largest subdomain (unknowns) an 'exact' subdomain solve factors densely. */
export const EXACT_MAX_UNKNOWNS = 4096;
/** Largest total of dense subdomain factors (bytes) for 'exact'. */
export const EXACT_MAX_BYTES = 512 * 1024 * 1024;
/** The grouping permutation is listed in stats up to this many block rows. */
const MAX_LISTED_PERMUTATION = 100000;

export function createSchwarz(system: SystemMatrix, recipe: Recipe): Preconditioner {
  const parts = recipe.parts ?? SCHWARZ_DEFAULTS.parts;
  const overlap = recipe.overlap ?? SCHWARZ_DEFAULTS.overlap;
  const kind = recipe.schwarzKind ?? SCHWARZ_DEFAULTS.schwarzKind;
  const subdomain = recipe.subdomain ?? SCHWARZ_DEFAULTS.subdomain;
  const slabs = recipe.partitionSlabs ?? SCHWARZ_DEFAULTS.partitionSlabs;
  const method = recipe.partitionMethod ?? SCHWARZ_DEFAULTS.partitionMethod;
  const nb = system.bsr.nBlockRows;
  if (method === 'coordinates') checkCentroids(system, `recipe ${recipe.name}: schwarz partitionMethod 'coordinates'`);
  if (parts > nb) throw new UserError(`recipe ${recipe.name}: schwarz parts ${parts} exceeds the matrix's ${nb} block rows`);
  if ((subdomain as string) === 'schwarz' || (subdomain as string) === 'slab') {
    throw new UserError(`recipe ${recipe.name}: schwarz subdomain solve cannot be ${subdomain}`);
  }
  if (slabs === 'within') {
    if (!validSlabOffsets(system.slabOffsets, nb)) {
      throw new UserError(`recipe ${recipe.name}: schwarz partitionSlabs 'within' needs slab offsets (a layout file with slabs)`);
    }
    const nSlabs = system.slabOffsets.length - 1;
    if (parts < nSlabs) throw new UserError(`recipe ${recipe.name}: schwarz partitionSlabs 'within' needs at least one part per slab (${nSlabs} slabs, parts ${parts})`);
    for (let s = 0; s < nSlabs; s++) {
      if (system.slabOffsets[s + 1] - system.slabOffsets[s] < 1) throw new UserError(`recipe ${recipe.name}: slab ${s} is empty`);
    }
  }
  const sub: Recipe = { ...recipe, name: `${recipe.name}/subdomain`, preconditioner: subdomain === 'exact' ? 'none' : subdomain };
  for (const f of ['parts', 'overlap', 'schwarzKind', 'subdomain', 'partitionSlabs', 'partitionMethod'] as const) delete sub[f];
  delete sub.inner;
  return new SchwarzPreconditioner(system, { parts, overlap, kind, subdomain, slabs, method, sub, shift: recipe.shift });
}

/** Coordinate bisection needs one centroid per block row (layout field `centroids`); `what` starts the message. */
export function checkCentroids(system: SystemMatrix, what: string): void {
  const nb = system.bsr.nBlockRows, c = system.centroids;
  if (c === undefined) {
    throw new UserError(`${what} needs element centroids: the layout has no "centroids" field (generated cases record it; for your own matrix see README "The layout file"), or use partitionMethod graph`);
  }
  if (c.values.length !== nb * c.nCoordinates) {
    throw new UserError(`${what}: the centroids hold ${c.values.length / c.nCoordinates} points, expected one per block row (${nb})`);
  }
}

interface SchwarzOptions {
  parts: number; overlap: number; kind: SchwarzKind; subdomain: SubdomainSolver; slabs: PartitionSlabsMode;
  method: PartitionMethod; sub: Recipe; shift: number;
}

/** One subdomain: its rows (caller numbering, ascending), matrix and solver. */
interface Subdomain {
  rows: Int32Array;
  /** Local positions of the owned rows inside `rows` (restricted combination). */
  ownedLocal: Int32Array;
  matrix: Bsr;
  csrBytes: () => number;
  solver?: Preconditioner;
  /** exact: dense LU factors and pivots. */
  lu?: Float64Array;
  piv?: Int32Array;
}

/** Sub-matrix A(rows, rows) of a BSR matrix; rows ascending; `local` is −1 outside and restored. */
export function extractSubmatrix(a: Bsr, rows: Int32Array, local: Int32Array): Bsr {
  const bb = a.bs * a.bs;
  for (let i = 0; i < rows.length; i++) local[rows[i]] = i;
  const rowPtr = new Int32Array(rows.length + 1);
  for (let i = 0; i < rows.length; i++) {
    let c = 0;
    for (let k = a.rowPtr[rows[i]]; k < a.rowPtr[rows[i] + 1]; k++) if (a.colInd[k] < local.length && local[a.colInd[k]] >= 0) c++;
    rowPtr[i + 1] = rowPtr[i] + c;
  }
  // in kernel memory when a solve has one, so the subdomain solvers run on the WebAssembly kernels
  const colInd = kernelI32(rowPtr[rows.length]);
  const values = kernelF64(rowPtr[rows.length] * bb);
  let w = 0;
  for (let i = 0; i < rows.length; i++) {
    for (let k = a.rowPtr[rows[i]]; k < a.rowPtr[rows[i] + 1]; k++) {
      const J = a.colInd[k];
      if (J >= local.length || local[J] < 0) continue;
      colInd[w] = local[J];
      values.set(a.values.subarray(k * bb, k * bb + bb), w * bb);
      w++;
    }
  }
  for (let i = 0; i < rows.length; i++) local[rows[i]] = -1;
  return { nBlockRows: rows.length, nBlockCols: rows.length, bs: a.bs, rowPtr: kernelCopyI32(rowPtr), colInd, values };
}

/** Grow each part by `layers` rings of graph neighbours; returns ascending row lists. */
export function overlappedRows(a: Bsr, p: Partition, layers: number): Int32Array[] {
  const g = layers > 0 ? blockGraph(a) : undefined;
  const stamp = new Int32Array(a.nBlockRows).fill(-1);
  const out: Int32Array[] = [];
  for (let q = 0; q < p.nParts; q++) {
    let frontier = Array.from(p.perm.subarray(p.partOffsets[q], p.partOffsets[q + 1]));
    const all = frontier.slice();
    for (const v of frontier) stamp[v] = q;
    for (let l = 0; l < layers && g; l++) {
      const next: number[] = [];
      for (const v of frontier) {
        for (let k = g.ptr[v]; k < g.ptr[v + 1]; k++) {
          const u = g.adj[k];
          if (stamp[u] !== q) { stamp[u] = q; next.push(u); all.push(u); }
        }
      }
      frontier = next;
    }
    out.push(Int32Array.from(all).sort());
  }
  return out;
}

export class SchwarzPreconditioner implements Preconditioner {
  readonly name = 'schwarz';
  readonly n: number;
  variable = false;
  private partition?: Partition;
  private subs: Subdomain[] = [];
  private rLoc: Float64Array = new Float64Array(0);
  private zLoc: Float64Array = new Float64Array(0);
  private applies = 0;
  private ready = false;
  private setupWork: WorkCounts = zeroWork();
  /** Per-part work of one application (gather, subdomain solve, scatter). */
  private partApply: WorkCounts[] = [];
  private setupFlops = 0;

  constructor(private readonly system: SystemMatrix, private readonly o: SchwarzOptions) {
    this.n = system.bsr.nBlockRows * system.bsr.bs;
  }

  setup(): SetupOutcome {
    const a = this.system.bsr;
    const { bs } = a;
    const bb = bs * bs;
    this.ready = false;
    this.applies = 0;
    this.setupFlops = 0;
    const work = zeroWork();
    this.setupWork = work;
    const p = partitionBlocks(a, this.o.parts, {
      slabs: this.o.slabs, slabOffsets: this.system.slabOffsets, method: this.o.method, centroids: this.system.centroids,
    });
    this.partition = p;
    const rowsOf = overlappedRows(a, p, this.o.overlap);
    if (this.o.subdomain === 'exact') {
      let total = 0, largest = 0;
      for (const r of rowsOf) { const m = r.length * bs; largest = Math.max(largest, m); total += m * m * 8; }
      if (largest > EXACT_MAX_UNKNOWNS || total > EXACT_MAX_BYTES) {
        return {
          ok: false, reason: 'invalid',
          message: `schwarz: exact subdomain solves need dense factors of ${total} bytes (largest subdomain ${largest} unknowns); the limit is ${EXACT_MAX_UNKNOWNS} unknowns per subdomain and ${EXACT_MAX_BYTES} bytes in total: use more parts or a preconditioner as the subdomain solve`,
        };
      }
    }
    const local = new Int32Array(a.nBlockRows).fill(-1);
    this.subs = [];
    this.partApply = [];
    let maxRows = 0;
    for (let q = 0; q < p.nParts; q++) {
      const rows = rowsOf[q];
      maxRows = Math.max(maxRows, rows.length);
      const matrix = extractSubmatrix(a, rows, local);
      const kq = matrix.rowPtr[rows.length];
      // extraction: row pointers and column indices scanned, kept blocks copied
      addWork(work, kernel(0, 4 * (rows.length + 1) + 4 * kq + 2 * kq * bb * 8));
      const owned = p.perm.subarray(p.partOffsets[q], p.partOffsets[q + 1]);
      const ownedLocal = new Int32Array(owned.length);
      for (let i = 0, j = 0; i < owned.length; i++) {
        while (rows[j] !== owned[i]) j++;
        ownedLocal[i] = j;
      }
      let csr: Csr | undefined;
      const sd: Subdomain = { rows, ownedLocal, matrix, csrBytes: () => (csr ? csr.rowPtr.byteLength + csr.colInd.byteLength + csr.values.byteLength : 0) };
      const m = rows.length * bs;
      const pw = kernel(0, 2 * m * 8 + rows.length * 4); // gather r into rLoc
      if (this.o.subdomain === 'exact') {
        const lu = kernelF64(m * m);
        for (let i = 0; i < rows.length; i++) {
          for (let k = matrix.rowPtr[i]; k < matrix.rowPtr[i + 1]; k++) {
            const j = matrix.colInd[k];
            for (let r = 0; r < bs; r++) for (let c = 0; c < bs; c++) lu[(i * bs + r) * m + j * bs + c] = matrix.values[k * bb + r * bs + c];
          }
        }
        if (this.o.shift !== 0) for (let i = 0; i < m; i++) lu[i * m + i] += this.o.shift;
        const piv = kernelI32(m);
        let norm = 0;
        for (let i = 0; i < lu.length; i++) norm = Math.max(norm, Math.abs(lu[i]));
        addWork(work, denseWork.lu(m));
        addWork(work, kernel(0, m * m * 8 * 2));
        const k = allFinite(lu, 0, lu.length) ? luFactor(lu, 0, m, piv, 0, PIVOT_RTOL * norm) : 0;
        if (k >= 0 || !allFinite(lu, 0, lu.length)) {
          const blockRow = rows[Math.floor(Math.max(k, 0) / bs)];
          return {
            ok: false, reason: norm === 0 || k >= 0 ? 'zero-pivot' : 'non-finite', blockRow,
            message: `schwarz: exact solve of subdomain ${q} failed at block row ${blockRow} (zero/tiny pivot or non-finite values); a diagonal shift (recipe shift > 0) avoids a zero pivot`,
          };
        }
        this.setupFlops += denseWork.luFlops(m);
        sd.lu = lu; sd.piv = piv;
        addWork(pw, vectorWork.copy(m)); // zLoc ← rLoc
        addWork(pw, denseWork.luSolve(m));
        // the dense factors stream once per solve: luSolve counts bs² doubles already
      } else {
        const subSystem: SystemMatrix = { bsr: matrix, get csr(): Csr { return (csr ??= bsrToCsr(matrix)); } };
        const solver = createPreconditioner(subSystem, this.o.sub);
        sd.solver = solver;
        const outcome = solver.setup();
        addWork(work, solver.work().setup);
        if (isFailure(outcome)) {
          const blockRow = outcome.blockRow !== undefined ? rows[outcome.blockRow] : undefined;
          return { ...outcome, blockRow, message: `schwarz subdomain ${q}: ${outcome.message}${blockRow !== undefined ? ` (block row ${blockRow} of the whole matrix)` : ''}` };
        }
        if (solver.variable) this.variable = true;
        const st = solver.stats?.();
        if (st && typeof st.setupFlops === 'number') this.setupFlops += st.setupFlops;
      }
      // combination: restricted writes the owned rows; additive adds every row of the subdomain
      const scatterRows = this.o.kind === 'restricted' ? owned.length : rows.length;
      addWork(pw, this.o.kind === 'restricted'
        ? kernel(0, 2 * scatterRows * bs * 8 + scatterRows * 4 * 2)
        : kernel(scatterRows * bs, 3 * scatterRows * bs * 8 + scatterRows * 4));
      this.partApply.push(pw);
      this.subs.push(sd);
    }
    this.rLoc = kernelF64(maxRows * bs);
    this.zLoc = kernelF64(maxRows * bs);
    this.ready = true;
    return { ok: true };
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    const bs = this.system.bsr.bs;
    const { rLoc, zLoc } = this;
    const additive = this.o.kind === 'additive';
    if (additive) z.fill(0);
    for (const sd of this.subs) {
      const { rows } = sd;
      const m = rows.length * bs;
      for (let i = 0; i < rows.length; i++) {
        const g = rows[i] * bs, l = i * bs;
        for (let c = 0; c < bs; c++) rLoc[l + c] = r[g + c];
      }
      const rv = rLoc.subarray(0, m), zv = zLoc.subarray(0, m);
      if (sd.lu && sd.piv) {
        zv.set(rv);
        luSolve(sd.lu, 0, sd.piv, 0, m, zv, 0);
      } else {
        sd.solver!.apply(rv, zv);
      }
      if (additive) {
        for (let i = 0; i < rows.length; i++) {
          const g = rows[i] * bs, l = i * bs;
          for (let c = 0; c < bs; c++) z[g + c] += zLoc[l + c];
        }
      } else {
        const { ownedLocal } = sd;
        for (let i = 0; i < ownedLocal.length; i++) {
          const li = ownedLocal[i];
          const g = rows[li] * bs, l = li * bs;
          for (let c = 0; c < bs; c++) z[g + c] = zLoc[l + c];
        }
      }
    }
    this.applies++;
  }

  /** Work of one application on each part (gather, subdomain solve, combination). */
  partApplyWork(): WorkCounts[] {
    return this.subs.map((sd, q) => {
      const w = { ...this.partApply[q] };
      if (sd.solver) {
        const s = sd.solver.work().apply;
        const per = this.applies > 0 ? scaledWork(s, 1 / this.applies) : zeroWork();
        // per-apply cost of the subdomain solver: its cumulative work over the applications so far,
        // or (before any apply) one probe of its formula is not available: reported as 0 then
        addWork(w, { ...per, preconditionerApplies: 0 });
      }
      return w;
    });
  }

  work(): { setup: WorkCounts; apply: WorkCounts } {
    const apply = zeroWork();
    for (let q = 0; q < this.subs.length; q++) {
      addWork(apply, this.partApply[q], this.applies);
      const s = this.subs[q].solver;
      if (s) addWork(apply, s.work().apply);
    }
    if (this.o.kind === 'additive') addWork(apply, kernel(0, this.n * 8), this.applies);
    apply.preconditionerApplies = this.applies + this.subs.reduce((t, sd) => t + (sd.solver ? sd.solver.work().apply.preconditionerApplies : 0), 0);
    return { setup: { ...this.setupWork }, apply };
  }

  memory(): BufferBytes {
    let matrices = 0, solvers = 0, lists = 0, dense = 0;
    for (const sd of this.subs) {
      matrices += sd.matrix.rowPtr.byteLength + sd.matrix.colInd.byteLength + sd.matrix.values.byteLength + sd.csrBytes();
      lists += sd.rows.byteLength + sd.ownedLocal.byteLength;
      if (sd.solver) solvers += totalBytes(sd.solver.memory());
      if (sd.lu && sd.piv) dense += sd.lu.byteLength + sd.piv.byteLength;
    }
    const p = this.partition;
    const out: BufferBytes = {
      'subdomain matrices': matrices,
      'subdomain row lists': lists + (p ? p.part.byteLength + p.perm.byteLength + p.partOffsets.byteLength : 0),
      workspace: this.rLoc.byteLength + this.zLoc.byteLength,
    };
    if (this.o.subdomain === 'exact') out['dense subdomain factors'] = dense;
    else out['subdomain preconditioners'] = solvers;
    return out;
  }

  stats(): Record<string, unknown> {
    const p = this.partition;
    const bs = this.system.bsr.bs;
    const base: Record<string, unknown> = {
      kind: this.o.kind, overlap: this.o.overlap, subdomain: this.o.subdomain, partitionSlabs: this.o.slabs, partitionMethod: this.o.method,
      setupFlops: this.setupFlops, applications: this.applies,
    };
    if (!p) return { ...base, parts: this.o.parts };
    const pw = this.partApplyWork();
    return {
      ...base,
      ...partitionSummary(p, p.part.length <= MAX_LISTED_PERMUTATION),
      overlappedSizes: this.subs.map((sd) => sd.rows.length),
      // bytes a part receives per application for its overlap rows (additive: sent back as well)
      overlapBytesPerPart: this.subs.map((sd) => (sd.rows.length - sd.ownedLocal.length) * bs * 8 * (this.o.kind === 'additive' ? 2 : 1)),
      partApplyFlops: pw.map((w) => w.flops),
      partApplyBytes: pw.map((w) => w.bytes),
    };
  }
}
