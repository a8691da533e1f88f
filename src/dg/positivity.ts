import { faceLocalVertices } from '../mesh/geometry.js';
import type { Discretization } from './assemble.js';
import type { NonlinearSystemPhysics } from './physics/types.js';

/**
 * Scale the non-constant modes of each element toward its mean, U_θ = Ū + θ (U − Ū) with the
 * largest θ ∈ [0, 1] found by bisection (20 halvings) at which the physics accepts the state at
 * every volume and face quadrature point of the element (in its own vertex order) — the scaling
 * limiter of Zhang & Shu (J. Comput. Phys. 229, 2010), applied once to the linearization state,
 * not inside a time-stepping scheme. The mean keeps mode 0 (the orthonormal φ₀ is constant), so
 * element averages are unchanged. Returns the number of elements scaled; state is changed in place.
 */
export function scaleToAdmissible(disc: Discretization, physics: NonlinearSystemPhysics, state: Float64Array): number {
  const admissible = physics.admissible;
  if (!admissible) return 0;
  const { mesh, tables, ordering } = disc;
  const D = mesh.dim + 1;
  const nb = tables.nb;
  const m = physics.nEquations;
  const bs = m * nb;
  const phis: { phi: Float64Array; nq: number }[] = [{ phi: tables.volume.phi, nq: tables.volume.nq }];
  for (let f = 0; f <= D; f++) {
    const t = tables.face(faceLocalVertices(D, f));
    phis.push({ phi: t.phi, nq: t.nq });
  }
  const U = new Float64Array(m), mean = new Float64Array(m);
  const phi0 = tables.volume.phi[0]!;
  let scaled = 0;
  const ok = (o: number, theta: number): boolean => {
    for (const { phi, nq } of phis) {
      for (let q = 0; q < nq; q++) {
        for (let i = 0; i < m; i++) {
          let s = 0;
          for (let b = 1; b < nb; b++) s += phi[q * nb + b]! * state[o + i * nb + b]!;
          U[i] = mean[i]! + theta * s;
        }
        if (!admissible(U, mean)) return false;
      }
    }
    return true;
  };
  for (let e = 0; e < mesh.nElements; e++) {
    const o = ordering.inv[e]! * bs;
    for (let i = 0; i < m; i++) mean[i] = state[o + i * nb]! * phi0;
    if (ok(o, 1)) continue;
    let lo = 0, hi = 1;
    for (let k = 0; k < 20; k++) {
      const mid = 0.5 * (lo + hi);
      if (ok(o, mid)) lo = mid; else hi = mid;
    }
    for (let i = 0; i < m; i++) for (let b = 1; b < nb; b++) state[o + i * nb + b]! *= lo;
    scaled++;
  }
  return scaled;
}
