import { FaceKind } from '../mesh/space-time.js';
import { createElementAffine, elementAffine, faceLocalVertices, referenceToPhysical } from '../mesh/geometry.js';
import { leftFaceFrame, rightFaceOrder } from './face-coupling.js';
import { addProductNT, addProductNTPair, transposeTable } from './dense-products.js';
import type { FaceTable, ReferenceTables } from './reference-tables.js';
import { orthonormalBasis, basisDimension, MAX_BASIS_ORDER } from './basis.js';
import { simplexQuadrature } from './quadrature.js';
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
 *  - volume: the weighted spatial flux Jacobians C_{k,ij}(q) = w_q ∂F_{k,i}/∂U_j (k < d) are
 *    gathered over all points first; then moments against the orthonormal polynomials of degree
 *    2p − 1, one small product to M_{k,ij}[s, b] = Σ_q φ_s C_{k,ij} φ_b (φ_s of degree ≤ p − 1), and
 *    block (i, j) −= Σ_k G_k M_{k,ij} with ∂_k φ_a = Σ_s G_k[a, s] φ_s (volumeMoments). The time
 *    component ∂G_d/∂U = I (the interface contract, checked) gives −|det J| Σ_l J⁻¹_{ld} S_l on the
 *    diagonal blocks i = j, S_l the reference convection integrals.
 *  - faces: z_ij(q) = w_q (∂H_i/∂U_j)(q) for either side, N_ij = Ψ diag(z_ij) Ψᵀ on the basis ψ of
 *    the face (degree p in D − 1 variables) and block (i, j) of the element pairs ±T N_ij T'ᵀ with
 *    φ = T ψ on the face (faceRestriction).
 * The residual is summed point by point exactly as in the reference (identical).
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

  const C = new Float64Array(d * mm * nqv); // C[(k·mm + ij)·nqv + q] = w_q ∂F_{k,i}/∂U_j
  const activeK = new Uint8Array(d * mm);
  const identity = new Float64Array(mm); // identity[i·m + j] = δ_ij
  for (let i = 0; i < m; i++) identity[i * m + i] = 1;
  const mo = values ? volumeMoments(tables) : null;
  const nbL = mo ? mo.nbL : 0, nP = mo ? mo.nP : 0;
  const actIndex = new Int32Array(d * mm);
  const Cc = new Float64Array(mo ? d * mm * nqv : 0);
  const mom = new Float64Array(d * mm * nP);
  const Mt = new Float64Array(d * mm * nb * nbL);
  const Gk = new Float64Array(nb * d * nbL); // Gk[a·d·nbL + k·nbL + s] = Σ_l J⁻¹_{lk} S_l[a][s]
  const Bij = new Float64Array(mm * nb * d * nbL); // Bij[(ij·nb + b)·d·nbL + k·nbL + s] = M_{k,ij}[s, b]
  let nqfMax = 0;
  const fr = faceRestriction(tables);
  const nbF = fr.nbF;
  const Z = {
    L: new Float64Array(0), R: new Float64Array(0), W: new Float64Array(0),
    N: new Float64Array(mm * nbF * nbF), PT: new Float64Array(mm * nb * nbF),
  };
  const activeL = new Uint8Array(mm), activeR = new Uint8Array(mm);

  const evalState = (phi: Float64Array, po: number, base: number, out: Float64Array): void => {
    if (!state) { out.fill(0); return; }
    for (let i = 0; i < m; i++) {
      const so = base + i * nb;
      let s = 0;
      for (let b = 0; b < nb; b++) s += phi[po + b]! * state[so + b]!;
      out[i] = s;
    }
  };

  /**
   * Volume blocks of element e (Ji, det, diag as below) from the gathered C: moments
   * mom_{k,ij}[r] = Σ_q P_r(q) C_{k,ij}(q), then M_{k,ij}[s, b] = Σ_r E[s, b, r] mom_{k,ij}[r] and
   * block (i, j) −= Σ_k G_k M_{k,ij} (see volumeMoments).
   */
  let eJi: Float64Array = aff.inverse, eDiag = 0;
  const volumeBlocksByMoments = (): void => {
    const vals = values!, m0 = mo!;
    let nAct = 0;
    for (let kij = 0; kij < d * mm; kij++) {
      if (!activeK[kij]) { actIndex[kij] = -1; continue; }
      const src = kij * nqv, dst = nAct * nqv;
      for (let q = 0; q < nqv; q++) Cc[dst + q] = C[src + q];
      actIndex[kij] = nAct++;
    }
    if (nAct === 0) return;
    mom.fill(0, 0, nAct * nP);
    addProductNT(Cc, 0, nAct, m0.PT, 0, nP, nqv, 1, mom, 0, nP);
    const nm = nb * nbL;
    Mt.fill(0, 0, nAct * nm);
    addProductNT(mom, 0, nAct, m0.E, 0, nm, nP, 1, Mt, 0, nm);
    const S = vol.convection, K = d * nbL;
    for (let a = 0; a < nb; a++) {
      for (let k = 0; k < d; k++) {
        for (let sI = 0; sI < nbL; sI++) {
          let g = 0;
          for (let l = 0; l < D; l++) g += eJi[l * D + k] * S[l * nb * nb + a * nb + sI];
          Gk[a * K + k * nbL + sI] = g;
        }
      }
    }
    const nBK = nb * K;
    for (let ij = 0; ij < mm; ij++) {
      for (let k = 0; k < d; k++) {
        const act = actIndex[k * mm + ij];
        for (let b = 0; b < nb; b++) {
          const o = ij * nBK + b * K + k * nbL;
          const src = act * nm + b * nbL;
          for (let sI = 0; sI < nbL; sI++) Bij[o + sI] = act < 0 ? 0 : Mt[src + sI];
        }
      }
    }
    // block row i, all j at once: values[(i·nb + a)·bs + j·nb + b] −= Σ Gk[a, ·] Bij[(i·m + j)·nb + b, ·]
    for (let i = 0; i < m; i++) {
      let any = false;
      for (let k = 0; k < d; k++) for (let j = 0; j < m; j++) if (actIndex[k * mm + i * m + j] >= 0) any = true;
      if (any) addProductNT(Gk, 0, nb, Bij, i * m * nBK, m * nb, K, -1, vals, eDiag + i * nb * bs, bs);
    }
  };

  // ---- volume terms ----
  const vgrad = vol.grad;
  for (let e = 0; e < nElements; e++) {
    elementAffine(mesh, e, aff);
    const Ji = aff.inverse;
    const det = aff.absDet;
    const uo = inv[e] * bs;
    const diag = values ? pattern.diagonal[e] * bb : 0;
    eJi = Ji; eDiag = diag;
    if (values) activeK.fill(0);
    for (let q = 0; q < nqv; q++) {
      referenceToPhysical(aff, vol.points, q * D, X);
      const po = q * nb;
      evalState(vol.phi, po, uo, U);
      physics.volumeFlux(X, 0, U, G, dG, e);
      const w = vol.weights[q] * det;
      if (D === 3) {
        // the general loops below written out for D = 3: the same sums in the same order (identical)
        for (let l = 0; l < 3; l++) {
          const j0 = Ji[l * 3]!, j1 = Ji[l * 3 + 1]!, j2 = Ji[l * 3 + 2]!;
          for (let i = 0; i < m; i++) PG[l * m + i] = 0 + j0 * G[i]! + j1 * G[m + i]! + j2 * G[2 * m + i]!;
        }
        for (let a = 0; a < nb; a++) {
          const go = (po + a) * 3;
          const g0 = vgrad[go]!, g1 = vgrad[go + 1]!, g2 = vgrad[go + 2]!;
          for (let i = 0; i < m; i++) {
            residual[uo + i * nb + a] -= w * (0 + g0 * PG[i]! + g1 * PG[m + i]! + g2 * PG[2 * m + i]!);
          }
        }
      } else {
        for (let l = 0; l < D; l++) {
          for (let i = 0; i < m; i++) {
            let s = 0;
            for (let k = 0; k < D; k++) s += Ji[l * D + k] * G[k * m + i];
            PG[l * m + i] = s;
          }
        }
        for (let a = 0; a < nb; a++) {
          const go = (po + a) * D;
          for (let i = 0; i < m; i++) {
            let r = 0;
            for (let l = 0; l < D; l++) r += vgrad[go + l] * PG[l * m + i];
            residual[uo + i * nb + a] -= w * r;
          }
        }
      }
      if (values) {
        for (let kij = 0; kij < d * mm; kij++) {
          const c = w * dG[kij];
          C[kij * nqv + q] = c;
          if (c !== 0) activeK[kij] = 1;
        }
        const to = d * mm;
        for (let ij = 0; ij < mm; ij++) {
          if (dG[to + ij] !== identity[ij]) throw new Error(`element ${e}: the time component of ∂G/∂U is not the identity`);
        }
      }
    }
    if (values && mo) volumeBlocksByMoments();
    if (values) {
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

  /**
   * Face blocks of one side's coefficients z_ij(q) = w_q ∂H_i/∂U_j (Zs[ij·nq + q]): for each active
   * (i, j), N_ij = Ψ diag(z_ij) Ψᵀ (all (i, j) in one product against the products ψ_s ψ_t) and PT_ij[b, s] = Σ_t Tc[b, t] N_ij[s, t]
   * (Tc: that side's restriction), then per row i of blocks one product over all j:
   * block A (rows T_A) += T_A PTᵀ and block B (rows T_B, when present) −= T_B PTᵀ.
   */
  const faceSide = (
    Zs: Float64Array, active: Uint8Array, nq: number, Tc: Float64Array,
    TA: Float64Array, blockA: number, TB: Float64Array | null, blockB: number,
  ): void => {
    const vals = values!;
    const { W, N, PT } = Z;
    // N_ij[s, t] = Σ_q z_ij(q) ψ_s(q) ψ_t(q), from the nbF(nbF + 1)/2 products ψ_s ψ_t (s ≤ t)
    let nA = 0;
    for (let ij = 0; ij < mm; ij++) {
      if (!active[ij]) continue;
      const src = ij * nq, dst = nA * nq;
      for (let q = 0; q < nq; q++) W[dst + q] = Zs[src + q]!;
      nA++;
    }
    if (nA === 0) return;
    const nU = fr.nPairs;
    N.fill(0, 0, nA * nU);
    addProductNT(W, 0, nA, fr.pairsT, 0, nU, nq, 1, N, 0, nU);
    const nn = nbF * nbF;
    for (let a2 = nA - 1; a2 >= 0; a2--) {
      // unpack in place from the back: packed row a2 (nU entries at a2·nU) → full nbF² at a2·nn
      let u = a2 * nU + nU - 1;
      for (let sI = nbF - 1; sI >= 0; sI--) {
        for (let tI = nbF - 1; tI >= sI; tI--) {
          const v = N[u--]!;
          N[a2 * nn + sI * nbF + tI] = v;
          N[a2 * nn + tI * nbF + sI] = v;
        }
      }
    }
    const nPT = nb * nbF;
    let ai = 0;
    for (let ij = 0; ij < mm; ij++) {
      PT.fill(0, ij * nPT, (ij + 1) * nPT);
      if (!active[ij]) continue;
      addProductNT(Tc, 0, nb, N, ai * nn, nbF, nbF, 1, PT, ij * nPT, nbF);
      ai++;
    }
    for (let i = 0; i < m; i++) {
      let any = false;
      for (let j = 0; j < m; j++) if (active[i * m + j]) any = true;
      if (!any) continue;
      const po = i * m * nPT;
      if (TB) addProductNTPair(TA, TB, 0, nb, PT, po, m * nb, nbF, 1, vals, blockA + i * nb * bs, -1, vals, blockB + i * nb * bs, bs);
      else addProductNT(TA, 0, nb, PT, po, m * nb, nbF, 1, vals, blockA + i * nb * bs, bs);
    }
  };

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
    const phiL = tabL.phi, phiR = tabR.phi;
    if (values && nq > nqfMax) {
      nqfMax = nq;
      Z.L = new Float64Array(mm * nq); Z.R = new Float64Array(mm * nq); Z.W = new Float64Array(mm * nq);
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
        for (let a = 0; a < nb; a++) residual[IL + i * nb + a] += H * phiL[po + a];
        if (twoSided) for (let a = 0; a < nb; a++) residual[IR + i * nb + a] -= H * phiR[po + a];
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
      const TL = fr.T(tabL), TR = twoSided ? fr.T(tabR) : TL;
      faceSide(Z.L, activeL, nq, TL, TL, bLL, twoSided ? TR : null, bRL);
      if (useR) faceSide(Z.R, activeR, nq, TR, TL, bLR, TR, bRR);
    }
    if ((f & 4095) === 4095) progress(nElements + f + 1, total);
  }
}

