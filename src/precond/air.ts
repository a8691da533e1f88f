/**
 * AIR: reduction-based algebraic multigrid with approximate ideal restriction (ℓAIR), on the
 * block graph of a BSR matrix (each bs×bs element block one node). Sources:
 * Manteuffel, Ruge & Southworth, "Nonsymmetric algebraic multigrid based on local approximate
 * ideal restriction (ℓAIR)", SIAM J. Sci. Comput. 40(6), 2018; Manteuffel, Münzenmaier, Ruge &
 * Southworth, "Nonsymmetric reduction-based algebraic multigrid", SIAM J. Sci. Comput. 41(5),
 * 2019; Sivas, Southworth & Rhebergen, SIAM J. Sci. Comput. 43(5), 2021 (space-time HDG).
 *
 * Setup, per level l with matrix A_l (A_0 = the input, not copied):
 *   strength graph (air-setup.ts strengthGraph) → first-pass Ruge–Stüben C/F splitting →
 *   restriction R = [Z I] from local ideal-restriction solves on distance-d F neighbourhoods →
 *   prolongation P = [0; I] (injection) or [W; I] (one-point) → A_{l+1} = R A_l P.
 * Coarsening stops when a level has at most `coarsest` scalar unknowns, when `maxLevels` levels
 * exist, or when a splitting keeps no C point or more than 90% of the points as C. The coarsest
 * level is solved by dense LU with partial pivoting when it has at most DENSE_LIMIT unknowns, else
 * by COARSEST_SWEEPS block Jacobi sweeps.
 *
 * Apply (one cycle from a zero guess; V: one coarse visit per level, W: two):
 *   [pre-relaxation] → r = b − A x → b_c = R r → coarse cycle(s) → x += P x_c → post-relaxation.
 * Relaxation is block Jacobi (ω = 1, explicit inverses of the diagonal blocks) restricted to the
 * F points or the C points, in the order of the pattern ('ffc' = F, F, then C), `sweeps` times.
 * A fixed number of cycles of fixed linear steps: a fixed linear operator (variable: false).
 */
import type { Preconditioner, SetupOutcome, SystemMatrix } from './types.js';
import type { AirOptions, Recipe } from '../solvers/recipe.js';
import { DEFAULT_AIR_OPTIONS } from '../solvers/recipe.js';
import type { Bsr } from '../sparse/types.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';
import { addWork, denseWork, kernel, scaledWork, vectorWork, zeroWork } from '../solvers/work.js';
import { bsrBytes, bsrSpmvKernel } from '../sparse/bsr.js';
import { kernelF64, kernelI32, kernelResident, ptr, wasmFor } from '../kernels-host/arena.js';
import { diagonalBlockIndex } from '../sparse/blocks.js';
import { checkApplyArgs, checkReady, factorBlock, nonFinite, zeroPivot } from './common.js';
import { PIVOT_RTOL, allFinite, blockGemm, blockMatVec, blockMatVecSub, blockMaxAbs, luFactor, luInverse, luSolve } from './dense.js';
import {
  C_POINT, F_POINT, airRestriction, galerkin, onePointProlongation, pointsOfType, prolongationMatrix,
  restrictionMatrix, rugeStubenSplitting, strengthGraph, transposeGraph, type OnePoint, type Restriction,
} from './air-setup.js';

/** The coarsest level is factored densely up to this many scalar unknowns (a 2048² LU is 32 MiB, ~6 GFlop). */
export const DENSE_LIMIT = 2048;
/** Block Jacobi sweeps on a coarsest level too large for the dense LU. */
export const COARSEST_SWEEPS = 10;
/** Coarsening stops when a splitting keeps more than this share of the points as C. */
export const STALL_RATIO = 0.9;

export function createAir(system: SystemMatrix, recipe: Recipe): Preconditioner {
  return new AirPreconditioner(system, { ...DEFAULT_AIR_OPTIONS, ...(recipe.air ?? {}) });
}

