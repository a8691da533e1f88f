/**
 * Fast against slow: the nonlinear assembler (dense products per element and face,
 * src/dg/assemble-nonlinear.ts) and the point-by-point reference twin it replaced
 * (src/dg/assemble-nonlinear-reference.ts) give the same Euler residual and Jacobian to round-off,
 * for both fluxes, 1D+t, 2D+t and 3D+t, p = 0, 1, 2, at the projected state and at perturbed
 * states (each entry scaled by 1 ± 1 %, so face jumps and the Roe entropy fix see other branches).
 */
import { describe, it, expect } from 'vitest';
import { buildDiscretization, parseGeneratorParams } from '../../src/dg/generate.js';
import { assembleNonlinearSystem } from '../../src/dg/assemble-nonlinear.js';
import { assembleNonlinearSystemReference } from '../../src/dg/assemble-nonlinear-reference.js';
import { projectFunction } from '../../src/dg/projection.js';
import { scaleToAdmissible } from '../../src/dg/positivity.js';
import type { NonlinearSystemPhysics } from '../../src/dg/physics/types.js';

const cases: [string, Record<string, unknown>][] = [
  ['1D+t shock tube p = 2', { dim: 1, order: 2, cells: 8, slabs: 2, state: 'shock-tube', jitter: 0.1 }],
  ['1D+t shock tube p = 1, inflow', { dim: 1, order: 1, cells: 6, slabs: 3, state: 'shock-tube' }],
  ['2D+t vortex p = 0 (no volume gradients)', { dim: 2, order: 0, cells: 3, slabs: 2, state: 'vortex', extent: [10, 10], periodic: [true, true] }],
  ['2D+t vortex p = 2', { dim: 2, order: 2, cells: 3, slabs: 1, state: 'vortex', jitter: 0.1, extent: [10, 10], periodic: [true, true] }],
  ['2D+t uniform p = 1, sheared, walls', { dim: 2, order: 1, cells: 3, slabs: 2, state: 'uniform', shear: 'align', jitter: 0.15 }],
  ['3D+t uniform p = 1', { dim: 3, order: 1, cells: 1, slabs: 1, state: 'uniform', jitter: 0.1 }],
];

describe('Euler assembly: dense products against the point-by-point reference (to round-off)', () => {
  for (const flux of ['llf', 'roe']) {
    for (const [name, o] of cases) {
      it(`${name}, ${flux}`, () => {
        const p = parseGeneratorParams({ physics: 'euler', flux, ...o }, 'test');
        const { disc } = buildDiscretization(p);
        const physics = disc.physics as NonlinearSystemPhysics;
        const U0 = projectFunction(disc.mesh, p.order, physics.nEquations, disc.ordering.inv, physics.state!);
        scaleToAdmissible(disc, physics, U0);
        const nValues = disc.pattern.rowPtr[disc.mesh.nElements]! * disc.bs * disc.bs;
        for (const amplitude of [0, 0.01]) {
          const U = U0.map((u, i) => u * (1 + amplitude * Math.sin(12.9898 * i + 78.233)));
          const vFast = new Float64Array(nValues), rFast = new Float64Array(U.length);
          const vRef = new Float64Array(nValues), rRef = new Float64Array(U.length);
          assembleNonlinearSystem(disc, physics, U, vFast, rFast, () => undefined);
          assembleNonlinearSystemReference(disc, physics, U, vRef, rRef, () => undefined);
          // the residual is summed in the same order: identical
          expect(rFast).toEqual(rRef);
          let scale = 0, diff = 0, nonzero = 0;
          for (let k = 0; k < nValues; k++) {
            scale = Math.max(scale, Math.abs(vRef[k]!));
            diff = Math.max(diff, Math.abs(vFast[k]! - vRef[k]!));
            if (vRef[k] !== 0) nonzero++;
          }
          expect(nonzero).toBeGreaterThan(nValues / 4);
          expect(diff).toBeLessThanOrEqual(1e-13 * scale);
          // a residual-only assembly gives the same residual
          const rOnly = new Float64Array(U.length);
          assembleNonlinearSystem(disc, physics, U, null, rOnly, () => undefined);
          expect(rOnly).toEqual(rRef);
        }
      });
    }
  }
});
