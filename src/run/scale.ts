/**
 * The scaling forecast behind `slabbench scale`: a recipe run for P = 1, 2, 4, … parts, exactly
 * (the partitioned algebra carried out on one core), with per-part work from the work model and a
 * modelled time per iteration on a target machine (README "Scale: the communication model").
 *
 * What is partitioned: preconditioner schwarz gets parts = P; any other preconditioner that can be
 * a subdomain solve becomes what it is on P processes that each apply it to their own part: schwarz
 * with overlap 0 (block Jacobi over the parts) and that preconditioner as the subdomain solve;
 * 'none' stays none (only the products and vector operations are partitioned).
 *
 * The model per iteration (the α–β model; Hockney, Parallel Computing 20, 1994):
 *   t = max_p bytes_p / bandwidth                      (each part streams its own share)
 *     + messages × latency                             (the busiest part's neighbours, per exchange)
 *     + max_p haloBytes_p / networkBandwidth          (what the busiest part receives)
 *     + reductions × ⌈log₂ P⌉ × latency               (tree all-reduce)
 * bytes_p: the part's block rows of every matrix product, its subdomain applications (stats of
 * schwarz), and the vector operations shared out by its share of the unknowns.
 */
import type { SystemMatrix } from '../precond/types.js';
import { SUBDOMAIN_SOLVERS, isDeflatedKrylov, type PartitionSlabsMode, type Recipe } from '../solvers/recipe.js';
import type { SolveResult, WorkCounts } from '../solvers/types.js';
import { solveSystem } from '../solvers/run-recipe.js';
import { sparseWork } from '../solvers/work.js';
import { partitionBlocks, type PartitionMethod } from '../sparse/partition.js';
import { checkCentroids } from '../precond/schwarz.js';
import { UserError } from '../util/errors.js';

export interface TargetMachine {
  /** Memory bandwidth of one process, bytes/s. */
  bandwidth: number;
  /** Message latency α, seconds (also the cost of one level of a reduction tree). */
  latency: number;
  /** Network bandwidth β⁻¹ of one process's link, bytes/s. */
  networkBandwidth: number;
}

/** Example target (not a measured machine): 10 GB/s per process, 2 µs latency, 10 GB/s links. */
export const EXAMPLE_MACHINE: Readonly<TargetMachine> = Object.freeze({ bandwidth: 10e9, latency: 2e-6, networkBandwidth: 10e9 });

export interface ScaleRow {
  parts: number;
  recipe: Recipe;
  iterations: number;
  cause: SolveResult['cause'];
  converged: boolean;
  partSizes: number[];
  edgeCut: number;
  /** Bytes and flops each part streams per iteration (work model). */
  partBytesPerIteration: number[];
  partFlopsPerIteration: number[];
  maxPartBytesPerIteration: number;
  /** Largest part's bytes ÷ the mean (1 = balanced). */
  imbalance: number;
  /** All halo bytes moved per iteration (sum over parts) and the busiest part's share. */
  haloBytesPerIteration: number;
  maxPartHaloBytesPerIteration: number;
  messagesPerIteration: number;
  reductionsPerIteration: number;
  modelled: { compute: number; messages: number; network: number; reductions: number; perIteration: number; total: number };
}

export interface ScaleReport {
  schema: 'slabbench-scale/1';
  /** The matrix file as given to scale, when known. */
  matrix?: string;
  /** The recipe's name before partitioning (rows[].recipe.name adds -P<parts>). */
  recipe: string;
  machine: TargetMachine;
  /** How every P was partitioned. */
  partition: { method: PartitionMethod; slabs: PartitionSlabsMode };
  rows: ScaleRow[];
}

/**
 * Global reductions of a run, counted one per separate dot product or norm as the loops do them:
 * GMRES/FGMRES with mgs: step j of a cycle (j = 0, 1, …) makes j + 1 projections and one norm,
 * each its own reduction (j + 2); with cgs2, two Gram–Schmidt passes of one fused reduction each
 * plus the norm (3). Plus one norm per restart (true residual). BiCGStab: 6 per iteration
 * ((r̂, r), (r̂, v), ‖s‖, (t, t), (t, s), ‖r‖). Stationary: 1 (the residual norm).
 */
export function reductionsOf(recipe: Recipe, iterations: number, restarts: number): number {
  if (recipe.krylov === 'bicgstab') return 6 * iterations;
  if (recipe.krylov === 'none') return iterations;
  if (isDeflatedKrylov(recipe.krylov) && (recipe.deflate ?? 0) > 0) return deflatedReductions(recipe, iterations, restarts);
  const m = recipe.restart;
  const full = Math.floor(iterations / m), rest = iterations % m;
  const cycle = (k: number): number => (recipe.orthogonalization === 'cgs2' ? 3 * k : (k * (k + 3)) / 2);
  return full * cycle(m) + cycle(rest) + restarts + 1;
}