interface Level {
  a: Bsr;
  nb: number;
  /** fine → coarse index (C points) or −1 (F points). */
  coarseOf: Int32Array;
  cPoints: Int32Array;
  fPoints: Int32Array;
  z: Restriction | null;
  w: OnePoint | null;
  /** D⁻¹ per block row (explicit inverses; rows that relaxation never visits stay zero). */
  dinv: Float64Array;
  /** Work vectors: right-hand side, solution, residual (level 0 uses the caller's r and z for b and x). */
  b: Float64Array;
  x: Float64Array;
  r: Float64Array;
  setupSeconds: number;
  setupFlops: number;
  /** Stored blocks in the F rows and in the C rows (relaxation reads them). */
  fBlocks: number;
  cBlocks: number;
}

type Step = 0 | 1; // F_POINT, C_POINT

function pattern(p: string): Step[] {
  return p === 'none' ? [] : [...p].map((ch) => (ch === 'c' ? C_POINT : F_POINT) as Step);
}

export class AirPreconditioner implements Preconditioner {
  readonly name = 'air';
  readonly variable = false;
  readonly n: number;
  private levels: Level[] = [];
  private coarse: { kind: 'lu' | 'jacobi' | 'block-diagonal'; lu: Float64Array; piv: Int32Array } = { kind: 'lu', lu: new Float64Array(0), piv: new Int32Array(0) };
  private ready = false;
  private readonly post: Step[];
  private readonly pre: Step[];
  private coarsestSeconds = 0;
  private coarsestFlops = 0;
  private stopReason = '';
  private setupWork: WorkCounts = zeroWork();
  private applies = 0;
  /** Block-diagonal scaling: D⁻¹ blocks of the input and the scaled right-hand side buffer. */
  private scaleInv: Float64Array = new Float64Array(0);
  private scaled: Float64Array = new Float64Array(0);
  private scalingSeconds = 0;

  constructor(private readonly system: SystemMatrix, readonly options: AirOptions) {
    this.n = system.bsr.nBlockRows * system.bsr.bs;
    this.post = pattern(options.relaxation);
    this.pre = pattern(options.preRelaxation);
  }

