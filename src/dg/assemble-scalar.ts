import { FaceKind } from '../mesh/space-time.js';
import { createElementAffine, elementAffine, faceOutwardNormalFromAffine, faceLocalVertices, referenceToPhysical } from '../mesh/geometry.js';
import { isTimeFace, leftFaceFrame, rightFaceOrder } from './face-coupling.js';
import type { ScalarPhysics } from './physics/types.js';
import type { Discretization, ProgressSink } from './assemble.js';

/**
 * Residual and exact Jacobian of the space-time DG discretization of a scalar law
 * ∇_{x,t}·G(u) = ν Δ_x u on every simplex K (test function v, basis φ, |K|-scaled orthonormal):
 *
 *   R_K(u; v) = −∫_K G(u)·∇v  +  ∫_{∂K} H(u⁻, u⁺; n) v
 *               + ν [ ∫_K ∇_x u·∇_x v − ∫_F {∇_x u}·n_x [v] − ∫_F {∇_x v}·n_x [u] + ∫_F σ_F |n_x|² [u][v] ]
 *
 * (space-time DG for conservation laws: e.g. van der Vegt & van der Ven, J. Comput. Phys. 182,
 * 2002; interior penalty: Arnold, Brezzi, Cockburn & Marini, SINUM 39, 2002). n = (n_x, n_t) is the
 * unit space-time normal out of the left element, [u] = u⁻ − u⁺, {·} the average. On slab
 * interfaces and on t = 0, T faces n_x = 0 exactly, so the diffusion terms vanish there and the
 * flux is the earlier slab's (or the initial) value. Boundary faces take u⁺ from the physics'
 * data (t = 0: initial condition; space boundary: inflow data, Dirichlet/Nitsche for ν > 0).
 *
 * Penalty σ_F = ν (p+1)(p+D)/D · max_{K ∋ F} |∂K|/|K| with D = d + 1: the simplex trace-inverse
 * constant (p+1)(p+D)/D (Warburton & Hesthaven, CMAME 192, 2003) in the form used by Shahbazi
 * (J. Comput. Phys. 205, 2005) for an explicit SIPG penalty; taking the whole surface |∂K| bounds
 * Shahbazi's per-element sum from above (from memory), which keeps the method coercive
 * (Epshteyn & Rivière, J. Comput. Appl. Math. 206, 2007, on the required size of σ).
 */
