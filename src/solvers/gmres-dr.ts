import { UserError } from '../util/errors.js';
import type { LinearOperator, ResidualCheck, SolveResult, Cause } from './types.js';
import { isSolved } from './types.js';
import type { KrylovOptions } from './options.js';
import { checkDeflatedOptions, checkVectors } from './options.js';
import { applyWorkOf, residualInto, startResidual } from './operator.js';
import { addWork, kernel, vectorWork, zeroWork } from './work.js';
import { combineVotes, isStop, monitorVote, residualVote, residualsDisagree, type StopRule, type Vote } from './stopping.js';
import { buildResult, bytesOf, meterPreconditioner, relative, secondsSince } from './result.js';
import { isZero, norm2, scale } from './vector.js';
import { ritzValues } from './ritz.js';
import { harmonicRitz } from './harmonic-ritz.js';
import {
  addCorrection, applyRotations, backSolve, combine, newRotation, orthogonalize, rotateHessenbergColumn,
  rotationBytes, rotations, smallQr,
} from './arnoldi.js';
import { kernelF64 } from '../kernels-host/arena.js';

/** Happy breakdown threshold, as gmres.ts (Saad 2003, Prop. 6.10; common practice value). */
const HAPPY = 1e-14;
const MAX_BASIS_ENTRIES = 2 ** 32 - 1;

/**
 * GMRES with deflated restarting, GMRES-DR(m, k) (Morgan, "GMRES with deflated restarting",
 * SIAM J. Sci. Comput. 24(1), 2002, §3): restarted GMRES(m) that keeps k harmonic Ritz vectors of
 * the last cycle at each restart. The first cycle is GMRES(m). At its end, the k harmonic Ritz
 * vectors of smallest modulus, g_i of (H_m + h²_{m+1,m} H_m⁻ᵀ e_m e_mᵀ) g = θ g (src/solvers/
 * harmonic-ritz.ts), together with the cycle's least-squares residual vector c = βe₁ − H̄_m y, span
 * P_{k+1} ((m+1)×(k+1), orthonormalized); the next cycle starts from V_{k+1} = V_{m+1} P_{k+1},
 * H̄_k = P_{k+1}ᵀ H̄_m P_k (a full (k+1)×k block) and the residual's coordinates P_{k+1}ᵀ c, and adds
 * m − k Arnoldi vectors. Each cycle minimizes ‖b − A x‖ over a space holding approximate
 * eigenvectors, which removes the slowdown the small eigenvalues cause restarted GMRES.
 *
 * Conventions as gmres.ts: x holds x₀ on entry; right preconditioning only (the operator is
 * A M⁻¹, M fixed); iterations count new Arnoldi vectors (m − k per deflated cycle); the true
 * residual is recomputed at each restart and at the end (residualChecks). A deflated restart needs
 * the least-squares residual to represent the true one: when the two disagree by more than 10×
 * above rtol (rounding), or the harmonic Ritz problem is singular, that restart is a plain one from
 * the true residual. With k = 0 every restart is plain and the method is GMRES(m), step for step.
 * Never throws for numerical trouble: it ends with a Cause.
 */
