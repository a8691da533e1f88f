/**
 * The work model: exact, machine-independent counts of what a run does, from each kernel's own
 * formula (README "Work model"). Solvers and preconditioners add these formulas at their call
 * sites, once per kernel call or once per loop over basis vectors, never inside a kernel's loops.
 *
 * Conventions (the model, stated once):
 * - flops: every floating-point add, subtract, multiply and divide counts 1, so a multiply-add in
 *   a sum counts 2, including the first term (a dot product of length n is 2n). Square roots,
 *   absolute values, comparisons and scalar bookkeeping outside vector loops are not counted,
 *   except the Givens rotations and the triangular solve of GMRES (they grow with the restart).
 *   Dense block kernels count their plain loops in full: the fast paths only reorder the same
 *   operations (their partial sums add a few combining additions, not counted), and updates by an
 *   exact-zero multiplier that a kernel skips are counted as done.
 * - bytes: each array a kernel call streams counts once per read and once per write (8 per double,
 *   4 per index). A vector a sparse kernel gathers from (x of y = A x) is read once; the result
 *   is written once. Small per-row scratch that stays in cache (one block of the workspace) is not
 *   counted.
 */
import type { WorkCounts } from './types.js';

export function zeroWork(): WorkCounts {
  return { matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops: 0, bytes: 0 };
}

/** into += times · w (in place; returns into). */
export function addWork(into: WorkCounts, w: WorkCounts, times = 1): WorkCounts {
  into.matvecs += times * w.matvecs;
  into.preconditionerApplies += times * w.preconditionerApplies;
  into.innerIterations += times * w.innerIterations;
  into.flops += times * w.flops;
  into.bytes += times * w.bytes;
  return into;
}

/** a − b (a new object). */
export function workDifference(a: WorkCounts, b: WorkCounts): WorkCounts {
  return {
    matvecs: a.matvecs - b.matvecs,
    preconditionerApplies: a.preconditionerApplies - b.preconditionerApplies,
    innerIterations: a.innerIterations - b.innerIterations,
    flops: a.flops - b.flops,
    bytes: a.bytes - b.bytes,
  };
}

/** times · w (a new object). */
export function scaledWork(w: WorkCounts, times: number): WorkCounts {
  return addWork(zeroWork(), w, times);
}

/** A kernel's cost: flops and bytes only. */
export function kernel(flops: number, bytes: number): WorkCounts {
  return { matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops, bytes };
}

const D = 8; // bytes per double
const I = 4; // bytes per index

/** Sparse products (one operator application each: matvecs 1). */
export const sparseWork = {
  /** y = A x, CSR n×n with nnz entries: values and column indices once, row pointers, x read, y written. */
  csrSpmv(n: number, nnz: number): WorkCounts {
    return { ...kernel(2 * nnz, nnz * (D + I) + (n + 1) * I + 2 * n * D), matvecs: 1 };
  },
  /** y = A x, BSR with nb block rows, k stored bs×bs blocks (n = nb·bs). */
  bsrSpmv(nb: number, bs: number, k: number): WorkCounts {
    const n = nb * bs;
    return { ...kernel(2 * k * bs * bs, k * bs * bs * D + k * I + (nb + 1) * I + 2 * n * D), matvecs: 1 };
  },
};

