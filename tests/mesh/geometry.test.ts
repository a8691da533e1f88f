import { describe, it, expect } from 'vitest';
import { buildSlabMesh, FaceKind, type SpaceTimeMesh } from '../../src/mesh/space-time.js';
import {
  createElementAffine, elementAffine, elementVolume, faceLocalVertices, faceOutwardNormal, faceToElementReference,
  facePointsToElements, faceVertexMatch, physicalToReference, referenceToPhysical,
} from '../../src/mesh/geometry.js';
import { simplexQuadrature } from '../../src/dg/quadrature.js';

/** A one-element "mesh" with given vertices (only the fields geometry.ts reads). */
function singleElement(dim: 1 | 2 | 3, verts: number[][]): SpaceTimeMesh {
  const D = dim + 1;
  return {
    dim, nVertices: D + 1, coords: Float64Array.from(verts.flat()), nElements: 1,
    elements: Int32Array.from(verts.map((_, i) => i)),
  } as unknown as SpaceTimeMesh;
}

describe('elementAffine and reference maps', () => {
  it('maps reference vertices to the element vertices; J⁻¹J = I; |det| = D!·volume', () => {
    const m = singleElement(2, [[0.1, 0.2, 0.0], [1.1, 0.3, 0.1], [0.4, 1.5, 0.2], [0.2, 0.1, 0.9]]);
    const aff = elementAffine(m, 0, createElementAffine(3));
    const out = new Float64Array(3);
    const refVerts = [[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]];
    refVerts.forEach((r, v) => {
      referenceToPhysical(aff, Float64Array.from(r), 0, out);
      for (let k = 0; k < 3; k++) expect(out[k]).toBeCloseTo(m.coords[v * 3 + k], 14);
      physicalToReference(aff, m.coords, v * 3, out);
      for (let k = 0; k < 3; k++) expect(out[k]).toBeCloseTo(r[k], 13);
    });
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) {
        let s = 0;
        for (let k = 0; k < 3; k++) s += aff.inverse[i * 3 + k] * aff.jacobian[k * 3 + j];
        expect(s).toBeCloseTo(i === j ? 1 : 0, 13);
      }
    }
    expect(elementVolume(m, 0)).toBeCloseTo(aff.absDet / 6, 15);
  });

  it('unit Kuhn triangle (0,0),(1,0),(1,1): normals and lengths by hand (derived)', () => {
    const m = singleElement(1, [[0, 0], [1, 0], [1, 1]]);
    const n = new Float64Array(2);
    // face 0 = edge (1,0)-(1,1): normal (1,0), length 1
    expect(faceOutwardNormal(m, 0, 0, n)).toBeCloseTo(1, 15);
    expect(Array.from(n).map((x) => +x.toFixed(14))).toEqual([1, 0]);
    // face 1 = edge (0,0)-(1,1): normal (−1,1)/√2, length √2
    expect(faceOutwardNormal(m, 0, 1, n)).toBeCloseTo(Math.SQRT2, 15);
    expect(n[0]).toBeCloseTo(-Math.SQRT1_2, 15);
    expect(n[1]).toBeCloseTo(Math.SQRT1_2, 15);
    // face 2 = edge (0,0)-(1,0): normal (0,−1), length 1
    expect(faceOutwardNormal(m, 0, 2, n)).toBeCloseTo(1, 15);
    expect(Array.from(n).map((x) => +x.toFixed(14))).toEqual([0, -1]);
  });

  it('unit 4-simplex face opposite vertex 0 has area √4/3! = 1/3 and normal (1,1,1,1)/2 (derived)', () => {
    const m = singleElement(3, [[0, 0, 0, 0], [1, 0, 0, 0], [0, 1, 0, 0], [0, 0, 1, 0], [0, 0, 0, 1]]);
    const n = new Float64Array(4);
    expect(faceOutwardNormal(m, 0, 0, n)).toBeCloseTo(1 / 3, 15);
    for (let k = 0; k < 4; k++) expect(n[k]).toBeCloseTo(0.5, 15);
    expect(faceOutwardNormal(m, 0, 4, n)).toBeCloseTo(1 / 6, 15); // the unit tetrahedron in x4 = 0
    expect(Array.from(n).map((x) => +x.toFixed(14))).toEqual([0, 0, 0, -1]);
  });

  it('faceToElementReference sends face reference vertices to the face vertices', () => {
    for (let D = 2; D <= 4; D++) {
      for (let f = 0; f <= D; f++) {
        const verts = faceLocalVertices(D, f);
        const xi = new Float64Array(D);
        for (let i = 0; i < D; i++) {
          const eta = new Float64Array(D - 1);
          if (i > 0) eta[i - 1] = 1;
          faceToElementReference(D, f, eta, 0, xi);
          const expected = new Array<number>(D).fill(0);
          if (verts[i] > 0) expected[verts[i] - 1] = 1;
          expect(Array.from(xi)).toEqual(expected);
        }
      }
    }
  });

  it('validates arguments', () => {
    const m = buildSlabMesh({ dim: 1, cells: [2], nSlabs: 1, layersPerSlab: 1, slabThickness: 1, periodic: [false] });
    expect(() => elementAffine(m, 99, createElementAffine(2))).toThrow(/element 99 out of range/);
    expect(() => elementAffine(m, 0, createElementAffine(3))).toThrow(/workspace is for D = 3/);
    expect(() => faceOutwardNormal(m, 0, 3, new Float64Array(2))).toThrow(/local face must be 0..2/);
    const boundary = Array.from(m.faceRight).indexOf(-1);
    expect(() => faceVertexMatch(m, boundary, new Int32Array(2))).toThrow(/boundary face/);
  });
});

