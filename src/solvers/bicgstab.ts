import type { LinearOperator, ResidualCheck, SolveResult, Cause } from './types.js';
import { isSolved } from './types.js';
import type { KrylovOptions } from './options.js';
import { checkKrylovOptions, checkVectors } from './options.js';
import { applyWorkOf, residualInto, startResidual } from './operator.js';
import { addWork, vectorWork, zeroWork } from './work.js';
import { combineVotes, isStop, monitorVote, residualVote, residualsDisagree, type StopRule, type Vote } from './stopping.js';
import { buildResult, bytesOf, meterPreconditioner, relative, secondsSince } from './result.js';
import { axpy, bicgDirection, dot, norm2, waxpy } from './vector.js';
import { kernelF64 } from '../kernels-host/arena.js';

/**
 * BiCGStab with right preconditioning (van der Vorst, SIAM J. Sci. Stat. Comput. 13(2), 1992,
 * Alg. "preconditioned Bi-CGSTAB"; Barrett et al., Templates, 1994, Fig. 2.10).
 *
 * One iteration = two operator and two preconditioner applications. The watched residual is the
 * recursively updated r, which equals b − A x up to rounding (right preconditioning). When it says
 * "converged" the true residual is recomputed; if that does not confirm, the method starts again
 * from the true residual (a new shadow vector) and `restarts` counts those re-starts. Breakdown:
 * ρ = (r̂, r) = 0, (r̂, v) = 0 or ω = 0.
 */
