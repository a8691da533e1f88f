import { UserError } from '../util/errors.js';
import type { LinearOperator, ResidualCheck, SolveResult, Cause } from './types.js';
import { isSolved } from './types.js';
import type { KrylovCarry, KrylovOptions } from './options.js';
import { checkDeflatedOptions, checkVectors } from './options.js';
import { applyWorkOf, residualInto, startResidual } from './operator.js';
import { addWork, vectorWork, zeroWork } from './work.js';
import { combineVotes, isStop, monitorVote, residualVote, residualsDisagree, type StopRule, type Vote } from './stopping.js';
import { buildResult, bytesOf, meterPreconditioner, relative, secondsSince } from './result.js';
import { axpy, dot, isZero, norm2, scale } from './vector.js';
import { ritzValues } from './ritz.js';
import { harmonicRitz } from './harmonic-ritz.js';
import {
  addCorrection, backSolve, combine, orthogonalize, project, rotateHessenbergColumn, rotationBytes, rotations, smallQr,
} from './arnoldi.js';
import { kernelF64 } from '../kernels-host/arena.js';

const HAPPY = 1e-14;
const MAX_BASIS_ENTRIES = 2 ** 32 - 1;

/** What GCRO-DR keeps in KrylovCarry.recycle between the solves of a sequence (JavaScript heap). */
export interface GcroDrRecycle {
  method: 'gcro-dr';
  /** Vector length. */
  n: number;
  /** Number of vectors. */
  k: number;
  /** U_k, k vectors of length n one after another (the recycled search space, preconditioned variable). */
  u: Float64Array;
}

/** The carried space if it fits this solve (same length, finite), else undefined. */
export function carriedSpace(carry: KrylovCarry | undefined, n: number): GcroDrRecycle | undefined {
  const c = carry?.recycle as Partial<GcroDrRecycle> | undefined;
  if (!c || c.method !== 'gcro-dr' || c.n !== n || !Number.isInteger(c.k) || !(c.k! > 0)) return undefined;
  if (!(c.u instanceof Float64Array) || c.u.length !== c.k! * n) return undefined;
  return c as GcroDrRecycle;
}

/**
 * GCRO-DR(m, k) (Parks, de Sturler, Mackey, Johnson & Maiti, "Recycling Krylov subspaces for
 * sequences of linear systems", SIAM J. Sci. Comput. 28(5), 2006, Algorithm 2), right-preconditioned
 * (operator Ã = A M⁻¹, M fixed within a solve). It keeps U_k and C_k = Ã U_k with orthonormal
 * columns. Each cycle runs m − k Arnoldi steps with (I − C Cᵀ) Ã, giving (I − C Cᵀ) Ã V = V̄ H̄ and
 * B = Cᵀ Ã V, and minimizes the residual over range([Ũ V]) (Ũ = U D, D scaling U's columns to unit
 * length) through Ḡ = [D B; 0 H̄]. After the cycle the k harmonic Ritz vectors of smallest
 * modulus of Ã over that space, Ḡᵀ Ḡ z = θ Ḡᵀ V̂ᵀ Ŵ z (src/solvers/harmonic-ritz.ts), replace U_k,
 * and C_k = V̂ Q with Ḡ P = Q R, U_k = Ŵ P R⁻¹.
 *
 * Across a sequence: opts.carry.recycle holds U_k from the previous solve. At the start of a solve
 * it is re-fitted to the current operator as the algorithm says for a changed matrix: C = Ã U
 * (k products and k preconditioner applications, counted), thin QR C = Q R, C ← Q, U ← U R⁻¹,
 * then x ← x + U Cᵀ r and r ← r − C Cᵀ r. (The carry cannot tell an unchanged matrix from a changed
 * one, so this is done every time.) At the end the last cycle's harmonic Ritz vectors are stored
 * back (a copy on the JavaScript heap). Without a carry, or with one of another length, the first
 * cycle is GMRES(m) and the method is GMRES-DR's equivalent for one system (Parks et al. §3).
 *
 * Conventions as gmres.ts: iterations count Arnoldi vectors; the true residual is recomputed at
 * each restart and at the end, and the next cycle starts from it. Never throws for numerical
 * trouble: it ends with a Cause.
 */
