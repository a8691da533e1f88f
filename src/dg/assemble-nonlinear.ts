import { FaceKind } from '../mesh/space-time.js';
import { createElementAffine, elementAffine, faceLocalVertices, referenceToPhysical } from '../mesh/geometry.js';
import { leftFaceFrame, rightFaceOrder } from './face-coupling.js';
import { addProductNT, transposeTable } from './dense-products.js';
import type { FaceTable, VolumeTable } from './reference-tables.js';
import type { NonlinearSystemPhysics } from './physics/types.js';
import type { Discretization, ProgressSink } from './assemble.js';

/**
 * Residual and exact Jacobian of space-time DG for a nonlinear system of m conservation laws
 * ∇_{x,t}·G(U) = 0 (no diffusion), on every simplex K with test functions φ_a per equation:
 *
 *   R_{K,i,a}(U) = −∫_K Σ_l G_{l,i}(U) ∂_l φ_a  +  ∫_{∂K} H_i(U⁻, U⁺; n) φ_a
 *
 * (the scalar form of assemble-scalar.ts, equation by equation; van der Vegt & van der Ven,
 * J. Comput. Phys. 182, 2002). The Jacobian differentiates both terms exactly through the
 * physics' ∂G/∂U and ∂H/∂U^±. Unknown (equation i, basis a) sits at i·nb + a of its block.
 * Slab interfaces require ∂H/∂U⁺ = 0 (the later slab never enters), checked face by face.
 *
 * How the Jacobian blocks are formed (the same sums as the point-by-point reference twin,
 * assemble-nonlinear-reference.ts, in another order, so equal to round-off):
 *  - volume: with the physical gradients ∂_k φ_a = Σ_l ∂_{ξ_l} φ_a J⁻¹_{lk} and the weighted
 *    spatial flux Jacobians C_{k,ij}(q) = w_q ∂F_{k,i}/∂U_j (k < d) gathered over all points first,
 *    block (i, j) is −Y_ij Φᵀ with Y_ij[a, q] = Σ_k ∂_k φ_a(q) C_{k,ij}(q): one dense product per
 *    (i, j) over the quadrature points. The time component ∂G_d/∂U = I (the interface contract,
 *    checked) gives −|det J| Σ_l J⁻¹_{ld} S_l on the diagonal blocks i = j, S_l the reference
 *    convection integrals.
 *  - faces: Z_ij[b, q] = w_q (∂H_i/∂U_j)(q) φ_b(q) for either side, then block (i, j) of the four
 *    element pairs is ±Φ_{L|R} Z_ijᵀ.
 * Pairs (i, j) whose coefficient is zero at every point are skipped, as the reference skips zero
 * coefficients point by point.
 */
