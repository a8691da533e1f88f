import { createElementAffine, elementAffine, faceOutwardNormalFromAffine } from '../mesh/geometry.js';
import type { Bsr } from '../sparse/types.js';
import type { Discretization } from './assemble.js';

/**
 * Pseudo-transient continuation (Kelley & Keyes, SIAM J. Numer. Anal. 35(2), 1998): the Newton
 * matrix J becomes M/Δτ + J, M the space-time element mass matrix — |det J_K|·I per equation for
 * the reference-orthonormal basis — and the right-hand side is unchanged (the pseudo-time term
 * vanishes at the current state). Δτ_K = CFL_τ · h_K / λ with h_K = D·|K|/|∂K| (the simplex's
 * size as its volume over its surface, times D; common practice) and λ the physics' largest wave
 * speed over the domain (one global bound: our choice, stated in README). Adds to the diagonal
 * blocks in place; returns the smallest and largest Δτ.
 */
export function addPseudoTimeTerm(disc: Discretization, bsr: Bsr, pseudoCfl: number): { minDtau: number; maxDtau: number } {
  const { mesh, pattern } = disc;
  const D = mesh.dim + 1;
  const bs = bsr.bs, bb = bs * bs;
  const aff = createElementAffine(D);
  const normal = new Float64Array(D);
  let fact = 1;
  for (let k = 2; k <= D; k++) fact *= k;
  const lambda = disc.physics.maxWaveSpeed > 0 ? disc.physics.maxWaveSpeed : 1;
  let minDtau = Infinity, maxDtau = 0;
  for (let e = 0; e < mesh.nElements; e++) {
    elementAffine(mesh, e, aff);
    let surface = 0;
    for (let f = 0; f <= D; f++) surface += faceOutwardNormalFromAffine(aff, f, normal);
    const volume = aff.absDet / fact;
    const h = (D * volume) / surface;
    const dtau = (pseudoCfl * h) / lambda;
    if (dtau < minDtau) minDtau = dtau;
    if (dtau > maxDtau) maxDtau = dtau;
    const c = aff.absDet / dtau;
    const o = pattern.diagonal[e]! * bb;
    for (let i = 0; i < bs; i++) bsr.values[o + i * bs + i]! += c;
  }
  return { minDtau, maxDtau };
}
