import type { Bsr, Centroids, Csr, ModalLayout } from '../sparse/types.js';
import type { BufferBytes, WorkCounts } from '../solvers/types.js';

/** The matrix as a preconditioner factory sees it. */
export interface SystemMatrix {
  /** Scalar CSR as read (point methods use this pattern). */
  readonly csr: Csr;
  /** Block view (bs = 1 when no block size is known). */
  readonly bsr: Bsr;
  /** Block-row offsets of time slabs (first 0, last nBlockRows), when known. */
  readonly slabOffsets?: Int32Array;
  /**
   * Scalar size and block size, when known without touching csr/bsr. A loaded system
   * (src/sparse/system.ts) builds a missing format on first access, so a point method reads
   * these rather than system.bsr.bs (and a loaded system is square by construction).
   */
  readonly n?: number;
  readonly bs?: number;
  /** How each block is built from a hierarchical basis (layout section `modes`), when known; p-multigrid needs it. */
  readonly modes?: ModalLayout;
  /** One point per block row (layout field `centroids`), when known; the coordinate partitioner needs it. */
  readonly centroids?: Centroids;
}

export type SetupOutcome =
  | { ok: true }
  | { ok: false; reason: 'zero-pivot' | 'non-finite' | 'inner-solve-failed' | 'invalid'; message: string; blockRow?: number };

/**
 * A preconditioner: z ← M⁻¹ r. Created by a factory (cheap: checks options, no heavy work),
 * then setup() once (symbolic + numeric; may fail politely), then apply() many times.
 * All workspace is allocated in setup(); apply() never allocates.
 */
export interface Preconditioner {
  readonly name: string;
  readonly n: number;
  /** True when M changes between applications (inner iterative solves): use FGMRES. */
  readonly variable: boolean;
  setup(): SetupOutcome;
  /** z ← M⁻¹ r; r and z different arrays of length n; r never modified. */
  apply(r: Float64Array, z: Float64Array): void;
  /** Bytes by named buffer (factors, pivots, permutation, workspace…). */
  memory(): BufferBytes;
  /**
   * Work done since setup() began, by the work model (src/solvers/work.ts): setup = the last
   * setup() (a failed setup counts the block rows it attempted); apply = every apply() since,
   * cumulative, with preconditionerApplies = the number of apply() calls plus any nested
   * preconditioner applications, matvecs and innerIterations from nested solves (slab).
   */
  work(): { setup: WorkCounts; apply: WorkCounts };
  /** Optional statistics (inner iterations per slab, pivots shifted…). */
  stats?(): Record<string, unknown>;
}
