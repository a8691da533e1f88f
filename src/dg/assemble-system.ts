import { FaceKind } from '../mesh/space-time.js';
import { createElementAffine, elementAffine, faceLocalVertices, referenceToPhysical } from '../mesh/geometry.js';
import { leftFaceFrame, rightFaceOrder } from './face-coupling.js';
import type { LinearSystemPhysics } from './physics/types.js';
import type { Discretization, ProgressSink } from './assemble.js';

/**
 * Space-time DG for a linear hyperbolic system with constant coefficients,
 *   Σ_K [ −∫_K Σ_k Â_k u · ∂_k v + ∫_{∂K} (A⁺(n) u⁻ + A⁻(n) u⁺) · v ] = 0,
 * Â_k = A_k (space), Â_d = I (time), A^± the characteristic split of A(n) = n_t I + Σ n_k A_k
 * (upwind flux for linear systems: e.g. Hesthaven & Warburton, Nodal DG Methods, 2008, §2.4;
 * LeVeque 2002, §4.12). Every integral is a Kronecker product of an m×m coefficient matrix with a
 * reference integral: the element block is Σ_k Â_k ⊗ C_k with C_k = −|det J| Σ_l (J⁻¹)_{lk} S_l,
 * face blocks are A^± ⊗ (face mass matrices). Unknown (equation i, basis a) sits at i·nb + a.
 * The state is zero (linear), so the residual holds only the boundary-data terms A⁻ u_data.
 */
export function assembleSystem(
  disc: Discretization, physics: LinearSystemPhysics,
  values: Float64Array | null, residual: Float64Array, progress: ProgressSink,
): void {
  const { mesh, tables, ordering, pattern } = disc;
  const { inv } = ordering;
  const D = mesh.dim + 1;
  const nb = tables.nb;
  const m = physics.nEquations;
  const bs = m * nb;
  const bb = bs * bs;
  const nb2 = nb * nb;
  const S = tables.volume.convection;
  const aff = createElementAffine(D);
  const C = new Float64Array(nb2);
  const hat: Float64Array[] = [...physics.spatialMatrices];
  const identity = new Float64Array(m * m);
  for (let i = 0; i < m; i++) identity[i * m + i] = 1;
  hat.push(identity);
  const nElements = mesh.nElements;
  const total = nElements + mesh.nFaces;

  if (values) {
    for (let e = 0; e < nElements; e++) {
      elementAffine(mesh, e, aff);
      const Ji = aff.inverse;
      const det = aff.absDet;
      const diag = pattern.diagonal[e] * bb;
      for (let k = 0; k < D; k++) {
        C.fill(0);
        for (let l = 0; l < D; l++) {
          const c = -det * Ji[l * D + k];
          if (c === 0) continue;
          const so = l * nb2;
          for (let q = 0; q < nb2; q++) C[q] += c * S[so + q];
        }
        kron(values, diag, bs, nb, m, hat[k], 1, C);
      }
      if ((e & 4095) === 4095) progress(e + 1, total);
    }
  }

  const normal = new Float64Array(D);
  const aPlus = new Float64Array(m * m);
  const aMinus = new Float64Array(m * m);
  const rightOrder = new Int32Array(D);
  const X = new Float64Array(D);
  const data = new Float64Array(m);
  const flux = new Float64Array(m);
  const { faceLeft, faceRight, faceLeftLocal, faceKind } = mesh;
  const { faceBlocks } = pattern;
  for (let f = 0; f < mesh.nFaces; f++) {
    const kind = faceKind[f];
    const L = faceLeft[f];
    const R = faceRight[f];
    const area = leftFaceFrame(mesh, f, aff, normal);
    physics.upwindSplit(normal, aPlus, aMinus);
    const tabL = tables.face(faceLocalVertices(D, faceLeftLocal[f]));
    const wscale = area * tables.faceFactorial;
    const twoSided = R >= 0;
    if (twoSided) {
      rightFaceOrder(mesh, f, rightOrder);
      const tabR = tables.face(rightOrder);
      if (values) {
        kron(values, faceBlocks[4 * f] * bb, bs, nb, m, aPlus, wscale, tables.faceMass(tabL, tabL));
        kron(values, faceBlocks[4 * f + 2] * bb, bs, nb, m, aPlus, -wscale, tables.faceMass(tabR, tabL));
        if (kind === FaceKind.slabInterface) {
          for (let q = 0; q < m * m; q++) {
            if (aMinus[q] !== 0) throw new Error(`face ${f}: upwind split gives inflow from the later slab across a slab interface`);
          }
        } else {
          kron(values, faceBlocks[4 * f + 1] * bb, bs, nb, m, aMinus, wscale, tables.faceMass(tabL, tabR));
          kron(values, faceBlocks[4 * f + 3] * bb, bs, nb, m, aMinus, -wscale, tables.faceMass(tabR, tabR));
        }
      }
    } else {
      if (values) kron(values, faceBlocks[4 * f] * bb, bs, nb, m, aPlus, wscale, tables.faceMass(tabL, tabL));
      if (kind !== FaceKind.final) {
        // Exterior data: initial condition on t = 0, inflow data on space boundaries.
        const IL = inv[L] * bs;
        for (let q = 0; q < tabL.nq; q++) {
          referenceToPhysical(aff, tabL.points, q * D, X);
          if (kind === FaceKind.initial) physics.initialData(X, 0, data);
          else physics.boundaryData(X, 0, data);
          for (let i = 0; i < m; i++) {
            let s = 0;
            for (let j = 0; j < m; j++) s += aMinus[i * m + j] * data[j];
            flux[i] = s;
          }
          const w = tabL.weights[q] * wscale;
          const po = q * nb;
          for (let i = 0; i < m; i++) {
            const c = w * flux[i];
            if (c === 0) continue;
            for (let a = 0; a < nb; a++) residual[IL + i * nb + a] += c * tabL.phi[po + a];
          }
        }
      }
    }
    if ((f & 4095) === 4095) progress(nElements + f + 1, total);
  }
}

/** Block at values[o] (bs×bs row-major) += scale · A ⊗ M, entry (i·nb + a, j·nb + b) = scale·A[i][j]·M[a][b]. */
function kron(values: Float64Array, o: number, bs: number, nb: number, m: number, A: Float64Array, scale: number, M: Float64Array): void {
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      const c = scale * A[i * m + j];
      if (c === 0) continue;
      for (let a = 0; a < nb; a++) {
        const ro = o + (i * nb + a) * bs + j * nb;
        const mo = a * nb;
        for (let b = 0; b < nb; b++) values[ro + b] += c * M[mo + b];
      }
    }
  }
}
