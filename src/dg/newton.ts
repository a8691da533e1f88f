import type { Bsr } from '../sparse/types.js';
import { UserError } from '../util/errors.js';
import { assembleDg, type Discretization } from './assemble.js';
import { addPseudoTimeTerm } from './pseudo-time.js';
import { solveBySlabs, type SlabSolveOptions } from './slab-solve.js';

/**
 * Newton's method on the space-time DG residual R(U) = 0 of a nonlinear physics (Euler, Burgers):
 * at each iterate assemble R(U_k) and its exact Jacobian J_k (assembleDg), solve J_k δ = −R(U_k)
 * tightly (slab by slab by default: solveBySlabs, direct or GMRES + block ILU(0) to 1e-12), and
 * update U_{k+1} = U_k + λ δ. The step length λ starts at 1 and is halved while the trial state is
 * inadmissible (the physics refuses it, e.g. negative pressure) or fails the sufficient-decrease
 * test ‖R(U_k + λδ)‖ ≤ (1 − 10⁻⁴ λ)‖R(U_k)‖ (the Armijo rule, Kelley, Iterative Methods for Linear
 * and Nonlinear Equations, SIAM 1995, §8.1). Near the solution full steps are taken and the
 * convergence is quadratic (Kelley 1995, Theorem 5.1.2), as the Jacobian is exact.
 *
 * The monitored norm is the Euclidean norm of the residual vector (coefficients of the
 * reference-orthonormal basis); convergence when ‖R(U_k)‖ ≤ max(rtol·‖R(U_0)‖, atol).
 * With `pseudoCfl`, M/Δτ is added to every Jacobian (pseudo-transient continuation, Kelley &
 * Keyes, SIAM J. Numer. Anal. 35(2), 1998; src/dg/pseudo-time.ts): the residual, hence the solution,
 * is unchanged, the convergence becomes linear.
 *
 * Numerical trouble never throws: the result states its cause. Bad options throw UserError.
 */
export type NewtonCause =
  | 'converged'
  | 'iteration-limit'
  /** The Jacobian system's solve did not converge (an iterative slab solve stopped). */
  | 'linear-solve-failed'
  /** No step length passed the decrease test within maxBacktracks halvings. */
  | 'no-decrease'
  | 'non-finite';

export interface NewtonStep {
  /** Iteration k (1-based): the step from U_{k−1} to U_k. */
  iteration: number;
  /** ‖R(U_k)‖ after the step. */
  residualNorm: number;
  /** ‖R(U_k)‖ / ‖R(U_0)‖. */
  relativeResidual: number;
  /** ‖λδ‖, the Euclidean norm of the update. */
  stepNorm: number;
  /** λ, the accepted step length (1 = full Newton step). */
  stepLength: number;
  /** Slab methods of the linear solve (see solveBySlabs), or the caller's solver name. */
  linearMethod: string;
  /** Krylov iterations of the linear solve, when it was iterative. */
  linearIterations?: number;
}

export interface NewtonResult {
  /** The last accepted iterate (a new array; the initial state is not modified). */
  state: Float64Array;
  converged: boolean;
  cause: NewtonCause;
  /** Newton iterations taken (accepted steps). */
  iterations: number;
  initialResidualNorm: number;
  finalResidualNorm: number;
  /** ‖R(U_k)‖ for k = 0 … iterations. */
  residualNorms: number[];
  steps: NewtonStep[];
  /** What went wrong, when not converged. */
  message?: string;
}

/** The Jacobian system at one iterate: what `onJacobian` receives (e.g. to write a Newton sequence). */
export interface NewtonLinearization {
  /** 0-based: the linearization at U_k. */
  iteration: number;
  /** U_k (do not modify). */
  state: Float64Array;
  /** J_k (plus M/Δτ with pseudoCfl), BSR in block-row order. */
  jacobian: Bsr;
  /** −R(U_k). */
  rhs: Float64Array;
  residualNorm: number;
}

/** A linear solver for J δ = rhs; the default is solveBySlabs. */
export type NewtonLinearSolve = (
  jacobian: Bsr, rhs: Float64Array, slabOffsets: ArrayLike<number>,
) => { x: Float64Array; converged: boolean; method: string; iterations?: number; message?: string };

export interface NewtonOptions {
  /** Relative residual reduction to stop at (1e-10). */
  rtol?: number;
  /** Absolute residual norm to stop at (0). */
  atol?: number;
  /** Largest number of Newton iterations (25). */
  maxIterations?: number;
  /** Largest number of step halvings per iteration (12). */
  maxBacktracks?: number;
  /** Pseudo-time CFL number: adds M/Δτ to each Jacobian (absent: plain Newton). */
  pseudoCfl?: number;
  /** Options of the default slab-by-slab linear solve. */
  slabSolve?: SlabSolveOptions;
  /** Replaces the default linear solve. */
  linearSolve?: NewtonLinearSolve;
  /** Called with each Jacobian system before it is solved. */
  onJacobian?: (lin: NewtonLinearization) => void;
  /** Called after each accepted step. */
  onStep?: (step: NewtonStep) => void;
}

function norm2(v: Float64Array): number {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += v[i]! * v[i]!;
  return Math.sqrt(s);
}

/** The residual at a trial state, or null when the physics refuses the state (inadmissible). */
function trialResidual(disc: Discretization, state: Float64Array): Float64Array | null {
  try {
    return assembleDg(disc, state, { matrix: false }).residual;
  } catch (e) {
    if (e instanceof UserError) return null;
    throw e;
  }
}