export function assembleNonlinearSystem(
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
  const nqv = vol.nq;
  const aff = createElementAffine(D);
  const X = new Float64Array(D);
  const U = new Float64Array(m);
  const UR = new Float64Array(m);
  const G = new Float64Array(D * m);
  const dG = new Float64Array(D * mm);
  const PG = new Float64Array(D * m); // J⁻¹-mapped: PG[l·m + i] = Σ_k J⁻¹_{lk} G_{k,i}
  const h = new Float64Array(m);
  const hL = new Float64Array(mm);
  const hR = new Float64Array(mm);
  const normal = new Float64Array(D);
  const rightOrder = new Int32Array(D);
  const nElements = mesh.nElements;
  const total = nElements + mesh.nFaces;

  const vt = values ? volumeTransposed(vol, nb, D) : null;
  const pg = new Float64Array(d * nb * nqv); // physical gradients pg[(k·nb + a)·nqv + q], k < d
  const C = new Float64Array(d * mm * nqv); // C[(k·mm + ij)·nqv + q] = w_q ∂F_{k,i}/∂U_j
  const activeK = new Uint8Array(d * mm);
  const Y = new Float64Array(nb * nqv);
  let nqfMax = 0;
  const Z = { L: new Float64Array(0), R: new Float64Array(0), W: new Float64Array(0) };
  const activeL = new Uint8Array(mm), activeR = new Uint8Array(mm);

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
    if (vt) {
      for (let k = 0; k < d; k++) {
        for (let a = 0; a < nb; a++) {
          const o = (k * nb + a) * nqv;
          for (let q = 0; q < nqv; q++) {
            let s = 0;
            for (let l = 0; l < D; l++) s += vt.grad[(l * nb + a) * nqv + q] * Ji[l * D + k];
            pg[o + q] = s;
          }
        }
      }
      activeK.fill(0);
    }
    for (let q = 0; q < nqv; q++) {
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
      }
      const w = vol.weights[q] * det;
      for (let a = 0; a < nb; a++) {
        const go = (po + a) * D;
        for (let i = 0; i < m; i++) {
          let r = 0;
          for (let l = 0; l < D; l++) r += vol.grad[go + l] * PG[l * m + i];
          residual[uo + i * nb + a] -= w * r;
        }
      }
      if (vt) {
        for (let kij = 0; kij < d * mm; kij++) {
          const c = w * dG[kij];
          C[kij * nqv + q] = c;
          if (c !== 0) activeK[kij] = 1;
        }
        const to = d * mm;
        for (let ij = 0; ij < mm; ij++) {
          if (dG[to + ij] !== ((ij % (m + 1)) === 0 ? 1 : 0)) throw new Error(`element ${e}: the time component of ∂G/∂U is not the identity`);
        }
      }
    }
    if (vt && values) {
      for (let ij = 0; ij < mm; ij++) {
        let first = true;
        for (let k = 0; k < d; k++) {
          if (!activeK[k * mm + ij]) continue;
          const co = (k * mm + ij) * nqv;
          for (let a = 0; a < nb; a++) {
            const go = (k * nb + a) * nqv, yo = a * nqv;
            if (first) for (let q = 0; q < nqv; q++) Y[yo + q] = pg[go + q] * C[co + q];
            else for (let q = 0; q < nqv; q++) Y[yo + q] += pg[go + q] * C[co + q];
          }
          first = false;
        }
        if (first) continue;
        const i = (ij / m) | 0, j = ij - i * m;
        addProductNT(Y, 0, nb, vt.phi, 0, nb, nqv, -1, values, diag + i * nb * bs + j * nb, bs);
      }
      // time component: −|det J| Σ_l J⁻¹_{ld} S_l on each diagonal (i, i)
      const S = vol.convection;
      for (let a = 0; a < nb; a++) {
        for (let b = 0; b < nb; b++) {
          let s = 0;
          for (let l = 0; l < D; l++) s += Ji[l * D + d] * S[l * nb * nb + a * nb + b];
          const c = det * s;
          if (c === 0) continue;
          for (let i = 0; i < m; i++) values[diag + (i * nb + a) * bs + i * nb + b] -= c;
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
    const nq = tabL.nq;
    if (values && nq > nqfMax) {
      nqfMax = nq;
      Z.L = new Float64Array(mm * nq); Z.R = new Float64Array(mm * nq); Z.W = new Float64Array(nb * nq);
    }
    const IL = inv[L] * bs;
    const IR = twoSided ? inv[R] * bs : 0;
    const bLL = faceBlocks[4 * f] * bb, bLR = faceBlocks[4 * f + 1] * bb;
    const bRL = faceBlocks[4 * f + 2] * bb, bRR = faceBlocks[4 * f + 3] * bb;
    const wscale = area * tables.faceFactorial;
    const useR = twoSided && kind !== FaceKind.slabInterface;
    if (values) { activeL.fill(0); activeR.fill(0); }
    for (let q = 0; q < nq; q++) {
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
      for (let ij = 0; ij < mm; ij++) {
        const cL = w * hL[ij];
        Z.L[ij * nq + q] = cL;
        if (cL !== 0) activeL[ij] = 1;
        if (useR) {
          const cR = w * hR[ij];
          Z.R[ij * nq + q] = cR;
          if (cR !== 0) activeR[ij] = 1;
        }
      }
    }
    if (values) {
      const phiL = faceTransposed(tabL, nb);
      const phiR = twoSided ? faceTransposed(tabR, nb) : phiL;
      const W = Z.W;
      for (let ij = 0; ij < mm; ij++) {
        const i = (ij / m) | 0, j = ij - i * m;
        const off = i * nb * bs + j * nb;
        if (activeL[ij]) {
          weightRows(Z.L, ij * nq, phiL, nb, nq, W);
          addProductNT(phiL, 0, nb, W, 0, nb, nq, 1, values, bLL + off, bs);
          if (twoSided) addProductNT(phiR, 0, nb, W, 0, nb, nq, -1, values, bRL + off, bs);
        }
        if (useR && activeR[ij]) {
          weightRows(Z.R, ij * nq, phiR, nb, nq, W);
          addProductNT(phiL, 0, nb, W, 0, nb, nq, 1, values, bLR + off, bs);
          addProductNT(phiR, 0, nb, W, 0, nb, nq, -1, values, bRR + off, bs);
        }
      }
    }
    if ((f & 4095) === 4095) progress(nElements + f + 1, total);
  }
}

/** W[b·nq + q] = z[zo + q] · φ[b·nq + q]. */
function weightRows(z: Float64Array, zo: number, phi: Float64Array, nb: number, nq: number, W: Float64Array): void {
  for (let b = 0; b < nb; b++) {
    const o = b * nq;
    for (let q = 0; q < nq; q++) W[o + q] = z[zo + q]! * phi[o + q]!;
  }
}

interface VolumeTransposed { phi: Float64Array; grad: Float64Array }
const volumeCache = new WeakMap<VolumeTable, VolumeTransposed>();
const faceCache = new WeakMap<FaceTable, Float64Array>();

/** φ_b(q) as phi[b·nq + q] and ∂_{ξ_l} φ_a(q) as grad[(l·nb + a)·nq + q] (cached per table). */
function volumeTransposed(vol: VolumeTable, nb: number, D: number): VolumeTransposed {
  let t = volumeCache.get(vol);
  if (!t) {
    const nq = vol.nq;
    const grad = new Float64Array(D * nb * nq);
    for (let q = 0; q < nq; q++) {
      for (let a = 0; a < nb; a++) for (let l = 0; l < D; l++) grad[(l * nb + a) * nq + q] = vol.grad[(q * nb + a) * D + l]!;
    }
    t = { phi: transposeTable(vol.phi, nq, nb), grad };
    volumeCache.set(vol, t);
  }
  return t;
}

function faceTransposed(tab: FaceTable, nb: number): Float64Array {
  let t = faceCache.get(tab);
  if (!t) { t = transposeTable(tab.phi, tab.nq, nb); faceCache.set(tab, t); }
  return t;
}