  setup(): SetupOutcome {
    this.ready = false;
    this.levels = [];
    this.setupWork = zeroWork();
    this.applies = 0;
    const o = this.options;
    const bs = this.system.bsr.bs;
    const bb = bs * bs;
    let a = this.system.bsr;
    this.scaleInv = new Float64Array(0);
    this.scaled = new Float64Array(0);
    if (o.scaling === 'block-diagonal') {
      const t0 = performance.now();
      const scaled = scaleByBlockDiagonal(this.name, a);
      if ('fail' in scaled) return scaled.fail;
      this.scaleInv = kernelResident(scaled.dinv);
      const nbs = a.nBlockRows;
      addWork(this.setupWork, addWork(denseWork.factorBlock(bs, 0), denseWork.inverse(bs)), nbs);
      addWork(this.setupWork, denseWork.gemm(bs), a.rowPtr[nbs]);
      this.scaled = kernelF64(this.n);
      a = scaled.matrix;
      this.scalingSeconds = (performance.now() - t0) / 1000;
    }
    // fineOf[l][i] = block row of the input matrix that coarse point i of level l stands for
    let fineOf: Int32Array | null = null;
    const needC = this.post.includes(C_POINT) || this.pre.includes(C_POINT);
    for (let l = 0; ; l++) {
      const t0 = performance.now();
      a = bsrInKernelMemory(a); // the level's operator in kernel memory before setup reads it
      const nb = a.nBlockRows;
      const atCoarsest = l + 1 >= o.maxLevels || nb * bs <= o.coarsest;
      const diag = diagonalBlockIndex(a);
      if (!allFinite(a.values, 0, a.values.length)) {
        return nonFinite(this.name, firstNonFinite(a, fineOf), `the level ${l} matrix`);
      }
      let type: Uint8Array | null = null;
      let cPoints: Int32Array = new Int32Array(0), fPoints: Int32Array = new Int32Array(0);
      let stop = atCoarsest ? (l + 1 >= o.maxLevels ? 'maxLevels' : 'coarsest size') : '';
      let s = null;
      if (!stop) {
        s = strengthGraph(a, o.strength);
        type = rugeStubenSplitting(s, transposeGraph(s, nb), nb);
        cPoints = pointsOfType(type, C_POINT);
        fPoints = pointsOfType(type, F_POINT);
        if (cPoints.length === 0) stop = 'no C points';
        else if (cPoints.length > STALL_RATIO * nb) stop = 'coarsening stalled';
      }
      if (stop) {
        this.stopReason = stop;
        const level = this.makeLevel(a, nb, new Int32Array(0), new Int32Array(0), new Int32Array(0), bs);
        level.setupSeconds = (performance.now() - t0) / 1000;
        this.levels.push(level);
        const fail = this.setupCoarsest(level, diag, fineOf, stop === 'no C points');
        if (fail) return fail;
        this.coarsestSeconds = (performance.now() - t0) / 1000;
        break;
      }
      const coarseOf = new Int32Array(nb).fill(-1);
      for (let c = 0; c < cPoints.length; c++) coarseOf[cPoints[c]] = c;
      const level = this.makeLevel(a, nb, coarseOf, cPoints, fPoints, bs);
      // strength: one Frobenius norm per stored block
      const lw = scaledWork(kernel(2 * bb, bb * 8), a.rowPtr[nb]);
      // diagonal inverses for the relaxed points
      const piv = kernelI32(bs);
      const work = kernelF64(bb);
      for (let i = 0; i < nb; i++) {
        if (type![i] === C_POINT && !needC) continue;
        const d = diag[i];
        if (d >= 0) work.set(a.values.subarray(d * bb, d * bb + bb)); else work.fill(0);
        const fail = factorBlock(this.name, mapRow(fineOf, i), work, 0, bs, piv, 0, 0);
        if (fail && !fail.ok) return { ...fail, message: `${fail.message} (level ${l} diagonal block)` };
        luInverse(work, 0, piv, 0, bs, level.dinv, i * bb);
        addWork(lw, denseWork.factorBlock(bs, 0));
        addWork(lw, denseWork.inverse(bs));
      }
      level.z = airRestriction(a, s!, type!, cPoints, o.distance, diag);
      addWork(lw, level.z.work);
      let p: Bsr | null = null;
      if (o.prolongation === 'one-point') {
        level.w = onePointProlongation(a, s!, type!, coarseOf, level.dinv);
        p = prolongationMatrix(level.w, coarseOf, nb, cPoints.length, bs);
        addWork(lw, denseWork.gemm(bs), fPoints.length);
      }
      const r = restrictionMatrix(level.z, cPoints, nb, bs);
      const { ac, blockProducts } = galerkin(r, a, coarseOf, cPoints.length, p);
      const z = level.z;
      level.z = { ...z, rowPtr: kernelResident(z.rowPtr), colInd: kernelResident(z.colInd), values: kernelResident(z.values) };
      if (level.w) level.w = { col: kernelResident(level.w.col), values: kernelResident(level.w.values) };
      // each block product of the Galerkin products is a C += A·B (the cost of a C −= A·B)
      addWork(lw, denseWork.gemmSub(bs), blockProducts);
      addWork(this.setupWork, lw);
      level.setupFlops = lw.flops;
      for (let i = 0; i < nb; i++) {
        const k = a.rowPtr[i + 1] - a.rowPtr[i];
        if (type![i] === C_POINT) level.cBlocks += k; else level.fBlocks += k;
      }
      level.setupSeconds = (performance.now() - t0) / 1000;
      this.levels.push(level);
      const nextFine = new Int32Array(cPoints.length);
      for (let c = 0; c < cPoints.length; c++) nextFine[c] = fineOf ? fineOf[cPoints[c]] : cPoints[c];
      fineOf = nextFine;
      a = ac;
    }
    this.ready = true;
    return { ok: true };
  }

  private makeLevel(a: Bsr, nb: number, coarseOf: Int32Array, cPoints: Int32Array, fPoints: Int32Array, bs: number): Level {
    const n = nb * bs;
    const first = this.levels.length === 0;
    return {
      // point lists, inverses and vectors in kernel memory when the solve has one (the cycle's
      // kernels then run in WebAssembly); the operator is there already (setup)
      a, nb, coarseOf, cPoints: kernelResident(cPoints), fPoints: kernelResident(fPoints), z: null, w: null,
      dinv: kernelF64(cPoints.length > 0 ? nb * bs * bs : 0),
      b: kernelF64(first ? 0 : n),
      x: kernelF64(first ? 0 : n),
      r: kernelF64(n),
      setupSeconds: 0, setupFlops: 0, fBlocks: 0, cBlocks: 0,
    };
  }

