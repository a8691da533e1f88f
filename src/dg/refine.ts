import { UserError } from '../util/errors.js';
import { buildDiscretization, generateWithDiscretization, resolveGenerator, type GeneratorParams } from './generate.js';
import type { Discretization } from './assemble.js';
import { spaceTimeL2Error } from './projection.js';
import { solveBySlabs, type SlabSolveOptions } from './slab-solve.js';
import { newtonSolve, type NewtonOptions } from './newton.js';
import { projectFunction } from './projection.js';
import { scaleToAdmissible } from './positivity.js';

/**
 * Refinement study for a linear case with an exact solution: for each mesh size, generate, solve
 * slab by slab (solveBySlabs: forward substitution, dense or banded LU, or tight GMRES + block
 * ILU(0) per slab), and measure the space-time L²
 * error ‖u_h − u‖ over Ω×(0, T). The final time T is held fixed: the slab thickness follows the
 * case's CFL number (or scales with h when a thickness was given) and is rounded so an integer
 * number of slabs fills (0, T). Observed order between successive sizes:
 * log(e_{i−1}/e_i) / log(h_{i−1}/h_i).
 *
 * Nonlinear physics with an exact solution (Euler's uniform, vortex and shock-tube states) are
 * solved by Newton's method (newton.ts) from the L² projection of the exact solution (scaled to
 * admissible where needed, positivity.ts), each Newton step solved slab by slab as above, to a
 * residual reduction of 1e-10; the error is that of the converged DG solution.
 */
export interface RefinementRow {
  /** Cells per space axis. */
  cells: number[];
  /** Smallest cell size h = min_k L_k / cells_k. */
  h: number;
  slabs: number;
  slabThickness: number;
  nElements: number;
  nUnknowns: number;
  error: number;
  /** Observed order against the previous row (null on the first). */
  observedOrder: number | null;
  /** Slab methods used, joined by '+' (see solveBySlabs). */
  solver: string;
  /** Slabs solved by each method. */
  slabMethods: Record<string, number>;
  /** GMRES iterations summed over the slabs solved iteratively (over all Newton steps for a nonlinear case). */
  iterations?: number;
  /** Nonlinear cases: Newton iterations taken and the final ‖R‖/‖R₀‖. */
  newton?: { iterations: number; relativeResidual: number; residualNorms: number[] };
  seconds: number;
}

export interface RefinementStudy {
  physics: string;
  dim: number;
  order: number;
  finalTime: number;
  /** The finished meshes, in order (all of them unless failure is set). */
  rows: RefinementRow[];
  /** The mesh whose solve failed, and why; the study stops there. */
  failure?: { cells: number[]; message: string };
}

/** Parameters of size `size` (cells along axis 0; other axes keep the base aspect ratio). */
export function refinedParams(base: GeneratorParams, size: number, finalTime: number): GeneratorParams {
  const cells = base.cells.map((c) => Math.max(1, Math.round((size * c) / base.cells[0])));
  const baseResolved = resolveGenerator(base);
  let hBase = Infinity, h = Infinity;
  for (let k = 0; k < base.dim; k++) {
    hBase = Math.min(hBase, base.extent[k] / base.cells[k]);
    h = Math.min(h, base.extent[k] / cells[k]);
  }
  const target = baseResolved.slabThickness * (h / hBase);
  const slabs = Math.max(1, Math.ceil(finalTime / target - 1e-9));
  return { ...base, cells, slabs, cfl: null, slabThickness: finalTime / slabs };
}