export function gcroDr(A: LinearOperator, b: Float64Array, x: Float64Array, opts: KrylovOptions): SolveResult {
  const method = 'gcro-dr';
  const n = A.n;
  const M = opts.M;
  const hasM = M !== undefined;
  const { m, k } = checkDeflatedOptions(method, opts, n);
  checkVectors(method, n, b, x, M);
  if ((m + 1 + 4 * k) * n > MAX_BASIS_ENTRIES) {
    throw new UserError(`${method}: option restart: a basis of ${m + 1 + 4 * k} vectors of length ${n} is too large`);
  }
  const ortho = opts.orthogonalization;

  // ---- setup ----
  const rows = m + 1; // leading dimension of the small matrices
  const V = kernelF64((m + 1) * n);
  const vs = views(V, m + 1, n);
  const bufs = k > 0 ? [kernelF64(k * n), kernelF64(k * n), kernelF64(k * n), kernelF64(k * n)] : [];
  let us = k > 0 ? views(bufs[0], k, n) : [];
  let cs = k > 0 ? views(bufs[1], k, n) : [];
  let ys = k > 0 ? views(bufs[2], k, n) : [];
  let cnew = k > 0 ? views(bufs[3], k, n) : [];
  const G = new Float64Array(rows * m); // Ḡ as built
  const R = new Float64Array(rows * m); // Ḡ rotated
  const T = new Float64Array(rows * m); // V̂ᵀ Ŵ for the harmonic Ritz problem
  const D = new Float64Array(Math.max(k, 1));
  const rot = rotations(m);
  const g = new Float64Array(m + 1);
  const y = new Float64Array(m);
  const hTmp = new Float64Array(m + 1);
  const GP = new Float64Array(rows * Math.max(k, 1));
  const Rs = new Float64Array(Math.max(k, 1) * Math.max(k, 1));
  const coef = new Float64Array(Math.max(k, 1));
  const r = kernelF64(n);
  const w = kernelF64(n);
  const z = M ? kernelF64(n) : undefined;
  const krylov = bytesOf({ basis: V, recycledU: bufs[0], recycledC: bufs[1], newU: bufs[2], newC: bufs[3], projected: G, rotatedProjected: R, harmonicRitz: T });
  krylov.rotations = rotationBytes(rot) + g.byteLength + y.byteLength + hTmp.byteLength + D.byteLength
    + GP.byteLength + Rs.byteLength + coef.byteLength;
  const work = bytesOf({ residual: r, product: w, preconditioned: z });

  const meter = meterPreconditioner(M);
  const counts = zeroWork();
  const Aw = applyWorkOf(A);
  const t0 = performance.now();
  const history: number[] = [];
  const residualChecks: ResidualCheck[] = [];
  let residualMismatch = false;
  let iterations = 0;
  let restarts = 0;
  let ritz: { re: number[]; im: number[] } | undefined;
  let failure: { message: string; blockRow?: number } | undefined;
  const rule: StopRule = { rtol: opts.rtol, atol: opts.atol, divergence: opts.divergence, referenceNorm: 0 };
  let trueBase = 0;
  let trueNorm = 0;
  let ritzMs = 0;
  const wantRitz = opts.ritz !== false;
  /** Recycled vectors in us/cs now. */
  let kc = 0;

  /** Store U for the next solve of the sequence (a heap copy: kernel memory is released after the solve). */
  const store = (vecs: Float64Array[], count: number): void => {
    if (!opts.carry || count === 0) return;
    const u = new Float64Array(count * n);
    for (let i = 0; i < count; i++) u.set(vecs[i].subarray(0, n), i * n);
    addWork(counts, vectorWork.copy(n), count);
    opts.carry.recycle = { method, n, k: count, u } satisfies GcroDrRecycle;
  };
  const finish = (cause: Cause, keep = true): SolveResult => {
    if (keep && Number.isFinite(trueNorm)) store(us, kc);
    return buildResult({
      method, M, cause, iterations, restarts, history, watched: 'plain',
      relativeTo: opts.relativeTo, referenceNorm: rule.referenceNorm, trueReferenceNorm: trueBase,
      trueResidualNorm: trueNorm, residualChecks, residualMismatch, solveSeconds: secondsSince(t0 + ritzMs), meter,
      krylov, work, counts, ritz, failure,
    });
  };

  // ---- iteration 0 ----
  isZero(n, x);
  addWork(counts, vectorWork.scan(n));
  const start = startResidual(A, b, x, r, opts.relativeTo, counts);
  trueNorm = start.trueNorm;
  if (start.stop) { history.push(trueNorm); return finish(start.stop, false); }
  trueBase = start.trueBase;
  rule.referenceNorm = trueBase;
  let beta = trueNorm;
  let rel = relative(beta, rule.referenceNorm);
  history.push(rel);
  let vote = combineVotes(residualVote(rule, beta), monitorVote(opts.onIteration, 0, rel));
  if (!Number.isFinite(trueNorm)) vote = 'non-finite-value';
  if (isStop(vote)) {
    if (vote === 'iteration-budget') failure = { message: 'stopped by the onIteration monitor' };
    return finish(vote, vote !== 'non-finite-value');
  }

  // ---- the carried space, fitted to this operator: C = Ã U = Q R, C ← Q, U ← U R⁻¹; x += U Cᵀ r ----
  const carried = k > 0 ? carriedSpace(opts.carry, n) : undefined;
  if (carried) {
    const kIn = Math.min(carried.k, k);
    for (let i = 0; i < kIn; i++) us[i].set(carried.u.subarray(i * n, (i + 1) * n));
    addWork(counts, vectorWork.copy(n), kIn);
    kc = fitRecycled(kIn);
    if (kc > 0) {
      for (let i = 0; i < kc; i++) coef[i] = dot(n, cs[i], r);
      addWork(counts, vectorWork.dot(n), kc);
      addCorrection(n, x, us, coef, kc, meter, hasM, w, z, counts);
      for (let i = 0; i < kc; i++) axpy(n, -coef[i], cs[i], r);
      addWork(counts, vectorWork.axpy(n), kc);
      beta = norm2(n, r);
      addWork(counts, vectorWork.norm2(n));
      if (!Number.isFinite(beta)) { trueNorm = residualInto(A, b, x, r, counts); return finish('non-finite-value', false); }
      if (isStop(residualVote(rule, beta))) {
        // the projection alone may meet the target: confirm with the true residual
        trueNorm = residualInto(A, b, x, r, counts);
        residualChecks.push({ iteration: 0, estimate: relative(beta, rule.referenceNorm), trueValue: relative(trueNorm, trueBase) });
        const v = residualVote(rule, trueNorm);
        if (isStop(v)) return finish(v);
        beta = trueNorm;
      }
    }
  }
  if (opts.maxIterations === 0) return finish('iteration-budget');

  // ---- cycles ----
  for (let cycle = 0; ; cycle++) {
    const steps = m - kc;
    vs[0].set(r);
    scale(n, 1 / beta, vs[0]);
    addWork(counts, vectorWork.copy(n));
    addWork(counts, vectorWork.scale(n));
    rot.count = 0;
    g.fill(0);
    g[kc] = beta;
    G.fill(0);
    R.fill(0);
    for (let i = 0; i < kc; i++) {
      D[i] = 1 / norm2(n, us[i]);
      G[i * rows + i] = D[i];
      R[i * rows + i] = D[i];
    }
    addWork(counts, vectorWork.norm2(n), kc);
    let done = 0;
    let cycleVote: Vote = 'continue';
    let happy = false;
    for (let j = 0; j < steps; j++) {
      const next = vs[j + 1];
      if (!M) A.apply(vs[j], next);
      else { meter.apply(vs[j], z!); A.apply(z!, next); }
      addWork(counts, Aw);
      const col = (kc + j) * rows;
      const wNorm0 = norm2(n, next);
      addWork(counts, vectorWork.norm2(n));
      project(n, cs, kc, next, G, col, ortho, hTmp, counts); // B column: Cᵀ Ã v_j
      const hNext = orthogonalize(n, vs, j + 1, next, G, col + kc, ortho, hTmp, counts);
      G[col + kc + j + 1] = hNext;
      happy = !(hNext > HAPPY * wNorm0);
      if (!happy) { scale(n, 1 / hNext, next); addWork(counts, vectorWork.scale(n)); }
      for (let i = 0; i <= kc + j + 1; i++) R[col + i] = G[col + i];
      const d = rotateHessenbergColumn(rot, R, col, kc + j, g, counts);
      iterations++;
      done = j + 1;
      const estimate = Math.abs(g[kc + j + 1]);
      rel = relative(estimate, rule.referenceNorm);
      history.push(rel);
      cycleVote = combineVotes(residualVote(rule, estimate), monitorVote(opts.onIteration, iterations, rel));
      if (!Number.isFinite(wNorm0) || !Number.isFinite(d)) cycleVote = 'non-finite-value';
      if (isStop(cycleVote) || happy || iterations >= opts.maxIterations) break;
    }
    const cols = kc + done;
    if (wantRitz && cycle === 0 && kc === 0) {
      const tr = performance.now();
      ritz = ritzValues(G, rows, cols);
      ritzMs = performance.now() - tr;
    }
    if (cycleVote === 'non-finite-value') {
      trueNorm = residualInto(A, b, x, r, counts);
      return finish('non-finite-value', false);
    }
    const singularAt = backSolve(R, rows, cols, g, y, counts);
    if (singularAt >= 0) {
      trueNorm = residualInto(A, b, x, r, counts);
      failure = { message: `${method}: the projected matrix is singular in the cycle ending at step ${iterations} (operator singular on the search space)` };
      return finish('method-breakdown');
    }
    // x ← x + M⁻¹ (Ũ y_U + V y_V), Ũ = U D
    for (let i = 0; i < kc; i++) y[i] *= D[i];
    const search = [...us.slice(0, kc), ...vs.slice(0, done)];
    addCorrection(n, x, search, y, cols, meter, hasM, w, z, counts);
    for (let i = 0; i < kc; i++) y[i] /= D[i];

    trueNorm = residualInto(A, b, x, r, counts);
    residualChecks.push({ iteration: iterations, estimate: rel, trueValue: relative(trueNorm, trueBase) });
    if (residualsDisagree(rel, relative(trueNorm, rule.referenceNorm), opts.rtol)) residualMismatch = true;
    let stop: Cause | undefined;
    if (isStop(cycleVote) && !isSolved(cycleVote)) {
      if (cycleVote === 'iteration-budget') failure = { message: 'stopped by the onIteration monitor' };
      stop = Number.isFinite(trueNorm) ? cycleVote : 'non-finite-value';
    } else if (!Number.isFinite(trueNorm)) stop = 'non-finite-value';
    else {
      const recomputedVote = residualVote(rule, trueNorm);
      if (isStop(recomputedVote)) stop = recomputedVote;
      else if (iterations >= opts.maxIterations) stop = 'iteration-budget';
    }
    if (stop === 'non-finite-value') return finish(stop, false);
    // the new recycled space from this cycle: needed for the next cycle, or (at the end) for the next solve
    if (k > 0 && (stop === undefined || opts.carry)) updateRecycled(cols, done, stop === undefined);
    if (stop !== undefined) return finish(stop);
    restarts++;
    beta = trueNorm;
  }

  /**
   * C_i ← Ã U_i for i < kIn, then C = Q R (modified Gram–Schmidt, counted), C ← Q, U ← U R⁻¹.
   * A vector whose product is dependent on the earlier ones ends the space there. Returns the count kept.
   */
  function fitRecycled(kIn: number): number {
    for (let i = 0; i < kIn; i++) {
      if (!M) A.apply(us[i], cs[i]);
      else { meter.apply(us[i], z!); A.apply(z!, cs[i]); }
      addWork(counts, Aw);
    }
    for (let i = 0; i < kIn; i++) {
      const before = norm2(n, cs[i]);
      addWork(counts, vectorWork.norm2(n));
      project(n, cs, i, cs[i], Rs, i * k, ortho, hTmp, counts);
      const rii = norm2(n, cs[i]);
      addWork(counts, vectorWork.norm2(n));
      if (!(rii > 1e-12 * before) || !Number.isFinite(rii)) return i;
      scale(n, 1 / rii, cs[i]);
      addWork(counts, vectorWork.scale(n));
      // U_i ← (U_i − Σ_{l<i} R_{l,i} U_l) / R_{i,i}, the U_l already replaced
      for (let l = 0; l < i; l++) axpy(n, -Rs[i * k + l], us[l], us[i]);
      scale(n, 1 / rii, us[i]);
      addWork(counts, vectorWork.axpy(n), i);
      addWork(counts, vectorWork.scale(n));
    }
    return kIn;
  }

  /**
   * Harmonic Ritz vectors of the finished cycle (Parks et al. 2006, Algorithm 2, steps 25–28):
   * T = V̂ᵀ Ŵ, P from Ḡᵀ Ḡ z = θ Ḡᵀ T z, Ỹ = Ŵ P; with `next`, also Ḡ P = Q R, C ← V̂ Q, U ← Ỹ R⁻¹.
   * Without `next` (the solve ends) only the span matters: U ← Ỹ. A singular problem keeps the old space.
   */
  function updateRecycled(cols: number, done: number, next: boolean): void {
    if (cols < 1) return;
    const vhat = [...cs.slice(0, kc), ...vs.slice(0, done + 1)]; // V̂ = [C V_{done+1}]
    const what = [...us.slice(0, kc), ...vs.slice(0, done)]; // Ŵ = [Ũ V_done] (Ũ = U D)
    T.fill(0);
    for (let i = 0; i < kc; i++) {
      for (let l = 0; l < kc + done + 1; l++) T[i * rows + l] = D[i] * dot(n, vhat[l], us[i]);
    }
    addWork(counts, vectorWork.dot(n), kc * (kc + done + 1));
    for (let j = 0; j < done; j++) T[(kc + j) * rows + kc + j] = 1;
    const hr = harmonicRitz(G, rows, cols + 1, cols, T, Math.min(k, cols));
    const kn = hr.k;
    if (kn === 0) return;
    // Ỹ = Ŵ P (the Ũ part takes D)
    for (let j = 0; j < kn; j++) {
      for (let i = 0; i < kc; i++) hTmp[i] = D[i] * hr.p[j * cols + i];
      for (let i = kc; i < cols; i++) hTmp[i] = hr.p[j * cols + i];
      combine(n, what, hTmp, 0, cols, ys[j], counts);
    }
    if (next) {
      // Ḡ P = Q R (small), C_new = V̂ Q, U_new = Ỹ R⁻¹
      const gr = cols + 1;
      for (let j = 0; j < kn; j++) {
        for (let i = 0; i < gr; i++) {
          let s = 0;
          for (let l = 0; l < cols; l++) s += G[l * rows + i] * hr.p[j * cols + l];
          GP[j * gr + i] = s;
        }
      }
      if (!smallQr(GP, gr, kn, Rs)) return;
      for (let j = 0; j < kn; j++) combine(n, vhat, GP, j * gr, gr, cnew[j], counts);
      for (let j = 0; j < kn; j++) {
        for (let l = 0; l < j; l++) axpy(n, -Rs[j * kn + l], ys[l], ys[j]);
        scale(n, 1 / Rs[j * kn + j], ys[j]);
        addWork(counts, vectorWork.axpy(n), j);
        addWork(counts, vectorWork.scale(n));
      }
      [cs, cnew] = [cnew, cs];
    }
    [us, ys] = [ys, us];
    kc = kn;
  }
}

function views(buf: Float64Array, count: number, n: number): Float64Array[] {
  const out: Float64Array[] = [];
  for (let j = 0; j < count; j++) out.push(buf.subarray(j * n, (j + 1) * n));
  return out;
}