/**
 * GMRES-DR / GCRO-DR (one solve, no carried space): the first cycle as GMRES(m); each later cycle
 * has m − k steps, and its step j projects against k + j + 1 vectors (gmres-dr: the deflated basis
 * and the new ones; gcro-dr: C, then V), so mgs makes k + j + 2 reductions; cgs2 makes 3 (gmres-dr)
 * or 5 (gcro-dr: two passes against C as well). gcro-dr's per-cycle small blocks (the norms of U
 * and the inner products Cᵀ U, Vᵀ U of the harmonic Ritz problem) count as two fused reductions.
 * Plus one norm per restart and the final one.
 */
function deflatedReductions(recipe: Recipe, iterations: number, restarts: number): number {
  const m = recipe.restart, k = recipe.deflate ?? 0;
  const gcro = recipe.krylov === 'gcro-dr';
  const step = (j: number, before: number): number => (recipe.orthogonalization === 'cgs2'
    ? (gcro && before > 0 ? 5 : 3) : before + j + 2);
  let total = 0;
  let left = iterations;
  for (let cycle = 0; left > 0; cycle++) {
    const before = cycle === 0 ? 0 : k;
    const steps = Math.min(left, m - before);
    for (let j = 0; j < steps; j++) total += step(j, before);
    if (gcro && cycle > 0) total += 2;
    left -= steps;
  }
  return total + restarts + 1;
}

/** How scale partitions (whatever the preconditioner; unset fields: the recipe's, else the defaults). */
export interface ScalePartition {
  method?: PartitionMethod;
  slabs?: PartitionSlabsMode;
}

/** The recipe a run with P parts uses (see the file comment). */
export function partitionedRecipe(recipe: Recipe, parts: number, partition: ScalePartition = {}): Recipe {
  const how = {
    ...(partition.method !== undefined ? { partitionMethod: partition.method } : {}),
    ...(partition.slabs !== undefined ? { partitionSlabs: partition.slabs } : {}),
  };
  if (recipe.preconditioner === 'schwarz') return { ...recipe, ...how, parts, name: `${recipe.name}-P${parts}` };
  if (recipe.preconditioner === 'none') return { ...recipe, name: `${recipe.name}-P${parts}` };
  if (!(SUBDOMAIN_SOLVERS as readonly string[]).includes(recipe.preconditioner)) {
    throw new UserError(`scale: preconditioner ${recipe.preconditioner} cannot be applied part by part; use schwarz or one of ${SUBDOMAIN_SOLVERS.filter((s) => s !== 'exact').join(', ')}`);
  }
  return {
    ...recipe, ...how, name: `${recipe.name}-P${parts}`, preconditioner: 'schwarz', parts, overlap: 0, schwarzKind: 'restricted',
    subdomain: recipe.preconditioner as Recipe['subdomain'],
  };
}

/** P = first, 2·first, 4·first, … ≤ maxParts (first = 1, or the number of slabs when parts lie inside slabs). */
export function partCounts(maxParts: number, first = 1): number[] {
  const out: number[] = [];
  for (let p = first; p <= maxParts; p *= 2) out.push(p);
  return out;
}

