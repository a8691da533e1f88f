import { UserError } from '../util/errors.js';
import type { LinearOperator, ResidualCheck, SolveResult, Cause } from './types.js';
import { isSolved } from './types.js';
import type { KrylovOptions } from './options.js';
import { checkKrylovOptions, checkVectors } from './options.js';
import { applyWorkOf, residualInto, startResidual } from './operator.js';
import { addWork, kernel, vectorWork, zeroWork } from './work.js';
import { combineVotes, isStop, monitorVote, residualVote, residualsDisagree, type StopRule, type Vote } from './stopping.js';
import { buildResult, bytesOf, meterPreconditioner, relative, secondsSince } from './result.js';
import { axpy, axpyDot, axpyNorm2, dot, isZero, norm2, scale } from './vector.js';
import { ritzValues } from './ritz.js';
import { kernelF64 } from '../kernels-host/arena.js';

export type { KrylovOptions } from './options.js';

/**
 * Happy breakdown: h_{j+1,j} ≤ HAPPY·‖A z_j‖ means the Krylov space is (numerically) invariant and
 * the cycle's least-squares solution is exact (Saad 2003, Prop. 6.10). Common practice threshold.
 */
const HAPPY = 1e-14;

/** Largest basis we allocate: (m+1)·n doubles must fit a typed array. */
const MAX_BASIS_ENTRIES = 2 ** 32 - 1;

/**
 * Restarted GMRES(m) and flexible GMRES(m) (Saad & Schultz 1986; Saad 1993 for FGMRES; the
 * algorithm as in Saad, Iterative Methods for Sparse Linear Systems, 2nd ed. 2003, Alg. 6.9/9.5/9.6).
 *
 * - x holds x₀ on entry and the solution on return; b is never modified.
 * - Right preconditioning (default): minimizes ‖b − A x‖, so the watched residual is the plain one
 *   up to rounding. Left: minimizes ‖M⁻¹(b − A x)‖, and that left-preconditioned norm is watched.
 * - Flexible (opts.flexible): right only, stores Z_j = M⁻¹ v_j, so M may change between applications.
 * - Modified Gram–Schmidt (default) or classical Gram–Schmidt with one reorthogonalization ('cgs2',
 *   Giraud, Langou & Rozložník 2005); Givens rotations on the Hessenberg matrix.
 * - At each restart and at the end the true residual ‖b − A x‖ is recomputed and recorded beside the
 *   recursive estimate; the next cycle starts from the recomputed residual.
 * - maxIterations counts inner iterations in total; restarts counts cycles begun after the first.
 * Never throws for numerical trouble: it ends with a Cause.
 */