/**
 * The element basis restricted to a face has degree p in the face's D − 1 coordinates ζ, so
 * φ_a(ζ) = Σ_s T[a, s] ψ_s(ζ) exactly with ψ the nbF orthonormal polynomials of degree ≤ p on the
 * unit (D − 1)-simplex and T[a, s] = Σ_q w_q φ_a(q) ψ_s(q) (the face rule integrates degree 2p).
 * A face block Σ_q z(q) φ_a(q) φ'_b(q) is then T (Ψ diag(z) Ψᵀ) T'ᵀ: nbF² instead of nb² products
 * per point. ψT[s·nq + q] = ψ_s at the face rule's points (the same ζ_q for every face table);
 * T(table) is cached per table.
 */
interface FaceRestriction { nbF: number; psiT: Float64Array; nPairs: number; pairsT: Float64Array; T(tab: FaceTable): Float64Array }
const restrictionCache = new WeakMap<ReferenceTables, FaceRestriction>();

function faceRestriction(tables: ReferenceTables): FaceRestriction {
  let fr = restrictionCache.get(tables);
  if (fr) return fr;
  const D = tables.D, nb = tables.nb;
  const canonical = Array.from({ length: D }, (_, i) => i); // face vertices 0..D−1: ξ_{i−1} = ζ_{i−1}
  const ref = tables.face(canonical);
  const nq = ref.nq;
  const zeta = new Float64Array(nq * (D - 1));
  for (let q = 0; q < nq; q++) for (let i = 0; i < D - 1; i++) zeta[q * (D - 1) + i] = ref.points[q * D + i]!;
  const psi = orthonormalBasis((D - 1) as 1 | 2 | 3, tables.order);
  const nbF = psi.nBasis;
  const psiT = transposeTable(psi.evaluate(zeta, nq).values, nq, nbF);
  const cache = new Map<FaceTable, Float64Array>();
  const T = (tab: FaceTable): Float64Array => {
    let t = cache.get(tab);
    if (!t) {
      t = new Float64Array(nb * nbF);
      for (let q = 0; q < nq; q++) {
        const w = tab.weights[q]!;
        for (let a = 0; a < nb; a++) {
          const c = w * tab.phi[q * nb + a]!;
          for (let s = 0; s < nbF; s++) t[a * nbF + s] += c * psiT[s * nq + q]!;
        }
      }
      cache.set(tab, t);
    }
    return t;
  };
  // pairsT[u·nq + q] = ψ_s(q) ψ_t(q) for the pairs s ≤ t in row order (u = 0 … nbF(nbF + 1)/2 − 1)
  const nPairs = (nbF * (nbF + 1)) / 2;
  const pairsT = new Float64Array(nPairs * nq);
  let u = 0;
  for (let sI = 0; sI < nbF; sI++) {
    for (let tI = sI; tI < nbF; tI++, u++) for (let q = 0; q < nq; q++) pairsT[u * nq + q] = psiT[sI * nq + q]! * psiT[tI * nq + q]!;
  }
  fr = { nbF, psiT, nPairs, pairsT, T };
  restrictionCache.set(tables, fr);
  return fr;
}