  private setupCoarsest(level: Level, diag: Int32Array, fineOf: Int32Array | null, blockDiagonal: boolean): SetupOutcome | null {
    const { a, nb } = level;
    const bs = a.bs, bb = bs * bs;
    const n = nb * bs;
    if (n <= DENSE_LIMIT && !blockDiagonal) {
      const lu = kernelF64(n * n);
      for (let i = 0; i < nb; i++) {
        for (let p = a.rowPtr[i]; p < a.rowPtr[i + 1]; p++) {
          const j = a.colInd[p];
          for (let r = 0; r < bs; r++) for (let c = 0; c < bs; c++) lu[(i * bs + r) * n + j * bs + c] = a.values[p * bb + r * bs + c];
        }
      }
      const piv = kernelI32(n);
      const norm = blockMaxAbs(lu, 0, n);
      const k = luFactor(lu, 0, n, piv, 0, PIVOT_RTOL * norm);
      const lw = addWork(denseWork.lu(n), kernel(0, a.rowPtr[nb] * bb * 8 + n * n * 8));
      addWork(this.setupWork, lw);
      this.coarsestFlops = lw.flops;
      if (k >= 0) {
        const row = mapRow(fineOf, Math.floor(k / bs));
        return zeroPivot(this.name, row, norm === 0
          ? `the coarsest matrix (level ${this.levels.length - 1}, ${n} unknowns) is zero`
          : `pivot ${k} of the dense LU of the coarsest matrix (level ${this.levels.length - 1}, ${n} unknowns) is ≤ ${PIVOT_RTOL}·${norm.toExponential(3)}`);
      }
      if (!allFinite(lu, 0, n * n)) return nonFinite(this.name, mapRow(fineOf, 0), 'the coarsest LU factors');
      this.coarse = { kind: 'lu', lu, piv };
      return null;
    }
    // block diagonal (no C point: no off-diagonal block at all): one exact block Jacobi step;
    // too large for a dense LU: COARSEST_SWEEPS block Jacobi sweeps
    level.dinv = kernelF64(nb * bb);
    const piv = kernelI32(bs);
    const work = kernelF64(bb);
    for (let i = 0; i < nb; i++) {
      const d = diag[i];
      if (d >= 0) work.set(a.values.subarray(d * bb, d * bb + bb)); else work.fill(0);
      const fail = factorBlock(this.name, mapRow(fineOf, i), work, 0, bs, piv, 0, 0);
      if (fail && !fail.ok) return { ...fail, message: `${fail.message} (coarsest level diagonal block)` };
      luInverse(work, 0, piv, 0, bs, level.dinv, i * bb);
    }
    const lw = scaledWork(addWork(denseWork.factorBlock(bs, 0), denseWork.inverse(bs)), nb);
    addWork(this.setupWork, lw);
    this.coarsestFlops = lw.flops;
    this.coarse = { kind: blockDiagonal ? 'block-diagonal' : 'jacobi', lu: new Float64Array(0), piv: new Int32Array(0) };
    return null;
  }

  apply(r: Float64Array, z: Float64Array): void {
    checkApplyArgs(this.name, this.n, r, z);
    checkReady(this.name, this.ready);
    this.applies++;
    z.fill(0);
    if (this.scaleInv.length > 0) {
      // M⁻¹ r = AIR(D⁻¹A)⁻¹ (D⁻¹ r)
      const bs = this.system.bsr.bs, bb = bs * bs, nb = this.system.bsr.nBlockRows;
      for (let i = 0; i < nb; i++) blockMatVec(this.scaleInv, i * bb, bs, r, i * bs, this.scaled, i * bs);
      this.cycle(0, this.scaled, z, true);
    } else {
      this.cycle(0, r, z, true);
    }
  }