export function bicgstab(A: LinearOperator, b: Float64Array, x: Float64Array, opts: KrylovOptions): SolveResult {
  const method = 'bicgstab';
  checkKrylovOptions(method, opts);
  const n = A.n;
  const M = opts.M;
  checkVectors(method, n, b, x, M);

  const r = kernelF64(n); // kernel memory when the solve has one (src/kernels-host)
  const rHat = kernelF64(n);
  const p = kernelF64(n);
  const v = kernelF64(n);
  const s = kernelF64(n);
  const t = kernelF64(n);
  const pHat = M ? kernelF64(n) : p;
  const sHat = M ? kernelF64(n) : s;
  const krylov = bytesOf({ r, rHat, p, v, s, t, pHat: M ? pHat : undefined, sHat: M ? sHat : undefined });
  const work = {};

  const meter = meterPreconditioner(M);
  const counts = zeroWork();
  const Aw = applyWorkOf(A);
  const t0 = performance.now();
  const history: number[] = [];
  const residualChecks: ResidualCheck[] = [];
  let residualMismatch = false;
  let iterations = 0;
  let restarts = 0;
  let failure: { message: string; blockRow?: number } | undefined;
  const rule: StopRule = { rtol: opts.rtol, atol: opts.atol, divergence: opts.divergence, referenceNorm: 0 };
  let trueNorm = 0;

  const finish = (cause: Cause): SolveResult => buildResult({
    method, M, cause, iterations, restarts, history, watched: 'plain', relativeTo: opts.relativeTo,
    referenceNorm: rule.referenceNorm, trueReferenceNorm: rule.referenceNorm, trueResidualNorm: trueNorm,
    residualChecks, residualMismatch, solveSeconds: secondsSince(t0), meter, krylov, work, counts, failure,
  });
  const stopMonitor = (): SolveResult => {
    failure = { message: 'stopped by the onIteration monitor' };
    return finish('iteration-budget');
  };

  const start = startResidual(A, b, x, r, opts.relativeTo, counts);
  trueNorm = start.trueNorm;
  if (start.stop) { history.push(trueNorm); return finish(start.stop); }
  rule.referenceNorm = start.trueBase;
  let rel = relative(trueNorm, rule.referenceNorm);
  history.push(rel);
  let vote: Vote = combineVotes(residualVote(rule, trueNorm), monitorVote(opts.onIteration, 0, rel));
  if (isStop(vote)) return vote === 'iteration-budget' ? stopMonitor() : finish(vote);
  if (opts.maxIterations === 0) return finish('iteration-budget');

  for (;;) {
    // (re)start from the residual in r
    rHat.set(r);
    let rho = 1, alpha = 1, omega = 1;
    p.fill(0);
    v.fill(0);
    addWork(counts, vectorWork.copy(n));
    addWork(counts, vectorWork.fill(n), 2);
    let rNorm = trueNorm;
    vote = 'continue';
    while (iterations < opts.maxIterations) {
      const rhoNew = dot(n, rHat, r);
      addWork(counts, vectorWork.dot(n));
      if (rhoNew === 0 || !Number.isFinite(rhoNew)) {
        vote = Number.isFinite(rhoNew) ? 'method-breakdown' : 'non-finite-value';
        failure = vote === 'method-breakdown' ? { message: 'bicgstab: (r̂, r) = 0' } : undefined;
        break;
      }
      const beta = (rhoNew / rho) * (alpha / omega);
      bicgDirection(n, r, beta, p, omega, v);
      if (M) meter.apply(p, pHat);
      A.apply(pHat, v);
      const rv = dot(n, rHat, v);
      addWork(counts, vectorWork.bicgstabDirection(n));
      addWork(counts, Aw);
      addWork(counts, vectorWork.dot(n));
      if (rv === 0 || !Number.isFinite(rv)) {
        vote = Number.isFinite(rv) ? 'method-breakdown' : 'non-finite-value';
        failure = vote === 'method-breakdown' ? { message: 'bicgstab: (r̂, A M⁻¹ p) = 0' } : undefined;
        break;
      }
      alpha = rhoNew / rv;
      waxpy(n, r, -alpha, v, s);
      const sNorm = norm2(n, s);
      addWork(counts, vectorWork.waxpy(n));
      addWork(counts, vectorWork.norm2(n));
      const sVote = residualVote(rule, sNorm);
      if (sVote === 'relative-target' || sVote === 'absolute-target') {
        // half step suffices: x ← x + α p̂ (counts as an iteration)
        axpy(n, alpha, pHat, x);
        r.set(s);
        addWork(counts, vectorWork.axpy(n));
        addWork(counts, vectorWork.copy(n));
        rNorm = sNorm;
        iterations++;
        rel = relative(rNorm, rule.referenceNorm);
        history.push(rel);
        vote = combineVotes(sVote, monitorVote(opts.onIteration, iterations, rel));
        break;
      }
      if (M) meter.apply(s, sHat);
      A.apply(sHat, t);
      const tt = dot(n, t, t);
      omega = tt > 0 ? dot(n, t, s) / tt : 0;
      axpy(n, alpha, pHat, x);
      axpy(n, omega, sHat, x);
      waxpy(n, s, -omega, t, r);
      rho = rhoNew;
      rNorm = norm2(n, r);
      // A ŝ, (t, t), (t, s), two updates of x, r ← s − ω t, ‖r‖ (ω's division is scalar)
      addWork(counts, Aw);
      addWork(counts, vectorWork.dot(n), 2);
      addWork(counts, vectorWork.axpy(n), 2);
      addWork(counts, vectorWork.waxpy(n));
      addWork(counts, vectorWork.norm2(n));
      iterations++;
      rel = relative(rNorm, rule.referenceNorm);
      history.push(rel);
      vote = combineVotes(residualVote(rule, rNorm), monitorVote(opts.onIteration, iterations, rel));
      if (!Number.isFinite(omega)) vote = 'non-finite-value';
      if (isStop(vote)) break;
      if (omega === 0) { vote = 'method-breakdown'; failure = { message: 'bicgstab: ω = 0 (stagnation)' }; break; }
    }
    const estimate = relative(rNorm, rule.referenceNorm);
    trueNorm = residualInto(A, b, x, r, counts);
    const trueRel = relative(trueNorm, rule.referenceNorm);
    residualChecks.push({ iteration: iterations, estimate, trueValue: trueRel });
    if (residualsDisagree(estimate, trueRel, opts.rtol)) residualMismatch = true;
    if (!Number.isFinite(trueNorm)) return finish('non-finite-value');
    if (vote === 'iteration-budget') return stopMonitor();
    if (isStop(vote) && !isSolved(vote)) return finish(vote);
    const trueVote = residualVote(rule, trueNorm);
    if (isStop(trueVote)) return finish(trueVote);
    if (iterations >= opts.maxIterations) return finish('iteration-budget');
    // recursive residual claimed convergence the true residual does not confirm: start again
    restarts++;
  }
}
