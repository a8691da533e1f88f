import { FaceKind } from '../mesh/space-time.js';
import { createElementAffine, elementAffine, faceLocalVertices, referenceToPhysical } from '../mesh/geometry.js';
import { leftFaceFrame, rightFaceOrder } from './face-coupling.js';
import type { NonlinearSystemPhysics } from './physics/types.js';
import type { Discretization, ProgressSink } from './assemble.js';

/**
 * The plain reference twin of assembleNonlinearSystem (assemble-nonlinear.ts): the same residual
 * and Jacobian accumulated point by point into the value array, kept unoptimized so tests can
 * compare the fast path against it (to round-off). Not used by the generator.
 *
 * Residual and exact Jacobian of space-time DG for a nonlinear system of m conservation laws
 * ∇_{x,t}·G(U) = 0 (no diffusion), on every simplex K with test functions φ_a per equation:
 *
 *   R_{K,i,a}(U) = −∫_K Σ_l G_{l,i}(U) ∂_l φ_a  +  ∫_{∂K} H_i(U⁻, U⁺; n) φ_a
 *
 * (the scalar form of assemble-scalar.ts, equation by equation; van der Vegt & van der Ven,
 * J. Comput. Phys. 182, 2002). The Jacobian differentiates both terms exactly through the
 * physics' ∂G/∂U and ∂H/∂U^±. Unknown (equation i, basis a) sits at i·nb + a of its block.
 * Slab interfaces require ∂H/∂U⁺ = 0 (the later slab never enters), checked face by face.
 */
