/**
 * Sparse matrix types. All indices are 0-based and stored in Int32Array, so a dimension or
 * nonzero count must stay below 2^31 − 1 (checked by readers and generators before allocating).
 */

/**
 * Compressed sparse rows. Row i holds entries rowPtr[i] .. rowPtr[i+1]-1 with column indices
 * colInd[k] sorted ascending and unique within the row. Explicit zeros are kept: they belong
 * to the pattern (and so to the ILU(0) pattern).
 */
export interface Csr {
  readonly nRows: number;
  readonly nCols: number;
  readonly rowPtr: Int32Array; // length nRows + 1
  readonly colInd: Int32Array; // length nnz
  readonly values: Float64Array; // length nnz
}

/**
 * Block compressed sparse rows with square bs×bs blocks, each stored ROW-MAJOR:
 * entry (i, j) of block k (0 ≤ i, j < bs) is values[k*bs*bs + i*bs + j].
 * Block row I holds blocks rowPtr[I] .. rowPtr[I+1]-1 with block column indices colInd[k]
 * sorted ascending and unique. Scalar size is nBlockRows*bs × nBlockCols*bs.
 */
export interface Bsr {
  readonly nBlockRows: number;
  readonly nBlockCols: number;
  readonly bs: number;
  readonly rowPtr: Int32Array; // length nBlockRows + 1
  readonly colInd: Int32Array; // length nBlocks
  readonly values: Float64Array; // length nBlocks * bs * bs
}

/** Largest count an Int32 index array can address. */
export const MAX_INT32_INDEX = 2 ** 31 - 1;

/**
 * Sidecar layout of a matrix: `NAME.layout.json` beside `NAME.mtx`.
 * slabOffsets are BLOCK-row offsets: slab s holds block rows slabOffsets[s] .. slabOffsets[s+1]-1;
 * first entry 0, last entry the number of block rows.
 */
export interface Layout {
  readonly blockSize: number;
  readonly slabOffsets?: readonly number[];
  /** How each block is built from a modal (hierarchical) basis; read by p-multigrid. */
  readonly modes?: ModalLayout;
  /** Free-form provenance: generator parameters, source code, date… */
  readonly provenance?: Record<string, unknown>;
  /** Stored blocks whose entries are all exactly zero, and their share of the stored blocks (generated cases write it). */
  readonly zeroBlocks?: { readonly count: number; readonly share: number };
  /** One point per block row (element centroid); the coordinate partitioner reads it. */
  readonly centroids?: CentroidLayout;
  /**
   * Element quality of the mesh (generated cases write it): aspect ratio = longest edge / smallest
   * altitude scaled so a regular simplex gives 1, and the smallest det J (orientation-corrected,
   * D!·volume) — see src/mesh/quality.ts.
   */
  readonly elementQuality?: {
    readonly aspectRatio: { readonly min: number; readonly median: number; readonly max: number };
    readonly minJacobianDeterminant: number;
  };
  /** This system's place in a generated sequence (src/dg/sequence.ts): which Newton step or slab, and what it linearizes about. */
  readonly sequence?: SequenceLayout;
  readonly [extra: string]: unknown;
}

/**
 * Layout section `sequence`: the system is number `index` (from 1) of `count` in a sequence of
 * kind 'newton' (step k: the Jacobian at the state after k − 1 Newton updates) or 'slabs' (slab k
 * of a slab-marching sequence, its inflow the computed solution of slab k − 1). Further fields
 * describe the step (state file, residual norm, block rows of the slab in the full system).
 */
export interface SequenceLayout {
  readonly kind: 'newton' | 'slabs';
  readonly index: number;
  readonly count: number;
  readonly [extra: string]: unknown;
}

/**
 * Layout field `centroids`: block row I's point is values[I·nCoordinates … (I+1)·nCoordinates − 1]
 * (flat, block-row order). Generated cases write the element centroid, space axes then time.
 */
export interface CentroidLayout {
  readonly nCoordinates: number;
  readonly values: readonly number[];
}

/** Centroids as the solvers hold them (from a layout, checked against the matrix). */
export interface Centroids {
  readonly nCoordinates: number;
  readonly values: Float64Array;
}

/** Most coordinates per centroid the layout accepts (3D + time). */
export const MAX_CENTROID_COORDINATES = 4;

/** Arrangement of the unknowns inside a block of nEquations × nModes unknowns. */
export type ModeArrangement = 'equation-major' | 'mode-major';
export const MODE_ARRANGEMENTS: readonly ModeArrangement[] = ['equation-major', 'mode-major'];

/**
 * Layout section `modes`: each block holds nEquations equations times degrees.length basis
 * functions (modes). 'equation-major': unknown (equation i, mode a) at i·nModes + a;
 * 'mode-major': at a·nEquations + i. degrees[a] is the total polynomial degree of mode a, in
 * hierarchical order (non-decreasing, starting at 0): the modes of degree ≤ q come first.
 */
export interface ModalLayout {
  readonly nEquations: number;
  readonly arrangement: ModeArrangement;
  readonly degrees: readonly number[];
}