export function runRefinementStudy(
  base: GeneratorParams, sizes: number[],
  opts: {
    finalTime?: number;
    /** Called once the sizes are checked, before the first mesh is solved. */
    onStart?: (study: { physics: string; dim: number; order: number; finalTime: number }) => void;
    /** Called as each mesh finishes. */
    onRow?: (row: RefinementRow) => void;
    /** Options of the slab solve (limits of the direct solves, the iterative recipe). */
    slabSolve?: SlabSolveOptions;
    /** Newton options for nonlinear cases (rtol 1e-10 by default). */
    newton?: Omit<NewtonOptions, 'slabSolve' | 'linearSolve'>;
  } = {},
): RefinementStudy {
  if (sizes.length < 2) throw new UserError('refinement study: give at least two mesh sizes');
  for (let i = 1; i < sizes.length; i++) {
    if (!(sizes[i] > sizes[i - 1])) throw new UserError(`refinement study: mesh sizes must increase, got ${sizes.join(', ')}`);
  }
  const baseResolved = resolveGenerator(base);
  if (!baseResolved.physics.exact) {
    throw new UserError(`refinement study: no exact solution is known for this ${base.physics} case (use the default initial condition, a constant velocity, a 1D acoustic profile, or an Euler state)`);
  }
  if (base.pseudoCfl !== undefined) throw new UserError('refinement study: pseudoCfl changes the matrix, not the solution; leave it out');
  const finalTime = opts.finalTime ?? baseResolved.finalTime;
  if (!(finalTime > 0)) throw new UserError(`refinement study: final time must be > 0, got ${finalTime}`);
  // Every mesh's parameters and size limits are checked before the first one is built.
  const allParams = sizes.map((size) => refinedParams(base, size, finalTime));
  for (const p of allParams) resolveGenerator(p, (f) => `refinement study, ${p.cells.join('×')} cells: ${f}`);
  const head = { physics: base.physics, dim: base.dim, order: base.order, finalTime };
  opts.onStart?.(head);
  const rows: RefinementRow[] = [];
  for (const params of allParams) {
    const t0 = performance.now();
    const solved = solveCase(params, opts);
    if ('failure' in solved) return { ...head, rows, failure: { cells: params.cells, message: solved.failure } };
    const { disc, x } = solved;
    const exact = disc.physics.exact!;
    const error = spaceTimeL2Error(disc.mesh, params.order, disc.physics.nEquations, disc.ordering.inv, x, exact);
    let h = Infinity;
    for (let k = 0; k < params.dim; k++) h = Math.min(h, params.extent[k] / params.cells[k]);
    const prev = rows[rows.length - 1];
    const row: RefinementRow = {
      cells: params.cells,
      h,
      slabs: params.slabs,
      slabThickness: params.slabThickness as number,
      nElements: disc.mesh.nElements,
      nUnknowns: x.length,
      error,
      observedOrder: prev ? Math.log(prev.error / error) / Math.log(prev.h / h) : null,
      solver: solved.method,
      slabMethods: solved.slabMethods,
      seconds: (performance.now() - t0) / 1000,
    };
    if (solved.iterations !== undefined) row.iterations = solved.iterations;
    if (solved.newton) row.newton = solved.newton;
    rows.push(row);
    opts.onRow?.(row);
  }
  return { ...head, rows };
}

type SolvedCase = {
  disc: Discretization; x: Float64Array; method: string; slabMethods: Record<string, number>;
  iterations?: number; newton?: RefinementRow['newton'];
} | { failure: string };

/** One mesh: the linear solve, or Newton to convergence for a nonlinear physics. */
function solveCase(params: GeneratorParams, opts: Parameters<typeof runRefinementStudy>[2] & object): SolvedCase {
  if (resolveGenerator(params).physics.state === null) {
    const { system, disc } = generateWithDiscretization(params);
    const solved = solveBySlabs(system.bsr, system.rhs, system.layout.slabOffsets as number[], opts.slabSolve);
    if (!solved.converged) return { failure: solved.failure?.message ?? 'the slab solve did not converge' };
    const out: SolvedCase = { disc, x: solved.x, method: solved.method, slabMethods: { ...solved.slabMethods } };
    if (solved.iterations !== undefined) out.iterations = solved.iterations;
    return out;
  }
  const { disc } = buildDiscretization(params);
  const physics = disc.physics;
  const U0 = projectFunction(disc.mesh, params.order, physics.nEquations, disc.ordering.inv, physics.exact!);
  if (physics.kind === 'nonlinear-system') scaleToAdmissible(disc, physics, U0);
  const methods = new Set<string>();
  const slabMethods: Record<string, number> = {};
  let iterations: number | undefined;
  const result = newtonSolve(disc, U0, {
    ...opts.newton,
    linearSolve: (J, rhs, offsets) => {
      const s = solveBySlabs(J, rhs, offsets, opts.slabSolve);
      for (const [k, v] of Object.entries(s.slabMethods)) { slabMethods[k] = (slabMethods[k] ?? 0) + v!; methods.add(k); }
      if (s.iterations !== undefined) iterations = (iterations ?? 0) + s.iterations;
      const o: ReturnType<NonNullable<NewtonOptions['linearSolve']>> = { x: s.x, converged: s.converged, method: s.method };
      if (s.failure) o.message = s.failure.message;
      return o;
    },
  });
  if (!result.converged) return { failure: `Newton stopped (${result.cause}) after ${result.iterations} iterations: ${result.message ?? ''}`.trim() };
  const method = `newton: ${[...methods].join('+')}`;
  const out: SolvedCase = {
    disc, x: result.state, method, slabMethods,
    newton: { iterations: result.iterations, relativeResidual: result.finalResidualNorm / result.initialResidualNorm, residualNorms: result.residualNorms },
  };
  if (iterations !== undefined) out.iterations = iterations;
  return out;
}
