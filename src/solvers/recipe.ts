/**
 * A solver recipe: one named combination of Krylov method, preconditioner, ordering and
 * stopping rule. Used by `slabbench solve` (built from options) and by suite files.
 */
export type KrylovName = 'gmres' | 'fgmres' | 'bicgstab' | 'none';
export type PreconditionerName = 'none' | 'jacobi' | 'block-jacobi' | 'block-gs' | 'ilu0' | 'block-ilu0' | 'slab';
export type SweepDirection = 'forward' | 'backward' | 'symmetric';
export type OrderingName = 'natural' | 'rcm' | 'downstream' | 'mdf';
export type PreconditionSide = 'right' | 'left';
export type Orthogonalization = 'mgs' | 'cgs2';
export type BlockInverse = 'lu' | 'inverse';

export const KRYLOV_NAMES: readonly KrylovName[] = ['gmres', 'fgmres', 'bicgstab', 'none'];
export const PRECONDITIONER_NAMES: readonly PreconditionerName[] = [
  'none', 'jacobi', 'block-jacobi', 'block-gs', 'ilu0', 'block-ilu0', 'slab',
];
export const SWEEP_DIRECTIONS: readonly SweepDirection[] = ['forward', 'backward', 'symmetric'];
export const ORDERING_NAMES: readonly OrderingName[] = ['natural', 'rcm', 'downstream', 'mdf'];

export interface Recipe {
  /** Display name (suite files name their recipes). */
  name: string;
  /** 'none' = stationary iteration x ← x + ω M⁻¹ (b − A x). */
  krylov: KrylovName;
  /** GMRES/FGMRES basis size per cycle. */
  restart: number;
  side: PreconditionSide;
  orthogonalization: Orthogonalization;
  preconditioner: PreconditionerName;
  /** Block Gauss–Seidel sweep direction. */
  sweep: SweepDirection;
  /** Block ordering for block-gs and block-ilu0. */
  ordering: OrderingName;
  /** Relaxation factor: block-gs (SOR), and the stationary update. */
  omega: number;
  /** Number of block-gs sweeps per application. */
  sweeps: number;
  /** Diagonal shift added to pivots/diagonal blocks before factorizing (0 = none: a zero pivot fails). */
  shift: number;
  /** Block-jacobi diagonal block solve: LU with partial pivoting, or explicit inverse. */
  blockInverse: BlockInverse;
  /** Stop when ‖r‖ ≤ rtol · baselineNorm … */
  rtol: number;
  /** … or when ‖r‖ ≤ atol (absolute). 0 disables. */
  atol: number;
  /** Maximum total iterations (inner Krylov steps, or stationary steps), whatever the restart. */
  maxIterations: number;
  /** Stop as diverged when ‖r‖ > divergence · baselineNorm. */
  divergence: number;
  baseline: 'rhs' | 'initial-residual';
  /** Slab preconditioner: how each slab is solved. */
  inner?: Recipe;
}

export const DEFAULT_RECIPE: Readonly<Recipe> = Object.freeze({
  name: 'gmres-none',
  krylov: 'gmres',
  restart: 30,
  side: 'right',
  orthogonalization: 'mgs',
  preconditioner: 'none',
  sweep: 'forward',
  ordering: 'natural',
  omega: 1,
  sweeps: 1,
  shift: 0,
  blockInverse: 'lu',
  rtol: 1e-8,
  atol: 0,
  maxIterations: 1000,
  divergence: 1e10,
  baseline: 'rhs',
});