  /** One cycle on level l for A_l x = b; x holds the initial guess (zero when zeroGuess). */
  private cycle(l: number, b: Float64Array, x: Float64Array, zeroGuess: boolean): void {
    const L = this.levels[l];
    const { a, nb } = L;
    const bs = a.bs, bb = bs * bs, n = nb * bs;
    if (l === this.levels.length - 1) {
      this.coarsestSolve(L, b, x, zeroGuess);
      return;
    }
    let zero = zeroGuess;
    for (let s = 0; s < this.options.sweeps && this.pre.length > 0; s++) {
      for (const step of this.pre) { this.relax(L, b, x, step, zero); zero = false; }
    }
    // r = b − A x
    const res = L.r;
    if (zero) res.set(b);
    else {
      bsrSpmvKernel(nb, bs, a.rowPtr, a.colInd, a.values, x, res);
      for (let i = 0; i < n; i++) res[i] = b[i] - res[i];
    }
    // b_c = R r = r_C + Z r_F
    const next = this.levels[l + 1];
    const bc = next.b, xc = next.x;
    airRestrict(L.cPoints, bs, L.z!, res, bc);
    xc.fill(0);
    const visits = this.options.cycle === 'W' ? 2 : 1;
    for (let t = 0; t < visits; t++) this.cycle(l + 1, bc, xc, t === 0);
    // x += P x_c
    airProlong(L.cPoints, L.fPoints, L.w, bs, xc, x);
    for (let s = 0; s < this.options.sweeps; s++) for (const step of this.post) this.relax(L, b, x, step, false);
  }

  /** One block Jacobi sweep on the F points (step F) or C points (step C): x_i += D_ii⁻¹ (b − A x)_i, all residuals from the old x. */
  private relax(L: Level, b: Float64Array, x: Float64Array, step: Step, zeroGuess: boolean): void {
    airRelax(step === F_POINT ? L.fPoints : L.cPoints, L.a, L.dinv, b, x, L.r, zeroGuess);
  }

  private coarsestSolve(L: Level, b: Float64Array, x: Float64Array, zeroGuess: boolean): void {
    const { a, nb } = L;
    const bs = a.bs, bb = bs * bs, n = nb * bs;
    const res = L.r;
    if (zeroGuess) res.set(b);
    else {
      bsrSpmvKernel(nb, bs, a.rowPtr, a.colInd, a.values, x, res);
      for (let i = 0; i < n; i++) res[i] = b[i] - res[i];
    }
    if (this.coarse.kind === 'lu') {
      luSolve(this.coarse.lu, 0, this.coarse.piv, 0, n, res, 0);
      for (let i = 0; i < n; i++) x[i] += res[i];
      return;
    }
    const sweeps = this.coarse.kind === 'block-diagonal' ? 1 : COARSEST_SWEEPS;
    for (let s = 0; s < sweeps; s++) {
      if (s > 0 || !zeroGuess) {
        bsrSpmvKernel(nb, bs, a.rowPtr, a.colInd, a.values, x, res);
        for (let i = 0; i < n; i++) res[i] = b[i] - res[i];
      }
      for (let i = 0; i < nb; i++) addScaledBlock(L.dinv, i * bb, bs, res, i * bs, x, i * bs);
    }
  }

