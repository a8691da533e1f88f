/** Small matrices and preconditioner test doubles for the solver tests (not a test file). */
import { Matrix, inverse } from 'ml-matrix';
import type { Csr } from '../../src/sparse/types.js';
import type { Preconditioner } from '../../src/precond/types.js';
import type { KrylovOptions } from '../../src/solvers/options.js';
import { zeroWork } from '../../src/solvers/work.js';

/** work() of a test double that does not model its cost (zeros). */
export function noWork(): ReturnType<Preconditioner['work']> {
  return { setup: zeroWork(), apply: zeroWork() };
}

export { convectionDiffusion, csrFromTriplets, csrMatVec, poisson2d, tridiag } from '../sparse/model-matrices.js';
export { maxAbsDiff } from '../sparse/random-sparse.js';

export function toDense(a: Csr): Matrix {
  const d = Matrix.zeros(a.nRows, a.nCols);
  for (let i = 0; i < a.nRows; i++) for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) d.set(i, a.colInd[k], a.values[k]);
  return d;
}

/** A test double: M⁻¹ = A⁻¹ exactly (dense inverse), so preconditioned GMRES needs one iteration. */
export function exactInverse(a: Csr): Preconditioner {
  const inv = inverse(toDense(a));
  const n = a.nRows;
  const flat = Float64Array.from(inv.to1DArray());
  return {
    name: 'exact-inverse', n, variable: false,
    setup: () => ({ ok: true }),
    apply(r, z) {
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let j = 0; j < n; j++) s += flat[i * n + j] * r[j];
        z[i] = s;
      }
    },
    memory: () => ({ inverse: flat.byteLength }),
    work: noWork,
  };
}

/** Point Jacobi double: z = D⁻¹ r. */
export function pointJacobi(a: Csr): Preconditioner {
  const n = a.nRows;
  const d = new Float64Array(n);
  for (let i = 0; i < n; i++) for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) if (a.colInd[k] === i) d[i] = a.values[k];
  return {
    name: 'jacobi-double', n, variable: false, setup: () => ({ ok: true }),
    apply(r, z) { for (let i = 0; i < n; i++) z[i] = r[i] / d[i]; },
    memory: () => ({ diagonal: d.byteLength }),
    work: noWork,
  };
}

/** Forward SOR double: solve (D/ω + L) z = r by forward substitution (ω = 1: Gauss–Seidel). */
export function forwardSor(a: Csr, omega: number): Preconditioner {
  const n = a.nRows;
  return {
    name: 'sor-double', n, variable: false, setup: () => ({ ok: true }),
    apply(r, z) {
      for (let i = 0; i < n; i++) {
        let s = r[i];
        let d = 0;
        for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) {
          const j = a.colInd[k];
          if (j < i) s -= a.values[k] * z[j];
          else if (j === i) d = a.values[k];
        }
        z[i] = (s * omega) / d;
      }
    },
    memory: () => ({}),
    work: noWork,
  };
}

/** Point ILU(0) double on CSR (IKJ variant, Saad 2003, Alg. 10.4); sorted columns assumed. */
export function ilu0Double(a: Csr): Preconditioner {
  const n = a.nRows;
  const lu = Float64Array.from(a.values);
  const diag = new Int32Array(n);
  for (let i = 0; i < n; i++) for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) if (a.colInd[k] === i) diag[i] = k;
  const pos = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) {
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) pos[a.colInd[k]] = k;
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1] && a.colInd[k] < i; k++) {
      const c = a.colInd[k];
      lu[k] /= lu[diag[c]];
      for (let q = diag[c] + 1; q < a.rowPtr[c + 1]; q++) {
        const p = pos[a.colInd[q]];
        if (p >= 0) lu[p] -= lu[k] * lu[q];
      }
    }
    for (let k = a.rowPtr[i]; k < a.rowPtr[i + 1]; k++) pos[a.colInd[k]] = -1;
  }
  return {
    name: 'ilu0-double', n, variable: false, setup: () => ({ ok: true }),
    apply(r, z) {
      for (let i = 0; i < n; i++) {
        let s = r[i];
        for (let k = a.rowPtr[i]; k < diag[i]; k++) s -= lu[k] * z[a.colInd[k]];
        z[i] = s;
      }
      for (let i = n - 1; i >= 0; i--) {
        let s = z[i];
        for (let k = diag[i] + 1; k < a.rowPtr[i + 1]; k++) s -= lu[k] * z[a.colInd[k]];
        z[i] = s / lu[diag[i]];
      }
    },
    memory: () => ({ factors: lu.byteLength }),
    work: noWork,
  };
}

/** Default solver options for tests (overridable). */
export function opts(o: Partial<KrylovOptions> = {}): KrylovOptions {
  return {
    restart: 30, side: 'right', orthogonalization: 'mgs', rtol: 1e-10, atol: 0, maxIterations: 1000,
    divergence: 1e10, relativeTo: 'rhs', ...o,
  };
}
