import { describe, it, expect } from 'vitest';
import { checkElementOrientation, meshQuality, simplexAspectRatio } from '../../src/mesh/quality.js';
import { buildSlabMesh } from '../../src/mesh/space-time.js';
import { UserError } from '../../src/util/errors.js';

/**
 * Aspect ratio = longest edge / smallest altitude × √((D+1)/(2D)) (Shewchuk, "What is a good linear
 * finite element?", 2002, §6, from memory; the scaling to 1 for the regular simplex is ours).
 * The values below are computed by hand.
 */
describe('simplexAspectRatio: hand-computed simplices', () => {
  it('regular simplices give 1 (D = 1, 2, 3)', () => {
    expect(simplexAspectRatio(Float64Array.from([0, 2]), 1)).toBeCloseTo(1, 14);
    expect(simplexAspectRatio(Float64Array.from([0, 0, 1, 0, 0.5, Math.sqrt(3) / 2]), 2)).toBeCloseTo(1, 14);
    // regular tetrahedron: alternate corners of the unit cube
    expect(simplexAspectRatio(Float64Array.from([0, 0, 0, 1, 1, 0, 1, 0, 1, 0, 1, 1]), 3)).toBeCloseTo(1, 14);
  });
  it('right isosceles triangle (legs 1): longest edge √2, smallest altitude 1/√2, ratio 2, scaled √3', () => {
    expect(simplexAspectRatio(Float64Array.from([0, 0, 1, 0, 0, 1]), 2)).toBeCloseTo(Math.sqrt(3), 14);
  });
  it('Kuhn tetrahedron of the unit cube: longest edge √3, largest face √2/2, smallest altitude 3·(1/6)/(√2/2) = 1/√2, ratio √6, scaled 2', () => {
    expect(simplexAspectRatio(Float64Array.from([0, 0, 0, 1, 0, 0, 1, 1, 0, 1, 1, 1]), 3)).toBeCloseTo(2, 14);
  });
  it('a flat simplex gives Infinity', () => {
    expect(simplexAspectRatio(Float64Array.from([0, 0, 1, 1, 2, 2]), 2)).toBe(Infinity);
  });
});

describe('meshQuality on a Kuhn mesh (hand-computed)', () => {
  it('1D+t, h = 1, Δt = 2: every triangle has edges 1, 2, √5, area 1 → smallest altitude 2/√5, ratio (5/2)·√3/2; det J = 2', () => {
    const m = buildSlabMesh({ dim: 1, cells: [3], extent: [3], nSlabs: 2, layersPerSlab: 1, slabThickness: 2, periodic: [false] });
    const q = meshQuality(m);
    const expected = (5 / 2) * (Math.sqrt(3) / 2);
    expect(q.aspectRatio.min).toBeCloseTo(expected, 13);
    expect(q.aspectRatio.median).toBeCloseTo(expected, 13);
    expect(q.aspectRatio.max).toBeCloseTo(expected, 13);
    expect(q.minJacobianDeterminant).toBeCloseTo(2, 13);
  });
  it('2D+t unit boxes: all six Kuhn tetrahedra have aspect ratio 2 and det J 1 (= 3!·1/6)', () => {
    const m = buildSlabMesh({ dim: 2, cells: [2, 2], extent: [2, 2], nSlabs: 1, layersPerSlab: 1, slabThickness: 1, periodic: [false, false] });
    const q = meshQuality(m);
    for (const v of [q.aspectRatio.min, q.aspectRatio.median, q.aspectRatio.max]) expect(v).toBeCloseTo(2, 13);
    expect(q.minJacobianDeterminant).toBeCloseTo(1, 13);
  });
  it('median of an even count averages the middle two; a mixed mesh orders min ≤ median ≤ max', () => {
    const m = buildSlabMesh({ dim: 2, cells: [3, 2], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.1, periodic: [false, false], jitter: 0.3, seed: 5 });
    const q = meshQuality(m);
    expect(m.nElements % 2).toBe(0);
    expect(q.aspectRatio.min).toBeLessThan(q.aspectRatio.median);
    expect(q.aspectRatio.median).toBeLessThan(q.aspectRatio.max);
    expect(q.aspectRatio.min).toBeGreaterThanOrEqual(1);
  });
});

describe('checkElementOrientation', () => {
  it('names the first inverted element, its slab and its vertex coordinates', () => {
    const m = buildSlabMesh({ dim: 1, cells: [2], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.5, periodic: [false] });
    const coords = Float64Array.from(m.coords);
    // push the middle vertex of the second time level past its right neighbour: inverts elements of both slabs
    const D = 2;
    coords[4 * D] = 1.2;
    let message = '';
    try {
      checkElementOrientation(coords, m.elements, m.nElements, D, m.slabOffsets, 'mesh option front.aspectRatio', 'lower it');
    } catch (e) {
      expect(e).toBeInstanceOf(UserError);
      message = (e as Error).message;
    }
    expect(message).toMatch(/^mesh option front\.aspectRatio: element (\d+) \(slab 1\) would be inverted \(det J -[\d.e-]+\), vertices \(x…, t\) \([^)]*\) \([^)]*\) \([^)]*\); lower it$/);
    expect(message).toContain('(1.2, 0.5)');
    // the unmoved mesh passes
    expect(() => checkElementOrientation(m.coords, m.elements, m.nElements, D, m.slabOffsets, 'x', 'y')).not.toThrow();
  });
});