  /**
   * Flops and bytes of one application, from the kernel formulas (compulsory traffic, common
   * practice): a bs×bs block mat-vec is 2bs² flops and reads bs²·8 + 4 bytes (block + column index);
   * a residual SpMV reads every block of A_l once; a relaxation step reads the blocks of its rows and
   * their D⁻¹ blocks; restriction reads Z, one-point prolongation W; the coarsest dense LU solve is
   * src/solvers/work.ts's luSolve(n) plus the residual copy and the update. Vector traffic is
   * counted as 3 vectors per SpMV/relaxation pass.
   * W-cycles visit level l 2^l times. Zero before a successful setup.
   */
  cycleWork(): { flops: number; bytes: number } {
    if (!this.ready) return { flops: 0, bytes: 0 };
    const bs = this.system.bsr.bs, bb = bs * bs;
    const blockBytes = bb * 8 + 4;
    const gamma = this.options.cycle === 'W' ? 2 : 1;
    const count = (p: Step[], t: Step): number => p.filter((x) => x === t).length * this.options.sweeps;
    let flops = 0, bytes = 0;
    if (this.scaleInv.length > 0) {
      const nb = this.system.bsr.nBlockRows;
      const w = scaledWork(denseWork.matVec(bs), nb);
      flops += w.flops; bytes += w.bytes;
    }
    let visits = 1;
    this.levels.forEach((L, l) => {
      const n = L.nb * bs;
      const nnzb = L.a.rowPtr[L.nb];
      const spmv = { flops: 2 * bb * nnzb, bytes: nnzb * blockBytes + (L.nb + 1) * 4 + 3 * n * 8 };
      let f = 0, b = 0;
      // W: of the visits to a level below 0, half start from the first visit's result (nonzero guess)
      const nonzeroShare = l > 0 && gamma === 2 ? 0.5 : 0;
      if (l === this.levels.length - 1) {
        if (this.coarse.kind === 'lu') {
          // residual copy, LU solve, x += correction
          const w = addWork(addWork(vectorWork.copy(n), denseWork.luSolve(n)), kernel(n, 3 * n * 8));
          f = w.flops; b = w.bytes;
        }
        else {
          const sweeps = this.coarse.kind === 'block-diagonal' ? 1 : COARSEST_SWEEPS;
          f = sweeps * (spmv.flops + 2 * bb * L.nb); b = sweeps * (spmv.bytes + L.nb * bb * 8);
        }
        // a second W visit starts from a nonzero guess: one more residual
        f += nonzeroShare * spmv.flops; b += nonzeroShare * spmv.bytes;
      } else {
        const nF = L.fPoints.length, nC = L.cPoints.length;
        const relax = (blocks: number, rows: number): { flops: number; bytes: number } =>
          ({ flops: 2 * bb * (blocks + rows), bytes: blocks * blockBytes + rows * bb * 8 + 3 * rows * bs * 8 });
        const rf = relax(L.fBlocks, nF), rc = relax(L.cBlocks, nC);
        const nf = count(this.post, F_POINT) + count(this.pre, F_POINT);
        const ncs = count(this.post, C_POINT) + count(this.pre, C_POINT);
        f += nf * rf.flops + ncs * rc.flops;
        b += nf * rf.bytes + ncs * rc.bytes;
        // residual: skipped on a zero-guess first visit without pre-relaxation
        const residuals = this.pre.length > 0 ? 1 : nonzeroShare;
        f += residuals * spmv.flops; b += residuals * spmv.bytes;
        const zBlocks = L.z ? L.z.rowPtr[L.z.rowPtr.length - 1] : 0;
        f += 2 * bb * zBlocks; b += zBlocks * blockBytes + nC * 4;
        if (L.w) { f += 2 * bb * nF; b += nF * (bb * 8 + 4); }
      }
      flops += visits * f; bytes += visits * b;
      visits *= gamma;
    });
    return { flops, bytes };
  }

  /**
   * Cumulative work (README "Work model"): setup from the kernel formulas of src/solvers/work.ts
   * (Frobenius norms, diagonal-block factorizations and inverses, the ℓAIR local LUs and solves,
   * one-point blocks, every block product of the Galerkin products, the coarsest dense LU); apply =
   * applications × cycleWork(). The cycle's row passes over A_l are counted in flops and bytes,
   * not as matvecs (they are not applications of the operator A).
   */
  work(): { setup: WorkCounts; apply: WorkCounts } {
    const c = this.cycleWork();
    return {
      setup: { ...this.setupWork },
      apply: { ...scaledWork(kernel(c.flops, c.bytes), this.applies), preconditionerApplies: this.applies },
    };
  }

  memory(): BufferBytes {
    const out: BufferBytes = {};
    if (this.scaleInv.length > 0) {
      out['block-diagonal scaling inverses'] = this.scaleInv.byteLength;
      out['scaled right-hand side'] = this.scaled.byteLength;
    }
    this.levels.forEach((L, l) => {
      if (l > 0 || this.scaleInv.length > 0) out[`level ${l} matrix${l === 0 ? ' (scaled copy D⁻¹A)' : ''}`] = bsrBytes(L.a);
      if (L.z) out[`level ${l} restriction Z`] = L.z.rowPtr.byteLength + L.z.colInd.byteLength + L.z.values.byteLength;
      if (L.w) out[`level ${l} prolongation W`] = L.w.col.byteLength + L.w.values.byteLength;
      if (L.dinv.byteLength > 0) out[`level ${l} diagonal inverses`] = L.dinv.byteLength;
      if (L.cPoints.length > 0) out[`level ${l} splitting`] = L.coarseOf.byteLength + L.cPoints.byteLength + L.fPoints.byteLength;
      out[`level ${l} vectors`] = L.b.byteLength + L.x.byteLength + L.r.byteLength;
    });
    if (this.coarse.lu.byteLength > 0) {
      out['coarsest dense LU'] = this.coarse.lu.byteLength;
      out['coarsest pivots'] = this.coarse.piv.byteLength;
    }
    return out;
  }