/**
 * Tables for the volume blocks by moments (p ≥ 1): the physical gradients are degree p − 1, so
 * ∂_k φ_a = Σ_{s<nbL} G_k[a, s] φ_s exactly (the basis is hierarchical and orthonormal, G_k from the
 * convection integrals); and φ_s φ_b has degree 2p − 1, so φ_s φ_b = Σ_r E[s, b, r] P_r exactly with
 * P the nP orthonormal polynomials of degree ≤ 2p − 1 and E[s, b, r] = ∫ φ_s φ_b P_r (a rule of
 * degree 4p − 2). Hence Σ_q C(q) ∂_k φ_a(q) φ_b(q) = Σ_s G_k[a, s] Σ_r E[s, b, r] Σ_q C(q) P_r(q) for
 * any C — the same sum as the point-by-point one, evaluated with nP moments instead of nb² products
 * per point. PT[r·nq + q] = P_r(q) at the volume points, E[(b·nbL + s)·nP + r]. null for p = 0.
 */
interface VolumeMoments { nbL: number; nP: number; PT: Float64Array; E: Float64Array }
const momentCache = new WeakMap<ReferenceTables, VolumeMoments | null>();

function volumeMoments(tables: ReferenceTables): VolumeMoments | null {
  if (momentCache.has(tables)) return momentCache.get(tables)!;
  const p = tables.order, D = tables.D as 2 | 3 | 4, nb = tables.nb, vol = tables.volume;
  let out: VolumeMoments | null = null; // p = 0: constant basis, no gradients, no spatial volume blocks
  if (p >= 1) {
    if (2 * p - 1 > MAX_BASIS_ORDER) throw new RangeError(`assembleNonlinearSystem: order ${p} needs a basis of order ${2 * p - 1} (limit ${MAX_BASIS_ORDER})`);
    const nbL = basisDimension(D, p - 1);
    const P = orthonormalBasis(D, 2 * p - 1);
    const nP = P.nBasis;
    const PT = transposeTable(P.evaluate(vol.points, vol.nq).values, vol.nq, nP);
    const rule = simplexQuadrature(D, 4 * p - 2);
    const phi = tables.basis.evaluate(rule.points, rule.nPoints).values;
    const pr = P.evaluate(rule.points, rule.nPoints).values;
    const E = new Float64Array(nb * nbL * nP);
    for (let q = 0; q < rule.nPoints; q++) {
      const w = rule.weights[q]!;
      for (let b = 0; b < nb; b++) {
        for (let s = 0; s < nbL; s++) {
          const c = w * phi[q * nb + s]! * phi[q * nb + b]!;
          const o = (b * nbL + s) * nP;
          for (let r = 0; r < nP; r++) E[o + r] += c * pr[q * nP + r]!;
        }
      }
    }
    out = { nbL, nP, PT, E };
  }
  momentCache.set(tables, out);
  return out;
}