export function gmres(A: LinearOperator, b: Float64Array, x: Float64Array, opts: KrylovOptions): SolveResult {
  const flexible = opts.flexible === true;
  const method = flexible ? 'fgmres' : 'gmres';
  checkKrylovOptions(method, opts);
  const n = A.n;
  const M = opts.M;
  checkVectors(method, n, b, x, M);
  if (flexible && opts.side === 'left') throw new UserError('fgmres: option side: flexible GMRES preconditions on the right only');
  const left = opts.side === 'left' && M !== undefined;
  const m = Math.max(1, Math.min(opts.restart, n));
  if ((m + 1) * n > MAX_BASIS_ENTRIES) {
    throw new UserError(`${method}: option restart: a basis of ${m + 1} vectors of length ${n} is too large`);
  }

  // ---- setup: every buffer the iterations use ----
  const ldh = m + 1;
  // The basis vectors are allocated when first written (kernel memory when the solve has one,
  // src/kernels-host): a run that stops after k < m iterations holds k + 1 of the m + 1, and its
  // counted bytes are the ones it really touched. basisReserved is the full cycle's figure.
  const vs: Float64Array[] = [kernelF64(n)];
  const basisVector = (j: number): Float64Array => (vs[j] ??= kernelF64(n));
  const Z = flexible && M;
  const zs: Float64Array[] = [];
  const flexibleVector = (j: number): Float64Array => (zs[j] ??= kernelF64(n));
  const basisReserved = ((m + 1) + (Z ? m : 0)) * n * 8;
  const H = new Float64Array(ldh * m);
  const wantRitz = opts.ritz !== false;
  const Hraw = wantRitz ? new Float64Array(ldh * m) : undefined;
  const cs = new Float64Array(m);
  const sn = new Float64Array(m);
  const g = new Float64Array(m + 1);
  const y = new Float64Array(m);
  const hTmp = new Float64Array(m + 1);
  const r = kernelF64(n);
  const w = kernelF64(n);
  const z = M ? kernelF64(n) : undefined;
  /** The Krylov buffers held now: the basis vectors allocated so far, Hessenberg and rotations. */
  const krylovBytes = () => {
    const k = bytesOf({ hessenberg: H, ritzHessenberg: Hraw });
    k.basis = vs.length * n * 8;
    if (Z) k.flexibleBasis = zs.length * n * 8;
    k.rotations = cs.byteLength + sn.byteLength + g.byteLength + y.byteLength + hTmp.byteLength;
    return k;
  };
  const work = bytesOf({ residual: r, product: w, preconditioned: z });

  const meter = meterPreconditioner(M);
  // work counts: the solver's own products and vector operations (the preconditioner counts its own)
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

  const finish = (cause: Cause): SolveResult => buildResult({
    method, M, cause, iterations, restarts, history, watched: left ? 'left-preconditioned' : 'plain',
    relativeTo: opts.relativeTo, referenceNorm: rule.referenceNorm, trueReferenceNorm: trueBase,
    trueResidualNorm: trueNorm, residualChecks, residualMismatch, solveSeconds: secondsSince(t0 + ritzMs), meter,
    krylov: krylovBytes(), basisReserved, work, counts, ritz, failure,
  });


  // ---- iteration 0 ----
  const x0Zero = isZero(n, x);
  addWork(counts, vectorWork.scan(n));
  const start = startResidual(A, b, x, r, opts.relativeTo, counts);
  trueNorm = start.trueNorm;
  if (start.stop) { history.push(trueNorm); return finish(start.stop); }
  trueBase = start.trueBase;
  // beta: the watched residual norm; the cycle's first basis vector is built in vs[0].
  let beta: number;
  if (left) {
    meter.apply(r, vs[0]);
    beta = norm2(n, vs[0]);
    addWork(counts, vectorWork.norm2(n));
    if (opts.relativeTo === 'rhs') {
      if (x0Zero) rule.referenceNorm = beta;
      else { meter.apply(b, w); rule.referenceNorm = norm2(n, w); addWork(counts, vectorWork.norm2(n)); }
    } else rule.referenceNorm = beta;
    if (rule.referenceNorm === 0 && Number.isFinite(beta) && trueNorm > 0) {
      history.push(Infinity);
      failure = { message: 'the preconditioner maps the residual to zero' };
      return finish('method-breakdown');
    }
  } else {
    vs[0].set(r);
    addWork(counts, vectorWork.copy(n));
    beta = trueNorm;
    rule.referenceNorm = trueBase;
  }
  let rel = relative(beta, rule.referenceNorm);
  history.push(rel);
  let vote = combineVotes(residualVote(rule, beta), monitorVote(opts.onIteration, 0, rel));
  if (!Number.isFinite(trueNorm)) vote = 'non-finite-value';
  if (isStop(vote)) {
    if (vote === 'iteration-budget') failure = { message: 'stopped by the onIteration monitor' };
    return finish(vote);
  }
  if (opts.maxIterations === 0) return finish('iteration-budget');

  // ---- cycles ----
  for (let cycle = 0; ; cycle++) {
    scale(n, 1 / beta, vs[0]);
    addWork(counts, vectorWork.scale(n));
    g.fill(0);
    g[0] = beta;
    let k = 0;
    let cycleVote: Vote = 'continue';
    let estimate = beta;
    for (let j = 0; j < m; j++) {
      const vj = vs[j];
      const next = basisVector(j + 1);
      // next ← (preconditioned) operator applied to v_j
      if (!M) A.apply(vj, next);
      else if (left) { A.apply(vj, z!); meter.apply(z!, next); }
      else if (Z) { const zj = flexibleVector(j); meter.apply(vj, zj); A.apply(zj, next); }
      else { meter.apply(vj, z!); A.apply(z!, next); }
      addWork(counts, Aw);
      const hc = j * ldh;
      const wNorm0 = norm2(n, next);
      addWork(counts, vectorWork.norm2(n));
      let hNext: number;
      if (opts.orthogonalization === 'mgs') {
        // modified Gram–Schmidt; each update is fused with the next dot product (same arithmetic)
        let hij = dot(n, next, vs[0]);
        for (let i = 0; i < j; i++) {
          H[hc + i] = hij;
          hij = axpyDot(n, -hij, vs[i], next, vs[i + 1]);
        }
        H[hc + j] = hij;
        hNext = axpyNorm2(n, -hij, vs[j], next);
        addWork(counts, vectorWork.dot(n));
        addWork(counts, vectorWork.axpyDot(n), j);
        addWork(counts, vectorWork.axpyNorm2(n));
      } else {
        // classical Gram–Schmidt, twice ("twice is enough", Giraud, Langou & Rozložník 2005)
        for (let i = 0; i <= j; i++) H[hc + i] = 0;
        for (let pass = 0; pass < 2; pass++) {
          for (let i = 0; i <= j; i++) hTmp[i] = dot(n, next, vs[i]);
          for (let i = 0; i <= j; i++) { axpy(n, -hTmp[i], vs[i], next); H[hc + i] += hTmp[i]; }
        }
        hNext = norm2(n, next);
        addWork(counts, vectorWork.dot(n), 2 * (j + 1));
        addWork(counts, vectorWork.axpy(n), 2 * (j + 1));
        addWork(counts, kernel(2 * (j + 1), 0)); // H += hTmp
        addWork(counts, vectorWork.norm2(n));
      }
      H[hc + j + 1] = hNext;
      if (Hraw && cycle === 0) for (let i = 0; i <= j + 1; i++) Hraw[hc + i] = H[hc + i];
      const happy = !(hNext > HAPPY * wNorm0);
      if (!happy) { scale(n, 1 / hNext, next); addWork(counts, vectorWork.scale(n)); }
      // previous rotations, then a new one that zeroes H[j+1, j]
      for (let i = 0; i < j; i++) {
        const a = H[hc + i], c = H[hc + i + 1];
        H[hc + i] = cs[i] * a + sn[i] * c;
        H[hc + i + 1] = -sn[i] * a + cs[i] * c;
      }
      const a = H[hc + j], c = H[hc + j + 1];
      const d = Math.hypot(a, c);
      if (d === 0) { cs[j] = 1; sn[j] = 0; } else { cs[j] = a / d; sn[j] = c / d; }
      H[hc + j] = d;
      H[hc + j + 1] = 0;
      g[j + 1] = -sn[j] * g[j];
      g[j] = cs[j] * g[j];
      // Givens: 6 flops per earlier rotation applied; the new one: hypot (2 mul + 1 add), cs and sn
      // (2 divisions unless d = 0), the two updates of g (2 mul)
      addWork(counts, kernel(6 * j + 3 + (d === 0 ? 0 : 2) + 2, 0));
      iterations++;
      k = j + 1;
      estimate = Math.abs(g[j + 1]);
      rel = relative(estimate, rule.referenceNorm);
      history.push(rel);
      cycleVote = combineVotes(residualVote(rule, estimate), monitorVote(opts.onIteration, iterations, rel));
      if (!Number.isFinite(wNorm0) || !Number.isFinite(d)) cycleVote = 'non-finite-value';
      if (isStop(cycleVote) || happy || iterations >= opts.maxIterations) break;
    }

    if (Hraw && cycle === 0) {
      // Ritz values are a report, not part of the solve: their time is left out of solveSeconds
      const tr = performance.now();
      ritz = ritzValues(Hraw, ldh, k);
      ritzMs = performance.now() - tr;
    }
    if (cycleVote === 'non-finite-value') {
      // keep x from the cycle start: this cycle's basis holds NaN/Inf
      trueNorm = residualInto(A, b, x, r, counts);
      return finish('non-finite-value');
    }
    // y ← R⁻¹ g (R = rotated H, upper triangular k×k)
    let singularAt = -1;
    for (let i = k - 1; i >= 0; i--) {
      let s = g[i];
      for (let l = i + 1; l < k; l++) s -= H[l * ldh + i] * y[l];
      const rii = H[i * ldh + i];
      if (!(Math.abs(rii) > 0)) { singularAt = i; break; }
      y[i] = s / rii;
    }
    // back substitution: row i has k−1−i multiply-subtracts and one division
    addWork(counts, kernel(singularAt >= 0 ? (k - singularAt) * (k - singularAt) - 1 : k * k, 0));
    if (singularAt >= 0) {
      trueNorm = residualInto(A, b, x, r, counts);
      failure = { message: `${method}: the Hessenberg matrix is singular at step ${iterations - k + singularAt + 1} (operator singular on the Krylov space)` };
      return finish('method-breakdown');
    }
    // x ← x + (preconditioned) basis · y
    if (Z) {
      for (let l = 0; l < k; l++) axpy(n, y[l], zs[l], x);
      addWork(counts, vectorWork.axpy(n), k);
    } else if (M && !left) {
      w.fill(0);
      for (let l = 0; l < k; l++) axpy(n, y[l], vs[l], w);
      meter.apply(w, z!);
      axpy(n, 1, z!, x);
      addWork(counts, vectorWork.fill(n));
      addWork(counts, vectorWork.axpy(n), k + 1);
    } else {
      for (let l = 0; l < k; l++) axpy(n, y[l], vs[l], x);
      addWork(counts, vectorWork.axpy(n), k);
    }

    // true residual beside the recursive estimate; the next cycle starts from it
    trueNorm = residualInto(A, b, x, r, counts);
    let watchedNow = trueNorm;
    const check: ResidualCheck = {
      iteration: iterations, estimate: rel, trueValue: relative(trueNorm, trueBase),
    };
    if (left) {
      meter.apply(r, vs[0]);
      watchedNow = norm2(n, vs[0]);
      addWork(counts, vectorWork.norm2(n));
      check.watchedValue = relative(watchedNow, rule.referenceNorm);
    } else {
      vs[0].set(r);
      addWork(counts, vectorWork.copy(n));
    }
    residualChecks.push(check);
    if (residualsDisagree(rel, relative(watchedNow, rule.referenceNorm), opts.rtol)) residualMismatch = true;

    if (isStop(cycleVote) && !isSolved(cycleVote)) {
      if (cycleVote === 'iteration-budget') failure = { message: 'stopped by the onIteration monitor' };
      return finish(Number.isFinite(trueNorm) ? cycleVote : 'non-finite-value');
    }
    // the recomputed residual decides: a recursive "converged" it does not confirm means continue
    const recomputedVote = residualVote(rule, watchedNow);
    if (!Number.isFinite(trueNorm)) return finish('non-finite-value');
    if (isStop(recomputedVote)) return finish(recomputedVote);
    if (iterations >= opts.maxIterations) return finish('iteration-budget');
    beta = watchedNow;
    restarts++;
  }
}