describe('facePointsToElements: both sides see the same space-time point', () => {
  it('on interior, slab-interface and periodic faces of a sheared, jittered 3D+t mesh and a 1D+t mesh', () => {
    const meshes = [
      buildSlabMesh({ dim: 3, cells: [3, 2, 2], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.3, periodic: [true, false, true], shear: [0.5, 0, -1], jitter: 0.15, seed: 21 }),
      buildSlabMesh({ dim: 1, cells: [3], nSlabs: 2, layersPerSlab: 2, slabThickness: 0.3, periodic: [true], jitter: 0.2 }),
    ];
    for (const m of meshes) {
      const D = m.dim + 1;
      const rule = simplexQuadrature((D - 1) as 1 | 2 | 3, 3);
      const xl = new Float64Array(rule.nPoints * D); const xr = new Float64Array(rule.nPoints * D);
      const affL = createElementAffine(D); const affR = createElementAffine(D);
      const pl = new Float64Array(D); const pr = new Float64Array(D);
      const kinds = new Set<number>();
      for (let f = 0; f < m.nFaces; f++) {
        if (m.faceRight[f] < 0) continue;
        kinds.add(m.faceKind[f]);
        facePointsToElements(m, f, rule.points, rule.nPoints, xl, xr);
        elementAffine(m, m.faceLeft[f], affL);
        elementAffine(m, m.faceRight[f], affR);
        for (let q = 0; q < rule.nPoints; q++) {
          referenceToPhysical(affL, xl, q * D, pl);
          referenceToPhysical(affR, xr, q * D, pr);
          for (let k = 0; k < D; k++) expect(pl[k] + m.faceShift[f * D + k]).toBeCloseTo(pr[k], 12);
          // the left point lies on the left element's local face (its barycentric coordinate vanishes)
          const lf = m.faceLeftLocal[f];
          const lam = lf === 0 ? 1 - xl.subarray(q * D, q * D + D).reduce((a, b) => a + b, 0) : xl[q * D + lf - 1];
          expect(Math.abs(lam)).toBeLessThan(1e-14);
        }
      }
      expect(kinds.has(FaceKind.interior) && kinds.has(FaceKind.slabInterface) && kinds.has(FaceKind.periodic)).toBe(true);
    }
  });
});