  stats(): Record<string, unknown> {
    const levels = this.levels;
    const nnz0 = levels.length > 0 ? levels[0].a.rowPtr[levels[0].nb] : 0;
    const nb0 = levels.length > 0 ? levels[0].nb : 0;
    let sumNnz = 0, sumRows = 0;
    const mem = this.memory();
    const perLevel = levels.map((L, l) => {
      const nnz = L.a.rowPtr[L.nb];
      sumNnz += nnz; sumRows += L.nb;
      let bytes = 0;
      for (const [k, v] of Object.entries(mem)) if (k.startsWith(`level ${l} `)) bytes += v;
      if (l === levels.length - 1) bytes += (mem['coarsest dense LU'] ?? 0) + (mem['coarsest pivots'] ?? 0);
      return {
        level: l, blockRows: L.nb, nnzBlocks: nnz, cPoints: L.cPoints.length, fPoints: L.fPoints.length,
        restrictionBlocks: L.z ? L.z.rowPtr[L.z.rowPtr.length - 1] : 0,
        largestLocalSystem: L.z ? L.z.largestSystem : 0,
        localSystemFallbacks: L.z ? L.z.fallbacks : 0,
        setupSeconds: L.setupSeconds, bytes,
      };
    });
    const setupFlops = this.setupWork.flops;
    return {
      ...this.options,
      levels: levels.length,
      operatorComplexity: nnz0 > 0 ? sumNnz / nnz0 : 0,
      gridComplexity: nb0 > 0 ? sumRows / nb0 : 0,
      coarsestSolve: this.coarse.kind === 'lu' ? 'dense LU'
        : this.coarse.kind === 'block-diagonal' ? 'block diagonal: diagonal-block inverses' : `${COARSEST_SWEEPS} block Jacobi sweeps`,
      coarseningStopped: this.stopReason,
      coarsestSetupSeconds: this.coarsestSeconds,
      scalingSeconds: this.scalingSeconds,
      perLevel,
      setupFlops,
      cycleFlops: this.cycleWork().flops,
      cycleBytes: this.cycleWork().bytes,
    };
  }
}

/** x[xo..] += A t[to..] for a bs×bs row-major block. */
/** Copy of a in kernel memory (a itself when it is there already or there is none). */
function bsrInKernelMemory(a: Bsr): Bsr {
  const values = kernelResident(a.values);
  return values === a.values ? a : { ...a, rowPtr: kernelResident(a.rowPtr), colInd: kernelResident(a.colInd), values };
}

/**
 * One block Jacobi sweep on the points pts: t_i = b_i − Σ_j A_ij x_j for every i (all from the old
 * x), then x_i += D_ii⁻¹ t_i. From a zero guess the products are skipped. Twin: airRelax in
 * src/kernels/air.ts.
 */
export function airRelax(pts: Int32Array, a: Bsr, dinv: Float64Array, b: Float64Array, x: Float64Array, t: Float64Array, zeroGuess: boolean): void {
  const bs = a.bs, bb = bs * bs;
  const { rowPtr, colInd, values } = a;
  const k = wasmFor(pts, rowPtr, colInd, values);
  if (k !== null && wasmFor(dinv, b, x, t) !== null) {
    k.airRelax(pts.length, ptr(pts), bs, ptr(rowPtr), ptr(colInd), ptr(values), ptr(dinv), ptr(b), ptr(x), ptr(t), zeroGuess ? 1 : 0);
    return;
  }
  for (const i of pts) {
    const io = i * bs;
    for (let q = 0; q < bs; q++) t[io + q] = b[io + q];
    if (zeroGuess) continue;
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) blockMatVecSub(values, p * bb, bs, x, colInd[p] * bs, t, io);
  }
  for (const i of pts) {
    const io = i * bs;
    addScaledBlock(dinv, i * bb, bs, t, io, x, io);
  }
}

