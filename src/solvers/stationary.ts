import type { LinearOperator, SolveResult, Cause } from './types.js';
import type { KrylovOptions } from './options.js';
import { checkKrylovOptions, checkVectors } from './options.js';
import { residualInto, startResidual } from './operator.js';
import { addWork, vectorWork, zeroWork } from './work.js';
import { combineVotes, isStop, monitorVote, residualVote, type StopRule, type Vote } from './stopping.js';
import { buildResult, bytesOf, meterPreconditioner, relative, secondsSince } from './result.js';
import { axpy } from './vector.js';
import { kernelF64 } from '../kernels-host/arena.js';

/**
 * Stationary (preconditioned Richardson) iteration x ← x + ω M⁻¹(b − A x) (Young 1971; Saad 2003,
 * §4.1). With M = point/block Jacobi this is the Jacobi iteration, with M = a forward block
 * Gauss–Seidel sweep (relaxation inside M) it is block Gauss–Seidel/SOR, with symmetric sweeps SSOR.
 * Without M it is plain Richardson iteration. The residual b − A x is recomputed every step, so the
 * watched residual is the plain one. One iteration = one operator and one preconditioner application.
 */
export function stationary(A: LinearOperator, b: Float64Array, x: Float64Array, opts: KrylovOptions): SolveResult {
  const method = 'stationary';
  checkKrylovOptions(method, opts);
  const n = A.n;
  const M = opts.M;
  checkVectors(method, n, b, x, M);
  const omega = opts.omega ?? 1;

  const r = kernelF64(n); // kernel memory when the solve has one (src/kernels-host)
  const z = kernelF64(n);
  const krylov = {};
  const work = bytesOf({ residual: r, correction: z });
  const meter = meterPreconditioner(M);
  const counts = zeroWork();
  const t0 = performance.now();
  const history: number[] = [];
  let iterations = 0;
  let failure: { message: string; blockRow?: number } | undefined;
  const rule: StopRule = { rtol: opts.rtol, atol: opts.atol, divergence: opts.divergence, referenceNorm: 0 };
  let trueNorm = 0;

  const finish = (cause: Cause): SolveResult => buildResult({
    method, M, cause, iterations, restarts: 0, history, watched: 'plain', relativeTo: opts.relativeTo,
    referenceNorm: rule.referenceNorm, trueReferenceNorm: rule.referenceNorm, trueResidualNorm: trueNorm,
    residualChecks: [{ iteration: iterations, estimate: history[history.length - 1], trueValue: relative(trueNorm, rule.referenceNorm) }],
    residualMismatch: false, solveSeconds: secondsSince(t0), meter, krylov, work, counts, failure,
  });

  const start = startResidual(A, b, x, r, opts.relativeTo, counts);
  trueNorm = start.trueNorm;
  if (start.stop) { history.push(trueNorm); return finish(start.stop); }
  rule.referenceNorm = start.trueBase;
  let rel = relative(trueNorm, rule.referenceNorm);
  history.push(rel);
  let vote: Vote = combineVotes(residualVote(rule, trueNorm), monitorVote(opts.onIteration, 0, rel));
  while (!isStop(vote) && iterations < opts.maxIterations) {
    meter.apply(r, z);
    if (!M) addWork(counts, vectorWork.copy(n)); // the meter copies r into z
    axpy(n, omega, z, x);
    addWork(counts, vectorWork.axpy(n));
    trueNorm = residualInto(A, b, x, r, counts);
    iterations++;
    rel = relative(trueNorm, rule.referenceNorm);
    history.push(rel);
    vote = combineVotes(residualVote(rule, trueNorm), monitorVote(opts.onIteration, iterations, rel));
  }
  if (vote === 'iteration-budget') failure = { message: 'stopped by the onIteration monitor' };
  return finish(isStop(vote) ? vote : 'iteration-budget');
}
