import type { SpaceTimeMesh } from '../mesh/space-time.js';
import { createElementAffine, elementAffine, referenceToPhysical, type ElementAffine } from '../mesh/geometry.js';
import { simplexQuadrature } from './quadrature.js';
import { orthonormalBasis } from './basis.js';

/** A function of a space-time point writing nEquations values (`element`: for error messages). */
export type SpaceTimeFunction = (X: Float64Array, xo: number, out: Float64Array, element?: number) => void;

/** Basis values at a quadrature rule of degree 2p + 4, with scratch for one element and one point. */
interface ElementQuadrature {
  readonly nb: number;
  readonly bs: number;
  readonly nPoints: number;
  readonly points: Float64Array;
  readonly weights: Float64Array;
  /** phi[q·nb + b] = φ_b(ξ_q). */
  readonly phi: Float64Array;
  readonly aff: ElementAffine;
  /** Physical point x_q. */
  readonly X: Float64Array;
  /** fn(x_q), nEquations values. */
  readonly v: Float64Array;
}

function elementQuadrature(mesh: SpaceTimeMesh, order: number, nEquations: number): ElementQuadrature {
  const D = mesh.dim + 1;
  const basis = orthonormalBasis(D as 2 | 3 | 4, order);
  const nb = basis.nBasis;
  const rule = simplexQuadrature(D as 2 | 3 | 4, 2 * order + 4);
  const { values: phi } = basis.evaluate(rule.points, rule.nPoints);
  return {
    nb, bs: nb * nEquations, nPoints: rule.nPoints, points: rule.points, weights: rule.weights, phi,
    aff: createElementAffine(D), X: new Float64Array(D), v: new Float64Array(nEquations),
  };
}

/**
 * L² projection onto the DG space, in block-row order (element e at block inv[e]); unknown
 * (equation i, basis b) at i·nb + b. The basis is orthonormal on the reference simplex, so on K
 * the mass matrix is |det J|·I and c_b = Σ_q w_q f(x_q) φ_b(ξ_q) (quadrature degree 2p + 4).
 */
export function projectFunction(
  mesh: SpaceTimeMesh, order: number, nEquations: number, inv: Int32Array, fn: SpaceTimeFunction,
): Float64Array {
  const D = mesh.dim + 1;
  const { nb, bs, nPoints, points, weights, phi, aff, X, v } = elementQuadrature(mesh, order, nEquations);
  const out = new Float64Array(mesh.nElements * bs);
  for (let e = 0; e < mesh.nElements; e++) {
    elementAffine(mesh, e, aff);
    const o = inv[e] * bs;
    for (let q = 0; q < nPoints; q++) {
      referenceToPhysical(aff, points, q * D, X);
      fn(X, 0, v, e);
      const w = weights[q];
      for (let i = 0; i < nEquations; i++) {
        const c = w * v[i];
        for (let b = 0; b < nb; b++) out[o + i * nb + b] += c * phi[q * nb + b];
      }
    }
  }
  return out;
}

/**
 * Space-time L² error ‖u_h − u‖ over Ω×(0, T), all equations together (quadrature degree 2p + 4).
 */
export function spaceTimeL2Error(
  mesh: SpaceTimeMesh, order: number, nEquations: number, inv: Int32Array, coefficients: Float64Array, fn: SpaceTimeFunction,
): number {
  const D = mesh.dim + 1;
  const { nb, bs, nPoints, points, weights, phi, aff, X, v } = elementQuadrature(mesh, order, nEquations);
  let sum = 0;
  for (let e = 0; e < mesh.nElements; e++) {
    elementAffine(mesh, e, aff);
    const o = inv[e] * bs;
    let local = 0;
    for (let q = 0; q < nPoints; q++) {
      referenceToPhysical(aff, points, q * D, X);
      fn(X, 0, v);
      for (let i = 0; i < nEquations; i++) {
        let uh = 0;
        for (let b = 0; b < nb; b++) uh += coefficients[o + i * nb + b] * phi[q * nb + b];
        local += weights[q] * (uh - v[i]) ** 2;
      }
    }
    sum += local * aff.absDet;
  }
  return Math.sqrt(sum);
}