export function assembleScalar(
  disc: Discretization, physics: ScalarPhysics, state: Float64Array | null,
  values: Float64Array | null, residual: Float64Array, progress: ProgressSink,
): void {
  const { mesh, tables, ordering, pattern } = disc;
  const { inv } = ordering;
  const d = mesh.dim;
  const D = d + 1;
  const nb = tables.nb;
  const bb = nb * nb;
  const vol = tables.volume;
  const nu = physics.diffusivity;
  const p = tables.order;
  const aff = createElementAffine(D);
  const affR = createElementAffine(D);
  const X = new Float64Array(D);
  const g = new Float64Array(D);
  const dg = new Float64Array(D);
  const G = new Float64Array(D);
  const DG = new Float64Array(D);
  const flux = new Float64Array(3);
  const data = new Float64Array(1);
  const normal = new Float64Array(D);
  const rightOrder = new Int32Array(D);
  const ta = new Float64Array(nb);
  const gpL = new Float64Array(nb * d);
  const gpR = new Float64Array(nb * d);
  const dnL = new Float64Array(nb);
  const dnR = new Float64Array(nb);
  const gradU = new Float64Array(d);
  const constantDG = physics.alignVelocity !== null && physics.state === null && physics.name !== 'burgers'
    ? Float64Array.from([...physics.alignVelocity, 1])
    : null;
  const nElements = mesh.nElements;
  const total = nElements + mesh.nFaces;

  // Surface-to-volume ratio per element for the penalty.
  let surfaceRatio: Float64Array | null = null;
  if (nu > 0) {
    surfaceRatio = new Float64Array(nElements);
    let fact = 1;
    for (let k = 2; k <= D; k++) fact *= k;
    for (let e = 0; e < nElements; e++) {
      elementAffine(mesh, e, aff);
      let s = 0;
      for (let f = 0; f <= D; f++) s += faceOutwardNormalFromAffine(aff, f, normal);
      surfaceRatio[e] = s / (aff.absDet / fact);
    }
  }
  const penaltyConstant = ((p + 1) * (p + D)) / D;

  // ---- volume terms ----
  for (let e = 0; e < nElements; e++) {
    elementAffine(mesh, e, aff);
    const Ji = aff.inverse;
    const det = aff.absDet;
    const I = inv[e];
    const uo = I * nb;
    const diag = values ? pattern.diagonal[e] * bb : 0;
    if (constantDG && nu === 0 && !state) {
      // Constant flux Jacobian and zero state: −det Σ_l (J⁻¹ dG)_l S_l, no quadrature loop (with a
      // state the loop below also adds the state's volume term −∫ G(u)·∇v to the residual).
      if (values) {
        for (let l = 0; l < D; l++) {
          let s = 0;
          for (let k = 0; k < D; k++) s += Ji[l * D + k] * constantDG[k];
          DG[l] = -det * s;
        }
        const S = vol.convection;
        for (let l = 0; l < D; l++) {
          const c = DG[l];
          if (c === 0) continue;
          const so = l * bb;
          for (let q = 0; q < bb; q++) values[diag + q] += c * S[so + q];
        }
      }
    } else {
      for (let q = 0; q < vol.nq; q++) {
        referenceToPhysical(aff, vol.points, q * D, X);
        const po = q * nb;
        let u = 0;
        if (state) for (let b = 0; b < nb; b++) u += vol.phi[po + b] * state[uo + b];
        physics.flux(X, 0, u, g, dg);
        for (let l = 0; l < D; l++) {
          let s = 0, t = 0;
          for (let k = 0; k < D; k++) { s += Ji[l * D + k] * g[k]; t += Ji[l * D + k] * dg[k]; }
          G[l] = s;
          DG[l] = t;
        }
        const w = vol.weights[q] * det;
        for (let a = 0; a < nb; a++) {
          const go = (po + a) * D;
          let r = 0, c = 0;
          for (let l = 0; l < D; l++) { r += vol.grad[go + l] * G[l]; c += vol.grad[go + l] * DG[l]; }
          if (state) residual[uo + a] -= w * r;
          ta[a] = w * c;
        }
        if (values) {
          for (let a = 0; a < nb; a++) {
            const c = ta[a];
            const ro = diag + a * nb;
            for (let b = 0; b < nb; b++) values[ro + b] -= c * vol.phi[po + b];
          }
        }
        if (nu > 0) {
          physicalGradients(vol.grad, po, nb, D, d, Ji, gpL);
          for (let k = 0; k < d; k++) {
            let s = 0;
            if (state) for (let b = 0; b < nb; b++) s += gpL[b * d + k] * state[uo + b];
            gradU[k] = s;
          }
          const wn = w * nu;
          for (let a = 0; a < nb; a++) {
            let r = 0;
            for (let k = 0; k < d; k++) r += gpL[a * d + k] * gradU[k];
            if (state) residual[uo + a] += wn * r;
            if (values) {
              const ro = diag + a * nb;
              for (let b = 0; b < nb; b++) {
                let s = 0;
                for (let k = 0; k < d; k++) s += gpL[a * d + k] * gpL[b * d + k];
                values[ro + b] += wn * s;
              }
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
    const timeFace = isTimeFace(kind);
    const twoSided = R >= 0;
    const tabL = tables.face(faceLocalVertices(D, faceLeftLocal[f]));
    let tabR = tabL;
    if (twoSided) {
      rightFaceOrder(mesh, f, rightOrder);
      tabR = tables.face(rightOrder);
      if (nu > 0) elementAffine(mesh, R, affR);
    }
    const IL = inv[L] * nb;
    const IR = twoSided ? inv[R] * nb : 0;
    const bLL = faceBlocks[4 * f] * bb, bLR = faceBlocks[4 * f + 1] * bb;
    const bRL = faceBlocks[4 * f + 2] * bb, bRR = faceBlocks[4 * f + 3] * bb;
    const wscale = area * tables.faceFactorial;
    let n2 = 0;
    for (let k = 0; k < d; k++) n2 += normal[k] * normal[k];
    const diffusive = nu > 0 && !timeFace && (twoSided || kind === FaceKind.spaceBoundary);
    const sigma = diffusive
      ? nu * penaltyConstant * Math.max(surfaceRatio![L], twoSided ? surfaceRatio![R] : 0)
      : 0;
    if (constantDG && nu === 0 && !state) {
      // Linear flux with a constant velocity: β is constant on the flat face, so every block is a
      // multiple of a cached reference face mass matrix; only boundary data needs point values.
      physics.numericalFlux(X, 0, 1, 0, normal, flux);
      const bp = flux[1] * wscale, bm = flux[2] * wscale;
      if (values) {
        addScaled(values, bLL, bp, tables.faceMass(tabL, tabL));
        if (twoSided) {
          addScaled(values, bRL, -bp, tables.faceMass(tabR, tabL));
          if (kind === FaceKind.slabInterface) {
            if (bm !== 0) throw new Error(`face ${f}: numerical flux depends on the later slab across a slab interface`);
          } else {
            addScaled(values, bLR, bm, tables.faceMass(tabL, tabR));
            addScaled(values, bRR, -bm, tables.faceMass(tabR, tabR));
          }
        }
      }
      if (!twoSided && bm !== 0 && (kind === FaceKind.initial || kind === FaceKind.spaceBoundary)) {
        for (let q = 0; q < tabL.nq; q++) {
          referenceToPhysical(aff, tabL.points, q * D, X);
          if (kind === FaceKind.initial) physics.initialData(X, 0, data);
          else physics.boundaryData(X, 0, data);
          const c = tabL.weights[q] * bm * data[0];
          for (let a = 0; a < nb; a++) residual[IL + a] += c * tabL.phi[q * nb + a];
        }
      }
      if ((f & 4095) === 4095) progress(nElements + f + 1, total);
      continue;
    }
    for (let q = 0; q < tabL.nq; q++) {
      referenceToPhysical(aff, tabL.points, q * D, X);
      const po = q * nb;
      let uL = 0;
      if (state) for (let b = 0; b < nb; b++) uL += tabL.phi[po + b] * state[IL + b];
      let uR = 0;
      if (twoSided) {
        if (state) for (let b = 0; b < nb; b++) uR += tabR.phi[po + b] * state[IR + b];
      } else if (kind === FaceKind.initial) {
        physics.initialData(X, 0, data);
        uR = data[0];
      } else if (kind === FaceKind.spaceBoundary) {
        physics.boundaryData(X, 0, data);
        uR = data[0];
      }
      physics.numericalFlux(X, 0, uL, uR, normal, flux);
      const w = tabL.weights[q] * wscale;
      const H = w * flux[0], hL = w * flux[1], hR = w * flux[2];
      for (let a = 0; a < nb; a++) residual[IL + a] += H * tabL.phi[po + a];
      if (twoSided) for (let a = 0; a < nb; a++) residual[IR + a] -= H * tabR.phi[po + a];
      if (values) {
        outer(values, bLL, nb, hL, tabL.phi, po, tabL.phi, po);
        if (twoSided) {
          outer(values, bRL, nb, -hL, tabR.phi, po, tabL.phi, po);
          if (kind === FaceKind.slabInterface) {
            if (hR !== 0) throw new Error(`face ${f}: numerical flux depends on the later slab across a slab interface`);
          } else {
            outer(values, bLR, nb, hR, tabL.phi, po, tabR.phi, po);
            outer(values, bRR, nb, -hR, tabR.phi, po, tabR.phi, po);
          }
        }
      }
      if (!diffusive) continue;
      // Interior penalty terms (see the header): normal derivatives ν ∇_x φ·n_x on both sides.
      physicalGradients(tabL.grad, po, nb, D, d, aff.inverse, gpL);
      for (let b = 0; b < nb; b++) {
        let s = 0;
        for (let k = 0; k < d; k++) s += gpL[b * d + k] * normal[k];
        dnL[b] = nu * s;
      }
      let fluxNL = 0;
      if (state) for (let b = 0; b < nb; b++) fluxNL += dnL[b] * state[IL + b];
      const pen = sigma * n2;
      if (twoSided) {
        physicalGradients(tabR.grad, po, nb, D, d, affR.inverse, gpR);
        for (let b = 0; b < nb; b++) {
          let s = 0;
          for (let k = 0; k < d; k++) s += gpR[b * d + k] * normal[k];
          dnR[b] = nu * s;
        }
        let fluxNR = 0;
        if (state) for (let b = 0; b < nb; b++) fluxNR += dnR[b] * state[IR + b];
        const jump = uL - uR;
        const avg = 0.5 * (fluxNL + fluxNR);
        for (let a = 0; a < nb; a++) {
          const vL = tabL.phi[po + a], vR = tabR.phi[po + a];
          residual[IL + a] += w * (-avg * vL - 0.5 * dnL[a] * jump + pen * jump * vL);
          residual[IR + a] += w * (avg * vR - 0.5 * dnR[a] * jump - pen * jump * vR);
        }
        if (values) {
          for (let a = 0; a < nb; a++) {
            const vLa = tabL.phi[po + a], vRa = tabR.phi[po + a];
            for (let b = 0; b < nb; b++) {
              const vLb = tabL.phi[po + b], vRb = tabR.phi[po + b];
              values[bLL + a * nb + b] += w * (-0.5 * dnL[b] * vLa - 0.5 * dnL[a] * vLb + pen * vLa * vLb);
              values[bLR + a * nb + b] += w * (-0.5 * dnR[b] * vLa + 0.5 * dnL[a] * vRb - pen * vLa * vRb);
              values[bRL + a * nb + b] += w * (0.5 * dnL[b] * vRa - 0.5 * dnR[a] * vLb - pen * vRa * vLb);
              values[bRR + a * nb + b] += w * (0.5 * dnR[b] * vRa + 0.5 * dnR[a] * vRb + pen * vRa * vRb);
            }
          }
        }
      } else {
        // Dirichlet (Nitsche) with the boundary data uR.
        const jump = uL - uR;
        for (let a = 0; a < nb; a++) {
          const vL = tabL.phi[po + a];
          residual[IL + a] += w * (-fluxNL * vL - dnL[a] * jump + pen * jump * vL);
        }
        if (values) {
          for (let a = 0; a < nb; a++) {
            const vLa = tabL.phi[po + a];
            for (let b = 0; b < nb; b++) {
              const vLb = tabL.phi[po + b];
              values[bLL + a * nb + b] += w * (-dnL[b] * vLa - dnL[a] * vLb + pen * vLa * vLb);
            }
          }
        }
      }
    }
    if ((f & 4095) === 4095) progress(nElements + f + 1, total);
  }
}

/** values[o + q] += c · M[q], q < nb². */
function addScaled(values: Float64Array, o: number, c: number, M: Float64Array): void {
  if (c === 0) return;
  for (let q = 0; q < M.length; q++) values[o + q] += c * M[q];
}

/** values[o + a·nb + b] += c · x[xo + a] · y[yo + b]. */
function outer(values: Float64Array, o: number, nb: number, c: number, x: Float64Array, xo: number, y: Float64Array, yo: number): void {
  if (c === 0) return;
  for (let a = 0; a < nb; a++) {
    const s = c * x[xo + a];
    const ro = o + a * nb;
    for (let b = 0; b < nb; b++) values[ro + b] += s * y[yo + b];
  }
}

/** Spatial physical gradients gp[b·d + k] = Σ_l ∂φ_b/∂ξ_l · (J⁻¹)_{lk}, k < d. */
function physicalGradients(
  grad: Float64Array, po: number, nb: number, D: number, d: number, Ji: Float64Array, gp: Float64Array,
): void {
  for (let b = 0; b < nb; b++) {
    const go = (po + b) * D;
    for (let k = 0; k < d; k++) {
      let s = 0;
      for (let l = 0; l < D; l++) s += grad[go + l] * Ji[l * D + k];
      gp[b * d + k] = s;
    }
  }
}
