import { describe, it, expect } from 'vitest';
import fc from 'fast-check';
import { buildSlabMesh, FaceKind, type SlabMeshOptions } from '../../src/mesh/space-time.js';
import { createElementAffine, elementAffine, faceOutwardNormalFromAffine } from '../../src/mesh/geometry.js';

/** Random small meshes: every option combination keeps the mesh a conforming, closed tiling of Ω×(0,T). */
const optionsArb: fc.Arbitrary<SlabMeshOptions> = fc.integer({ min: 1, max: 3 }).chain((dim) => fc.record({
  dim: fc.constant(dim as 1 | 2 | 3),
  cells: fc.array(fc.integer({ min: 1, max: dim === 3 ? 2 : 3 }), { minLength: dim, maxLength: dim }),
  extent: fc.array(fc.double({ min: 0.5, max: 3, noNaN: true }), { minLength: dim, maxLength: dim }),
  nSlabs: fc.integer({ min: 1, max: 3 }),
  layersPerSlab: fc.integer({ min: 1, max: 2 }),
  slabThickness: fc.double({ min: 0.05, max: 2, noNaN: true }),
  periodic: fc.array(fc.boolean(), { minLength: dim, maxLength: dim }),
  shear: fc.array(fc.double({ min: -2, max: 2, noNaN: true }), { minLength: dim, maxLength: dim }),
  jitter: fc.double({ min: 0, max: 0.2, noNaN: true }),
  seed: fc.integer({ min: 0, max: 1000 }),
}));

describe('buildSlabMesh properties (fast-check, seeded)', () => {
  it('half-faces used once, Σ volumes = |Ω|·T, closed element surfaces, shared faces opposite and equal', () => {
    fc.assert(fc.property(optionsArb, (opts) => {
      const m = buildSlabMesh(opts);
      const D = opts.dim + 1;
      const nv = D + 1;
      const seen = new Uint8Array(m.nElements * nv);
      for (let f = 0; f < m.nFaces; f++) {
        seen[m.faceLeft[f] * nv + m.faceLeftLocal[f]]++;
        if (m.faceRight[f] >= 0) seen[m.faceRight[f] * nv + m.faceRightLocal[f]]++;
        if ((m.faceKind[f] === FaceKind.periodic) !== m.faceShift.subarray(f * D, f * D + D).some((s) => s !== 0)) return false;
      }
      if (!seen.every((c) => c === 1)) return false;
      const aff = createElementAffine(D);
      const n = new Float64Array(D);
      const sum = new Float64Array(D);
      let total = 0;
      let fact = 1;
      for (let k = 2; k <= D; k++) fact *= k;
      const areas = new Float64Array(m.nElements * nv);
      const normals = new Float64Array(m.nElements * nv * D);
      for (let e = 0; e < m.nElements; e++) {
        elementAffine(m, e, aff);
        if (!(aff.absDet > 0)) return false;
        total += aff.absDet / fact;
        sum.fill(0);
        for (let lf = 0; lf < nv; lf++) {
          const a = faceOutwardNormalFromAffine(aff, lf, n);
          areas[e * nv + lf] = a;
          for (let k = 0; k < D; k++) { sum[k] += a * n[k]; normals[(e * nv + lf) * D + k] = n[k]; }
        }
        for (let k = 0; k < D; k++) if (Math.abs(sum[k]) > 1e-12) return false;
      }
      const volume = (opts.extent ?? []).reduce((a, b) => a * b, 1) * opts.nSlabs * opts.slabThickness;
      expect(total).toBeCloseTo(volume, 10);
      for (let f = 0; f < m.nFaces; f++) {
        if (m.faceRight[f] < 0) continue;
        const hl = m.faceLeft[f] * nv + m.faceLeftLocal[f];
        const hr = m.faceRight[f] * nv + m.faceRightLocal[f];
        if (Math.abs(areas[hl] - areas[hr]) > 1e-12 * areas[hl]) return false;
        for (let k = 0; k < D; k++) if (Math.abs(normals[hl * D + k] + normals[hr * D + k]) > 1e-12) return false;
      }
      return true;
    }), { seed: 20261201, numRuns: 40 });
  });
});