/** Vector kernels of length n (src/solvers/vector.ts and the solvers' own update loops). */
export const vectorWork = {
  /** (x, y) */
  dot: (n: number): WorkCounts => kernel(2 * n, 2 * n * D),
  /** ‖x‖₂ */
  norm2: (n: number): WorkCounts => kernel(2 * n, n * D),
  /** y ← y + a·x */
  axpy: (n: number): WorkCounts => kernel(2 * n, 3 * n * D),
  /** x ← a·x */
  scale: (n: number): WorkCounts => kernel(n, 2 * n * D),
  /** y ← x (TypedArray.set) */
  copy: (n: number): WorkCounts => kernel(0, 2 * n * D),
  /** x ← 0 */
  fill: (n: number): WorkCounts => kernel(0, n * D),
  /** read-only scan (isZero) */
  scan: (n: number): WorkCounts => kernel(0, n * D),
  /** y ← y + a·x, then (y, z): fused MGS step */
  axpyDot: (n: number): WorkCounts => kernel(4 * n, 4 * n * D),
  /** y ← y + a·x, then ‖y‖₂ */
  axpyNorm2: (n: number): WorkCounts => kernel(4 * n, 3 * n * D),
  /** r ← b − r (the second half of the true residual, after r ← A x) */
  subtractFrom: (n: number): WorkCounts => kernel(n, 3 * n * D),
  /** BiCGStab p ← r + β (p − ω v) */
  bicgstabDirection: (n: number): WorkCounts => kernel(4 * n, 4 * n * D),
  /** s ← r − α v, or r ← s − ω t */
  waxpy: (n: number): WorkCounts => kernel(2 * n, 3 * n * D),
  /** out ← x in block order perm (gather or scatter of nb blocks): both vectors and the permutation */
  permute: (nb: number, bs: number): WorkCounts => kernel(0, 2 * nb * bs * D + nb * I),
};

/** Dense bs×bs block kernels (src/precond/dense.ts), counted as their plain loops. */
export const denseWork = {
  /** In-place LU with partial pivoting: Σ_k [1 reciprocal + (bs−k−1) multipliers + 2(bs−k−1)² update]. */
  luFlops(bs: number): number {
    return bs + (bs * (bs - 1)) / 2 + ((bs - 1) * bs * (2 * bs - 1)) / 3;
  },
  lu(bs: number): WorkCounts {
    return kernel(denseWork.luFlops(bs), 2 * bs * bs * D + bs * I);
  },
  /** x ← A⁻¹ x from the LU factors: forward bs(bs−1), backward bs(bs−1) + bs divisions. */
  luSolve(bs: number): WorkCounts {
    return kernel(2 * bs * bs - bs, bs * bs * D + bs * I + 2 * bs * D);
  },
  /** A⁻¹ from the LU factors (row operations on P·I): 2bs²(bs−1) + bs reciprocals + bs² scalings. */
  inverse(bs: number): WorkCounts {
    return kernel(2 * bs * bs * (bs - 1) + bs * bs + bs, 2 * bs * bs * D + bs * I);
  },
  /** y = A x */
  matVec(bs: number): WorkCounts {
    return kernel(2 * bs * bs, bs * bs * D + 2 * bs * D);
  },
  /** y −= A x */
  matVecSub(bs: number): WorkCounts {
    return kernel(2 * bs * bs, bs * bs * D + 3 * bs * D);
  },
  /** C = A·B */
  gemm(bs: number): WorkCounts {
    return kernel(2 * bs * bs * bs, 3 * bs * bs * D);
  },
  /** C −= A·B */
  gemmSub(bs: number): WorkCounts {
    return kernel(2 * bs * bs * bs, 4 * bs * bs * D);
  },
  /** A read-only pass over a block (finiteness check, largest entry). */
  scan(bs: number): WorkCounts {
    return kernel(0, bs * bs * D);
  },
  /** A block copied. */
  copy(bs: number): WorkCounts {
    return kernel(0, 2 * bs * bs * D);
  },
  /**
   * factorBlock (src/precond/common.ts): finiteness scan, shift of the diagonal (bs additions when
   * shift ≠ 0), largest entry, LU, finiteness scan of the factors.
   */
  factorBlock(bs: number, shift: number): WorkCounts {
    const w = kernel(shift !== 0 ? bs : 0, 0);
    addWork(w, denseWork.scan(bs), 3);
    return addWork(w, denseWork.lu(bs));
  },
};

/**
 * Block triangular sweep over k stored blocks of nb block rows (block ILU(0) forward/backward,
 * block Gauss–Seidel): blocks, their column indices and the row pointers streamed once, the vector
 * read once and written once, 2bs² flops per block.
 */
export function blockSweepWork(nb: number, bs: number, k: number): WorkCounts {
  return kernel(2 * k * bs * bs, k * (bs * bs * D + I) + (nb + 1) * I + 2 * nb * bs * D);
}
