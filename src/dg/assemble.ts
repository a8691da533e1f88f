import type { SpaceTimeMesh } from '../mesh/space-time.js';
import type { Bsr } from '../sparse/types.js';
import { buildReferenceTables, type ReferenceTables } from './reference-tables.js';
import { buildBlockPattern, type BlockPattern } from './block-pattern.js';
import type { OrderingResult } from './ordering.js';
import type { Physics } from './physics/types.js';
import { assembleScalar } from './assemble-scalar.js';
import { assembleNonlinearSystem } from './assemble-nonlinear.js';
import { assembleSystem } from './assemble-system.js';

/** (done, total) work units; called every few thousand elements/faces. */
export type ProgressSink = (done: number, total: number) => void;

/** Everything fixed before values are computed: mesh, physics, reference tables, order, pattern. */
export interface Discretization {
  readonly mesh: SpaceTimeMesh;
  readonly physics: Physics;
  readonly tables: ReferenceTables;
  readonly ordering: OrderingResult;
  readonly pattern: BlockPattern;
  /** Unknowns per element: nEquations · nBasis. */
  readonly bs: number;
}

/**
 * Volume quadrature degree 2p + extra and face degree 2p + extra, extra from the physics (1 for
 * constant coefficients, more for expression velocities and for Burgers' quadratic flux), so the
 * rules are exact to at least degree 2p + 1.
 */
export function prepareDiscretization(mesh: SpaceTimeMesh, physics: Physics, order: number, ordering: OrderingResult): Discretization {
  const D = (mesh.dim + 1) as 2 | 3 | 4;
  const degree = 2 * order + physics.extraQuadratureDegree(order);
  const tables = buildReferenceTables(D, order, degree, degree);
  const bs = physics.nEquations * tables.nb;
  const pattern = buildBlockPattern(mesh, ordering.inv, bs);
  return { mesh, physics, tables, ordering, pattern, bs };
}

/**
 * Assemble the DG residual R(U) and (unless `matrix: false`) its exact Jacobian dR/dU at the
 * state U (block-row order, null = 0). For a linear physics the Jacobian is the system matrix and
 * −R(0) the right-hand side.
 */
export function assembleDg(
  disc: Discretization, state: Float64Array | null,
  opts: { matrix?: boolean; onProgress?: ProgressSink } = {},
): { bsr: Bsr | null; residual: Float64Array } {
  const { mesh, pattern, bs, physics } = disc;
  const n = mesh.nElements;
  if (state && state.length !== n * bs) throw new RangeError(`assembleDg: state has length ${state.length}, expected ${n * bs}`);
  const nBlocks = pattern.rowPtr[n];
  const values = opts.matrix === false ? null : new Float64Array(nBlocks * bs * bs);
  const residual = new Float64Array(n * bs);
  const progress = opts.onProgress ?? (() => undefined);
  if (physics.kind === 'scalar') assembleScalar(disc, physics, state, values, residual, progress);
  else if (physics.kind === 'nonlinear-system') assembleNonlinearSystem(disc, physics, state, values, residual, progress);
  else assembleSystem(disc, physics, values, residual, progress);
  progress(1, 1);
  const bsr: Bsr | null = values
    ? { nBlockRows: n, nBlockCols: n, bs, rowPtr: pattern.rowPtr, colInd: pattern.colInd, values }
    : null;
  return { bsr, residual };
}