export function gmresDr(A: LinearOperator, b: Float64Array, x: Float64Array, opts: KrylovOptions): SolveResult {
  const method = 'gmres-dr';
  const n = A.n;
  const M = opts.M;
  const { m, k } = checkDeflatedOptions(method, opts, n);
  checkVectors(method, n, b, x, M);
  if ((m + 1 + k + 1) * n > MAX_BASIS_ENTRIES) {
    throw new UserError(`${method}: option restart: a basis of ${m + k + 2} vectors of length ${n} is too large`);
  }

  // ---- setup ----
  const ldh = m + 1;
  const V = kernelF64((m + 1) * n);
  const vs: Float64Array[] = [];
  for (let j = 0; j <= m; j++) vs.push(V.subarray(j * n, (j + 1) * n));
  const Wd = k > 0 ? kernelF64((k + 1) * n) : undefined; // the new V_{k+1} = V_{m+1} P_{k+1}
  const ws: Float64Array[] = [];
  if (Wd) for (let j = 0; j <= k; j++) ws.push(Wd.subarray(j * n, (j + 1) * n));
  const H = new Float64Array(ldh * m); // H̄ as built (the deflated block, then Arnoldi columns)
  const R = new Float64Array(ldh * m); // H̄ rotated to triangular form
  const rot = rotations((k * (k + 1)) / 2 + m);
  const g = new Float64Array(m + 1);
  const rhs = new Float64Array(m + 1);
  const y = new Float64Array(m);
  const c = new Float64Array(m + 1);
  const hTmp = new Float64Array(m + 1);
  const P = new Float64Array((m + 1) * (k + 1));
  const HP = new Float64Array((m + 1) * k);
  const Rq = new Float64Array((k + 1) * (k + 1));
  const r = kernelF64(n);
  const w = kernelF64(n);
  const z = M ? kernelF64(n) : undefined;
  const krylov = bytesOf({ basis: V, deflationBasis: Wd, hessenberg: H, rotatedHessenberg: R });
  krylov.rotations = rotationBytes(rot) + g.byteLength + rhs.byteLength + y.byteLength + c.byteLength + hTmp.byteLength;
  if (k > 0) krylov.deflation = P.byteLength + HP.byteLength + Rq.byteLength;
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

  const finish = (cause: Cause): SolveResult => buildResult({
    method, M, cause, iterations, restarts, history, watched: 'plain',
    relativeTo: opts.relativeTo, referenceNorm: rule.referenceNorm, trueReferenceNorm: trueBase,
    trueResidualNorm: trueNorm, residualChecks, residualMismatch, solveSeconds: secondsSince(t0 + ritzMs), meter,
    krylov, work, counts, ritz, failure,
  });

  // ---- iteration 0 (as gmres.ts, right preconditioning) ----
  isZero(n, x);
  addWork(counts, vectorWork.scan(n));
  const start = startResidual(A, b, x, r, opts.relativeTo, counts);
  trueNorm = start.trueNorm;
  if (start.stop) { history.push(trueNorm); return finish(start.stop); }
  trueBase = start.trueBase;
  vs[0].set(r);
  addWork(counts, vectorWork.copy(n));
  let beta = trueNorm;
  rule.referenceNorm = trueBase;
  let rel = relative(beta, rule.referenceNorm);
  history.push(rel);
  let vote = combineVotes(residualVote(rule, beta), monitorVote(opts.onIteration, 0, rel));
  if (!Number.isFinite(trueNorm)) vote = 'non-finite-value';
  if (isStop(vote)) {
    if (vote === 'iteration-budget') failure = { message: 'stopped by the onIteration monitor' };
    return finish(vote);
  }
  if (opts.maxIterations === 0) return finish('iteration-budget');

  /** Deflated columns the next cycle starts with (0: a plain start from vs[0] = r). */
  let s = 0;
  for (let cycle = 0; ; cycle++) {
    rot.count = 0;
    if (s === 0) {
      scale(n, 1 / beta, vs[0]);
      addWork(counts, vectorWork.scale(n));
      rhs.fill(0);
      rhs[0] = beta;
    }
    g.set(rhs);
    // the deflated block H̄_k ((s+1)×s, full) reduced by rotations bottom-up in each column
    for (let j = 0; j < s; j++) {
      const hc = j * ldh;
      for (let i = 0; i <= s; i++) R[hc + i] = H[hc + i];
      const earlier = rot.count;
      applyRotations(rot, R, hc);
      for (let i = s - 1; i >= j; i--) newRotation(rot, R, hc, i, g);
      addWork(counts, kernel(6 * earlier + (s - j) * (3 + 2 + 6), 0));
    }
    let cols = s;
    let cycleVote: Vote = 'continue';
    let happy = false;
    for (let j = s; j < m; j++) {
      const next = vs[j + 1];
      if (!M) A.apply(vs[j], next);
      else { meter.apply(vs[j], z!); A.apply(z!, next); }
      addWork(counts, Aw);
      const hc = j * ldh;
      const wNorm0 = norm2(n, next);
      addWork(counts, vectorWork.norm2(n));
      const hNext = orthogonalize(n, vs, j + 1, next, H, hc, opts.orthogonalization, hTmp, counts);
      H[hc + j + 1] = hNext;
      for (let i = j + 2; i <= m; i++) H[hc + i] = 0;
      happy = !(hNext > HAPPY * wNorm0);
      if (!happy) { scale(n, 1 / hNext, next); addWork(counts, vectorWork.scale(n)); }
      for (let i = 0; i <= j + 1; i++) R[hc + i] = H[hc + i];
      const d = rotateHessenbergColumn(rot, R, hc, j, g, counts);
      iterations++;
      cols = j + 1;
      const estimate = Math.abs(g[j + 1]);
      rel = relative(estimate, rule.referenceNorm);
      history.push(rel);
      cycleVote = combineVotes(residualVote(rule, estimate), monitorVote(opts.onIteration, iterations, rel));
      if (!Number.isFinite(wNorm0) || !Number.isFinite(d)) cycleVote = 'non-finite-value';
      if (isStop(cycleVote) || happy || iterations >= opts.maxIterations) break;
    }
    if (wantRitz && cycle === 0) {
      const tr = performance.now();
      ritz = ritzValues(H, ldh, cols);
      ritzMs = performance.now() - tr;
    }
    if (cycleVote === 'non-finite-value') {
      trueNorm = residualInto(A, b, x, r, counts);
      return finish('non-finite-value');
    }
    const singularAt = backSolve(R, ldh, cols, g, y, counts);
    if (singularAt >= 0) {
      trueNorm = residualInto(A, b, x, r, counts);
      failure = { message: `${method}: the projected matrix is singular in the cycle ending at step ${iterations} (operator singular on the Krylov space)` };
      return finish('method-breakdown');
    }
    addCorrection(n, x, vs, y, cols, meter, M !== undefined, w, z, counts);

    trueNorm = residualInto(A, b, x, r, counts);
    residualChecks.push({ iteration: iterations, estimate: rel, trueValue: relative(trueNorm, trueBase) });
    if (residualsDisagree(rel, relative(trueNorm, rule.referenceNorm), opts.rtol)) residualMismatch = true;
    if (isStop(cycleVote) && !isSolved(cycleVote)) {
      if (cycleVote === 'iteration-budget') failure = { message: 'stopped by the onIteration monitor' };
      return finish(Number.isFinite(trueNorm) ? cycleVote : 'non-finite-value');
    }
    const recomputedVote = residualVote(rule, trueNorm);
    if (!Number.isFinite(trueNorm)) return finish('non-finite-value');
    if (isStop(recomputedVote)) return finish(recomputedVote);
    if (iterations >= opts.maxIterations) return finish('iteration-budget');
    restarts++;

    // ---- next start: deflated (k harmonic Ritz vectors + the residual), or plain from r ----
    s = k > 0 && cols === m && !happy ? deflate() : 0;
    if (s === 0) {
      vs[0].set(r);
      addWork(counts, vectorWork.copy(n));
      beta = trueNorm;
    }
  }

  /**
   * Build the deflated start from the finished full cycle (Morgan 2002, §3 steps 3–5); returns the
   * number of deflated columns, or 0 to restart plainly.
   */
  function deflate(): number {
    // c = rhs − H̄ y: the least-squares residual in the basis V_{m+1}
    for (let i = 0; i <= m; i++) c[i] = rhs[i];
    for (let j = 0; j < m; j++) for (let i = 0; i <= m; i++) c[i] -= H[j * ldh + i] * y[j];
    let cNorm = 0;
    for (let i = 0; i <= m; i++) cNorm += c[i] * c[i];
    cNorm = Math.sqrt(cNorm);
    if (residualsDisagree(relative(cNorm, rule.referenceNorm), relative(trueNorm, rule.referenceNorm), opts.rtol) || !(cNorm > 0)) return 0;
    const hr = harmonicRitz(H, ldh, m + 1, m, undefined, k);
    const kd = hr.k;
    if (kd === 0) return 0;
    // P_{k+1} = [P_k; 0] orthonormalized, then c against it
    const rows = m + 1;
    P.fill(0);
    for (let j = 0; j < kd; j++) for (let i = 0; i < m; i++) P[j * rows + i] = hr.p[j * m + i];
    for (let i = 0; i <= m; i++) P[kd * rows + i] = c[i];
    if (!smallQr(P, rows, kd + 1, Rq)) return 0;
    // coordinates of c in P_{k+1}: R's last column (c = P_{k+1} · Rq[:, kd])
    rhs.fill(0);
    for (let i = 0; i <= kd; i++) rhs[i] = Rq[kd * (kd + 1) + i];
    // H̄_new = P_{k+1}ᵀ H̄ P_k, (kd+1)×kd
    for (let j = 0; j < kd; j++) {
      for (let i = 0; i <= m; i++) {
        let sum = 0;
        for (let l = 0; l < m; l++) sum += H[l * ldh + i] * P[j * rows + l];
        HP[j * rows + i] = sum;
      }
    }
    const Hnew = new Float64Array((kd + 1) * kd);
    for (let j = 0; j < kd; j++) {
      for (let i = 0; i <= kd; i++) {
        let sum = 0;
        for (let l = 0; l <= m; l++) sum += P[i * rows + l] * HP[j * rows + l];
        Hnew[j * (kd + 1) + i] = sum;
      }
    }
    H.fill(0);
    for (let j = 0; j < kd; j++) for (let i = 0; i <= kd; i++) H[j * ldh + i] = Hnew[j * (kd + 1) + i];
    // V_{k+1} ← V_{m+1} P_{k+1}
    for (let j = 0; j <= kd; j++) combine(n, vs, P, j * rows, m + 1, ws[j], counts);
    for (let j = 0; j <= kd; j++) vs[j].set(ws[j]);
    addWork(counts, vectorWork.copy(n), kd + 1);
    return kd;
  }
}