export function assembleNonlinearSystemReference(
  disc: Discretization, physics: NonlinearSystemPhysics, state: Float64Array | null,
  values: Float64Array | null, residual: Float64Array, progress: ProgressSink,
): void {
  const { mesh, tables, ordering, pattern } = disc;
  const { inv } = ordering;
  const d = mesh.dim;
  const D = d + 1;
  const nb = tables.nb;
  const m = physics.nEquations;
  const bs = m * nb;
  const bb = bs * bs;
  const mm = m * m;
  const vol = tables.volume;
  const aff = createElementAffine(D);
  const X = new Float64Array(D);
  const U = new Float64Array(m);
  const UR = new Float64Array(m);
  const G = new Float64Array(D * m);
  const dG = new Float64Array(D * mm);
  const PG = new Float64Array(D * m); // J⁻¹-mapped: PG[l·m + i] = Σ_k J⁻¹_{lk} G_{k,i}
  const PdG = new Float64Array(D * mm);
  const h = new Float64Array(m);
  const hL = new Float64Array(mm);
  const hR = new Float64Array(mm);
  const normal = new Float64Array(D);
  const rightOrder = new Int32Array(D);
  const coef = new Float64Array(nb * mm);
  const nElements = mesh.nElements;
  const total = nElements + mesh.nFaces;

  const evalState = (phi: Float64Array, po: number, base: number, out: Float64Array): void => {
    for (let i = 0; i < m; i++) {
      let s = 0;
      if (state) for (let b = 0; b < nb; b++) s += phi[po + b] * state[base + i * nb + b];
      out[i] = s;
    }
  };

  // ---- volume terms ----
  for (let e = 0; e < nElements; e++) {
    elementAffine(mesh, e, aff);
    const Ji = aff.inverse;
    const det = aff.absDet;
    const uo = inv[e] * bs;
    const diag = values ? pattern.diagonal[e] * bb : 0;
    for (let q = 0; q < vol.nq; q++) {
      referenceToPhysical(aff, vol.points, q * D, X);
      const po = q * nb;
      evalState(vol.phi, po, uo, U);
      physics.volumeFlux(X, 0, U, G, dG, e);
      for (let l = 0; l < D; l++) {
        for (let i = 0; i < m; i++) {
          let s = 0;
          for (let k = 0; k < D; k++) s += Ji[l * D + k] * G[k * m + i];
          PG[l * m + i] = s;
        }
        for (let ij = 0; ij < mm; ij++) {
          let s = 0;
          for (let k = 0; k < D; k++) s += Ji[l * D + k] * dG[k * mm + ij];
          PdG[l * mm + ij] = s;
        }
      }
      const w = vol.weights[q] * det;
      for (let a = 0; a < nb; a++) {
        const go = (po + a) * D;
        for (let i = 0; i < m; i++) {
          let r = 0;
          for (let l = 0; l < D; l++) r += vol.grad[go + l] * PG[l * m + i];
          residual[uo + i * nb + a] -= w * r;
        }
        if (values) {
          // coef[a, i, j] = w Σ_l ∂_l φ_a ∂G_{l,i}/∂U_j
          for (let ij = 0; ij < mm; ij++) {
            let c = 0;
            for (let l = 0; l < D; l++) c += vol.grad[go + l] * PdG[l * mm + ij];
            coef[a * mm + ij] = w * c;
          }
        }
      }
      if (values) {
        for (let i = 0; i < m; i++) {
          for (let a = 0; a < nb; a++) {
            const ro = diag + (i * nb + a) * bs;
            for (let j = 0; j < m; j++) {
              const c = coef[a * mm + i * m + j];
              if (c === 0) continue;
              const co = ro + j * nb;
              for (let b = 0; b < nb; b++) values[co + b] -= c * vol.phi[po + b];
            }
          }
        }
      }
    }
    if ((e & 4095) === 4095) progress(e + 1, total);
  }

  // ---- face terms ----
  const { faceLeft, faceRight, faceLeftLocal, faceKind } = mesh;
  const { faceBlocks } = pattern;
  for (let f = 0; f < mesh.nFaces; f++) {
    const kind = faceKind[f];
    const L = faceLeft[f];
    const R = faceRight[f];
    const area = leftFaceFrame(mesh, f, aff, normal);
    const twoSided = R >= 0;
    const tabL = tables.face(faceLocalVertices(D, faceLeftLocal[f]));
    let tabR = tabL;
    if (twoSided) {
      rightFaceOrder(mesh, f, rightOrder);
      tabR = tables.face(rightOrder);
    }
    const IL = inv[L] * bs;
    const IR = twoSided ? inv[R] * bs : 0;
    const bLL = faceBlocks[4 * f] * bb, bLR = faceBlocks[4 * f + 1] * bb;
    const bRL = faceBlocks[4 * f + 2] * bb, bRR = faceBlocks[4 * f + 3] * bb;
    const wscale = area * tables.faceFactorial;
    for (let q = 0; q < tabL.nq; q++) {
      referenceToPhysical(aff, tabL.points, q * D, X);
      const po = q * nb;
      evalState(tabL.phi, po, IL, U);
      if (twoSided) evalState(tabR.phi, po, IR, UR);
      else if (kind === FaceKind.initial) physics.initialData(X, 0, UR);
      else if (kind === FaceKind.final) UR.set(U); // outflow in time: H takes U⁻ alone
      else physics.boundaryData(X, 0, UR);
      physics.numericalFlux(X, 0, U, UR, normal, h, hL, hR, f);
      const w = tabL.weights[q] * wscale;
      for (let i = 0; i < m; i++) {
        const H = w * h[i];
        for (let a = 0; a < nb; a++) residual[IL + i * nb + a] += H * tabL.phi[po + a];
        if (twoSided) for (let a = 0; a < nb; a++) residual[IR + i * nb + a] -= H * tabR.phi[po + a];
      }
      if (!values) continue;
      if (kind === FaceKind.slabInterface) {
        for (let ij = 0; ij < mm; ij++) {
          if (hR[ij] !== 0) throw new Error(`face ${f}: numerical flux depends on the later slab across a slab interface`);
        }
      }
      blockOuter(values, bLL, nb, bs, m, w, hL, tabL.phi, po, tabL.phi, po);
      if (twoSided) {
        blockOuter(values, bRL, nb, bs, m, -w, hL, tabR.phi, po, tabL.phi, po);
        if (kind !== FaceKind.slabInterface) {
          blockOuter(values, bLR, nb, bs, m, w, hR, tabL.phi, po, tabR.phi, po);
          blockOuter(values, bRR, nb, bs, m, -w, hR, tabR.phi, po, tabR.phi, po);
        }
      }
    }
    if ((f & 4095) === 4095) progress(nElements + f + 1, total);
  }
}

/** values[o + (i·nb + a)·bs + j·nb + b] += c · M[i, j] · x[xo + a] · y[yo + b]. */
function blockOuter(
  values: Float64Array, o: number, nb: number, bs: number, m: number, c: number,
  M: Float64Array, x: Float64Array, xo: number, y: Float64Array, yo: number,
): void {
  for (let i = 0; i < m; i++) {
    for (let j = 0; j < m; j++) {
      const cij = c * M[i * m + j];
      if (cij === 0) continue;
      for (let a = 0; a < nb; a++) {
        const s = cij * x[xo + a];
        const ro = o + (i * nb + a) * bs + j * nb;
        for (let b = 0; b < nb; b++) values[ro + b] += s * y[yo + b];
      }
    }
  }
}