const defaultLinearSolve = (opts: SlabSolveOptions | undefined): NewtonLinearSolve => (jacobian, rhs, slabOffsets) => {
  const s = solveBySlabs(jacobian, rhs, slabOffsets, opts);
  const out: ReturnType<NewtonLinearSolve> = { x: s.x, converged: s.converged, method: s.method };
  if (s.iterations !== undefined) out.iterations = s.iterations;
  if (s.failure) out.message = `slab ${s.failure.slab}: ${s.failure.message}`;
  return out;
};

/**
 * Newton iterations from `initial` (block-row order, length nElements·bs). The physics must be
 * nonlinear (one with a linearization state: Euler, Burgers). Throws UserError for bad options or an
 * inadmissible initial state (the physics' own message, naming the element or face).
 */
export function newtonSolve(disc: Discretization, initial: Float64Array, opts: NewtonOptions = {}): NewtonResult {
  const rtol = opts.rtol ?? 1e-10;
  const atol = opts.atol ?? 0;
  const maxIterations = opts.maxIterations ?? 25;
  const maxBacktracks = opts.maxBacktracks ?? 12;
  if (!(rtol >= 0 && rtol < 1)) throw new UserError(`newton: rtol must be in [0, 1), got ${rtol}`);
  if (!(atol >= 0)) throw new UserError(`newton: atol must be ≥ 0, got ${atol}`);
  if (!Number.isInteger(maxIterations) || maxIterations < 0) throw new UserError(`newton: maxIterations must be an integer ≥ 0, got ${maxIterations}`);
  if (!Number.isInteger(maxBacktracks) || maxBacktracks < 0) throw new UserError(`newton: maxBacktracks must be an integer ≥ 0, got ${maxBacktracks}`);
  if (opts.pseudoCfl !== undefined && !(opts.pseudoCfl > 0 && Number.isFinite(opts.pseudoCfl))) {
    throw new UserError(`newton: pseudoCfl must be a number > 0, got ${opts.pseudoCfl}`);
  }
  if (disc.physics.state === null) {
    throw new UserError(`newton: physics ${disc.physics.name} is linear (its matrix is the DG operator, not a Jacobian at a state); solve it directly`);
  }
  const n = disc.mesh.nElements * disc.bs;
  if (initial.length !== n) throw new UserError(`newton: the initial state has length ${initial.length}, expected ${n}`);
  const solve = opts.linearSolve ?? defaultLinearSolve(opts.slabSolve);
  const slabOffsets = disc.mesh.slabOffsets;

  const state = Float64Array.from(initial);
  const trial = new Float64Array(n);
  let { bsr, residual } = assembleDg(disc, state);
  let rNorm = norm2(residual);
  const r0 = rNorm;
  const residualNorms = [r0];
  const steps: NewtonStep[] = [];
  const result = (cause: NewtonCause, message?: string): NewtonResult => {
    const out: NewtonResult = {
      state, converged: cause === 'converged', cause, iterations: steps.length,
      initialResidualNorm: r0, finalResidualNorm: rNorm, residualNorms, steps,
    };
    if (message !== undefined) out.message = message;
    return out;
  };
  if (!Number.isFinite(r0)) return result('non-finite', 'the residual at the initial state is not finite');
  const target = Math.max(rtol * r0, atol);

  for (let k = 0; ; k++) {
    if (rNorm <= target) return result('converged');
    if (k >= maxIterations) return result('iteration-limit', `‖R‖/‖R₀‖ = ${(rNorm / r0).toExponential(2)} after ${k} iterations`);
    const jacobian = bsr as Bsr;
    if (opts.pseudoCfl !== undefined) addPseudoTimeTerm(disc, jacobian, opts.pseudoCfl);
    for (let i = 0; i < n; i++) residual[i] = -residual[i]!;
    opts.onJacobian?.({ iteration: k, state, jacobian, rhs: residual, residualNorm: rNorm });
    const lin = solve(jacobian, residual, slabOffsets);
    if (!lin.converged) return result('linear-solve-failed', lin.message ?? 'the linear solve did not converge');
    const delta = lin.x;
    const deltaNorm = norm2(delta);
    if (!Number.isFinite(deltaNorm)) return result('non-finite', `the Newton update of iteration ${k + 1} is not finite`);
    let lambda = 1;
    let accepted: Float64Array | null = null;
    let acceptedNorm = Infinity;
    for (let b = 0; b <= maxBacktracks; b++, lambda *= 0.5) {
      for (let i = 0; i < n; i++) trial[i] = state[i]! + lambda * delta[i]!;
      const rt = trialResidual(disc, trial);
      if (rt === null) continue;
      const tn = norm2(rt);
      if (Number.isFinite(tn) && tn <= (1 - 1e-4 * lambda) * rNorm) { accepted = rt; acceptedNorm = tn; break; }
    }
    if (accepted === null) {
      return result('no-decrease', `iteration ${k + 1}: no step length down to 2^-${maxBacktracks} decreased the residual (or gave an admissible state)`);
    }
    state.set(trial);
    rNorm = acceptedNorm;
    residualNorms.push(rNorm);
    const step: NewtonStep = {
      iteration: k + 1, residualNorm: rNorm, relativeResidual: rNorm / r0, stepNorm: lambda * deltaNorm,
      stepLength: lambda, linearMethod: lin.method,
    };
    if (lin.iterations !== undefined) step.linearIterations = lin.iterations;
    steps.push(step);
    opts.onStep?.(step);
    if (rNorm <= target) return result('converged');
    // the next linearization (the residual is recomputed with the matrix: same values, one pass)
    ({ bsr, residual } = assembleDg(disc, state));
  }
}