export function runScale(
  system: SystemMatrix, b: Float64Array, recipe: Recipe,
  opts: { maxParts: number; machine: TargetMachine; partition?: ScalePartition; matrix?: string },
): ScaleReport {
  const a = system.bsr;
  const nb = a.nBlockRows, bs = a.bs, n = nb * bs;
  if (!Number.isInteger(opts.maxParts) || opts.maxParts < 1 || opts.maxParts > nb) {
    throw new UserError(`scale: --max-parts must be an integer from 1 to the ${nb} block rows, got ${opts.maxParts}`);
  }
  if (recipe.parts !== undefined) throw new UserError('scale: --parts is set by scale itself (P = 1, 2, 4, … up to --max-parts); leave it out');
  const method = opts.partition?.method ?? recipe.partitionMethod ?? 'graph';
  const slabs = opts.partition?.slabs ?? recipe.partitionSlabs ?? 'across';
  if (method === 'coordinates') checkCentroids(system, 'scale: partition method coordinates');
  // parts inside slabs: at least one part per slab, so P starts at the number of slabs
  let first = 1;
  if (slabs === 'within') {
    const offs = system.slabOffsets;
    if (offs === undefined || offs.length < 2) throw new UserError('scale: parts inside slabs (--partition-slabs within) need slab offsets (a layout file with slabOffsets)');
    first = offs.length - 1;
    if (opts.maxParts < first) throw new UserError(`scale: --max-parts ${opts.maxParts} is below the ${first} slabs; parts inside slabs (--partition-slabs within) need at least one part per slab`);
  }
  const rows: ScaleRow[] = [];
  for (const P of partCounts(opts.maxParts, first)) {
    const r = partitionedRecipe(recipe, P, opts.partition);
    const { result } = solveSystem(system, b, r);
    const part = partitionBlocks(a, P, {
      slabs, slabOffsets: system.slabOffsets, method, centroids: system.centroids,
    });
    const its = Math.max(result.iterations, 1);
    const solve = result.work.solve;
    const stats = (result.preconditionerStats ?? {}) as Record<string, unknown>;
    const applications = typeof stats.applications === 'number' ? stats.applications : 0;
    const pcFlops = (stats.partApplyFlops as number[] | undefined) ?? new Array<number>(P).fill(0);
    const pcBytes = (stats.partApplyBytes as number[] | undefined) ?? new Array<number>(P).fill(0);
    const overlapBytes = (stats.overlapBytesPerPart as number[] | undefined) ?? new Array<number>(P).fill(0);
    // matrix products: the part's block rows
    const mv: WorkCounts[] = [];
    for (let p = 0; p < P; p++) {
      let k = 0;
      for (let q = part.partOffsets[p]; q < part.partOffsets[p + 1]; q++) { const I = part.perm[q]; k += a.rowPtr[I + 1] - a.rowPtr[I]; }
      mv.push(sparseWork.bsrSpmv(part.sizes[p], bs, k));
    }
    const mvTotal = mv.reduce((t, w) => ({ f: t.f + w.flops, b: t.b + w.bytes }), { f: 0, b: 0 });
    const pcTotalF = pcFlops.reduce((t, v) => t + v, 0) * applications;
    const pcTotalB = pcBytes.reduce((t, v) => t + v, 0) * applications;
    // the rest (vector operations, Gram–Schmidt, …) shared by unknowns
    const restF = Math.max(0, solve.flops - mvTotal.f * solve.matvecs - pcTotalF);
    const restB = Math.max(0, solve.bytes - mvTotal.b * solve.matvecs - pcTotalB);
    const partBytes: number[] = [], partFlops: number[] = [];
    for (let p = 0; p < P; p++) {
      const share = (part.sizes[p] * bs) / n;
      partBytes.push((mv[p].bytes * solve.matvecs + pcBytes[p] * applications + restB * share) / its);
      partFlops.push((mv[p].flops * solve.matvecs + pcFlops[p] * applications + restF * share) / its);
    }
    const maxBytes = Math.max(...partBytes);
    const mean = partBytes.reduce((t, v) => t + v, 0) / P;
    const mvPerIt = solve.matvecs / its, apPerIt = applications / its;
    const overlap = r.overlap ?? 0;
    const halo = (p: number): number => part.haloBytesPerPart[p] * mvPerIt + (P > 1 ? overlapBytes[p] * apPerIt : 0);
    let haloAll = 0, haloMax = 0, nbrMax = 0;
    for (let p = 0; p < P; p++) { haloAll += halo(p); haloMax = Math.max(haloMax, halo(p)); nbrMax = Math.max(nbrMax, part.neighboursPerPart[p]); }
    const exchanges = mvPerIt + (overlap > 0 && P > 1 ? apPerIt * (r.schwarzKind === 'additive' ? 2 : 1) : 0);
    const messages = P > 1 ? exchanges * nbrMax : 0;
    const reductions = reductionsOf(r, result.iterations, result.restarts) / its;
    const m = opts.machine;
    const compute = maxBytes / m.bandwidth;
    const tMsg = messages * m.latency;
    const tNet = haloMax / m.networkBandwidth;
    const tRed = reductions * Math.ceil(Math.log2(P)) * m.latency;
    const perIteration = compute + tMsg + tNet + tRed;
    rows.push({
      parts: P, recipe: r, iterations: result.iterations, cause: result.cause, converged: result.converged,
      partSizes: part.sizes, edgeCut: part.edgeCut,
      partBytesPerIteration: partBytes, partFlopsPerIteration: partFlops,
      maxPartBytesPerIteration: maxBytes, imbalance: mean > 0 ? maxBytes / mean : 1,
      haloBytesPerIteration: haloAll, maxPartHaloBytesPerIteration: haloMax,
      messagesPerIteration: messages, reductionsPerIteration: reductions,
      modelled: { compute, messages: tMsg, network: tNet, reductions: tRed, perIteration, total: perIteration * result.iterations },
    });
  }
  return {
    schema: 'slabbench-scale/1', ...(opts.matrix !== undefined ? { matrix: opts.matrix } : {}), recipe: recipe.name,
    machine: { ...opts.machine }, partition: { method, slabs }, rows,
  };
}