/** b_c = r_C + Z r_F (the restriction R = [Z I] applied to the residual). Twin: airRestrict in src/kernels/air.ts. */
export function airRestrict(cPoints: Int32Array, bs: number, zr: { rowPtr: Int32Array; colInd: Int32Array; values: Float64Array }, res: Float64Array, bc: Float64Array): void {
  const bb = bs * bs;
  const k = wasmFor(cPoints, zr.rowPtr, zr.colInd, zr.values);
  if (k !== null && wasmFor(res, bc) !== null) {
    k.airRestrict(cPoints.length, ptr(cPoints), bs, ptr(zr.rowPtr), ptr(zr.colInd), ptr(zr.values), ptr(res), ptr(bc));
    return;
  }
  for (let c = 0; c < cPoints.length; c++) {
    const i = cPoints[c];
    for (let q = 0; q < bs; q++) bc[c * bs + q] = res[i * bs + q];
    for (let p = zr.rowPtr[c]; p < zr.rowPtr[c + 1]; p++) addScaledBlock(zr.values, p * bb, bs, res, zr.colInd[p] * bs, bc, c * bs);
  }
}

/** x += P x_c: injection at the C points, then the one-point rule W at the F points (w null: injection only). Twin: airProlong in src/kernels/air.ts. */
export function airProlong(cPoints: Int32Array, fPoints: Int32Array, w: OnePoint | null, bs: number, xc: Float64Array, x: Float64Array): void {
  const bb = bs * bs;
  const k = wasmFor(cPoints, fPoints, xc, x);
  if (k !== null && (w === null || wasmFor(w.col, w.values) !== null)) {
    k.airProlong(cPoints.length, ptr(cPoints), fPoints.length, ptr(fPoints), w ? ptr(w.col) : 0, w ? ptr(w.values) : 0, bs, ptr(xc), ptr(x));
    return;
  }
  for (let c = 0; c < cPoints.length; c++) {
    const i = cPoints[c];
    for (let q = 0; q < bs; q++) x[i * bs + q] += xc[c * bs + q];
  }
  if (w === null) return;
  for (const f of fPoints) {
    const c = w.col[f];
    if (c < 0) continue;
    addScaledBlock(w.values, f * bb, bs, xc, c * bs, x, f * bs);
  }
}

function addScaledBlock(a: Float64Array, ao: number, bs: number, t: Float64Array, to: number, x: Float64Array, xo: number): void {
  for (let u = 0; u < bs; u++) {
    let sum = 0;
    const ro = ao + u * bs;
    for (let v = 0; v < bs; v++) sum += a[ro + v] * t[to + v];
    x[xo + u] += sum;
  }
}

function mapRow(fineOf: Int32Array | null, i: number): number {
  return fineOf ? fineOf[i] : i;
}

function firstNonFinite(a: Bsr, fineOf: Int32Array | null): number {
  const bb = a.bs * a.bs;
  for (let i = 0; i < a.nBlockRows; i++) {
    for (let p = a.rowPtr[i]; p < a.rowPtr[i + 1]; p++) if (!allFinite(a.values, p * bb, bb)) return mapRow(fineOf, i);
  }
  return 0;
}

/**
 * D⁻¹A with D the block diagonal of A (row i of blocks multiplied by A_ii⁻¹), and the inverses.
 * A zero pivot or a non-finite diagonal block fails naming the block row.
 */
function scaleByBlockDiagonal(name: string, a: Bsr): { matrix: Bsr; dinv: Float64Array } | { fail: SetupOutcome } {
  const { nBlockRows: nb, bs, rowPtr, colInd, values } = a;
  const bb = bs * bs;
  const diag = diagonalBlockIndex(a);
  const dinv = kernelF64(nb * bb);
  const work = kernelF64(bb);
  const piv = kernelI32(bs);
  const out = kernelF64(values.length);
  for (let i = 0; i < nb; i++) {
    if (diag[i] >= 0) work.set(values.subarray(diag[i] * bb, diag[i] * bb + bb)); else work.fill(0);
    const fail = factorBlock(name, i, work, 0, bs, piv, 0, 0);
    if (fail) return { fail };
    luInverse(work, 0, piv, 0, bs, dinv, i * bb);
    for (let p = rowPtr[i]; p < rowPtr[i + 1]; p++) blockGemm(out, p * bb, dinv, i * bb, values, p * bb, bs);
  }
  return { matrix: { nBlockRows: nb, nBlockCols: a.nBlockCols, bs, rowPtr, colInd, values: out }, dinv };
}
