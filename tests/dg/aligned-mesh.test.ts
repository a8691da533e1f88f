import { describe, it, expect } from 'vitest';
import { generateSystem, parseGeneratorParams } from '../../src/dg/generate.js';
import { runRefinementStudy } from '../../src/dg/refine.js';
import { validateLayout } from '../../src/sparse/layout.js';

const smoothFront = { physics: 'advection', dim: 1, cells: 16, slabs: 4, initial: '0.5*(1 + tanh((x - 0.4)/0.1))' };
const aligned = { aspectRatio: 20, frontGrading: 2, frontPosition: 0.4 };

/**
 * Space-time DG with upwinding converges at p + 1 in L² for smooth solutions on shape-regular
 * meshes (Johnson & Pitkäranta, Math. Comp. 46, 1986: ≥ p + 1/2; p + 1 typical, Cockburn, Dong &
 * Guzmán, SINUM 46, 2008). On the front-aligned family the elements at the front keep the target
 * aspect ratio under refinement, and the observed order should be the same as on the uniform mesh.
 */
describe('refinement on a smooth advected front: the aligned mesh keeps the order of the uniform one (1D+t)', () => {
  for (const p of [1, 2]) {
    it(`p = ${p}`, () => {
      const uniform = runRefinementStudy(parseGeneratorParams({ ...smoothFront, order: p }, 't'), [16, 32, 64]);
      const front = runRefinementStudy(parseGeneratorParams({ ...smoothFront, ...aligned, order: p }, 't'), [16, 32, 64]);
      for (const s of [uniform, front]) for (const r of s.rows.slice(1)) expect(r.observedOrder!).toBeGreaterThanOrEqual(p + 0.5);
      const last = (s: typeof uniform): number => s.rows[s.rows.length - 1].observedOrder!;
      expect(Math.abs(last(front) - last(uniform))).toBeLessThan(0.35);
      expect(Math.abs(last(front) - (p + 1))).toBeLessThan(0.35);
    });
  }
});

describe('generated layout: element quality and the resolved front map', () => {
  it('records min/median/max aspect ratio (max ≈ the target), the smallest det J, and the map; the layout validates', () => {
    const params = parseGeneratorParams({ ...smoothFront, ...aligned, aspectRatio: 1000, cells: 64 }, 't');
    expect(params).toMatchObject({ aspectRatio: 1000, frontDirection: 'align', frontSpeed: 'align', frontPosition: 0.4, frontGrading: 2 });
    const { layout } = generateSystem(params);
    const q = layout.elementQuality!;
    expect(q.aspectRatio.max / 1000).toBeGreaterThan(0.9);
    expect(q.aspectRatio.max / 1000).toBeLessThan(1.1);
    expect(q.aspectRatio.min).toBeGreaterThanOrEqual(1);
    expect(q.aspectRatio.median).toBeLessThan(10);
    expect(q.minJacobianDeterminant).toBeGreaterThan(0);
    expect(layout.provenance!.frontMap).toMatchObject({ axis: 0, direction: [1], speed: 1, position: 0.4, aspectRatio: 1000 });
    expect(() => validateLayout(JSON.parse(JSON.stringify(layout)), 'x.layout.json')).not.toThrow();
    // a case without the map records the quality too, and no map
    const plain = generateSystem(parseGeneratorParams(smoothFront, 't')).layout;
    expect(plain.elementQuality!.aspectRatio.max).toBeLessThan(5);
    expect(plain.provenance!.frontMap).toBeUndefined();
    expect(parseGeneratorParams(smoothFront, 't')).not.toHaveProperty('aspectRatio');
  });

  it('bad elementQuality fields in a layout are refused naming the field', () => {
    const ok = { blockSize: 3, elementQuality: { aspectRatio: { min: 1.5, median: 2, max: 30 }, minJacobianDeterminant: 1e-6 } };
    expect(() => validateLayout(ok, 'a.layout.json')).not.toThrow();
    const bad: [unknown, RegExp][] = [
      [{ aspectRatio: { min: 1.5, median: 2, max: 30 } }, /elementQuality\.minJacobianDeterminant: expected a positive number/],
      [{ aspectRatio: { min: 3, median: 2, max: 30 }, minJacobianDeterminant: 1 }, /elementQuality\.aspectRatio: expected min ≤ median ≤ max/],
      [{ aspectRatio: { min: 1, median: 'x', max: 30 }, minJacobianDeterminant: 1 }, /elementQuality\.aspectRatio\.median: expected a positive number, found "x"/],
      [{ aspectRatio: { min: 1, median: 2, max: 3 }, minJacobianDeterminant: -1 }, /elementQuality\.minJacobianDeterminant: expected a positive number \(no inverted or flat element\), found -1/],
      [[1, 2], /elementQuality: expected an object/],
    ];
    for (const [q, re] of bad) expect(() => validateLayout({ blockSize: 3, elementQuality: q }, 'a.layout.json')).toThrow(re);
  });
});

describe('generator parameters of the front map', () => {
  const cases: [Record<string, unknown>, RegExp][] = [
    [{ frontGrading: 1.5 }, /^t\.frontGrading: has no effect without t\.aspectRatio/],
    [{ aspectRatio: 0.5 }, /^t\.aspectRatio: expected a target aspect ratio 1 < A ≤ 1000, got 0\.5$/],
    [{ aspectRatio: 20, frontDirection: [1, 2] }, /^t\.frontDirection: expected 1 finite number \(the front normal\) or 'align'/],
    [{ aspectRatio: 20, frontSpeed: 'fast' }, /^t\.frontSpeed: expected a finite number or 'align', got "fast"$/],
    [{ aspectRatio: 20, frontPosition: 'left' }, /^t\.frontPosition: expected a finite number or 'center'/],
    [{ aspectRatio: 20, frontGrading: 5 }, /^t\.frontGrading: expected a growth ratio of the cell size per cell, 1 < r ≤ 3, got 5$/],
    [{ aspectRatio: 20, velocity: ['1 + x'], inflow: 'x' }, /^t\.frontDirection: 'align' needs a constant transport velocity/],
    [{ aspectRatio: 1000, frontGrading: 1.2 }, /^t\.frontGrading: grading 1\.2 .* needs \d+ cells along x, the mesh has 16/],
  ];
  for (const [extra, re] of cases) {
    it(re.source.slice(1, 50), () => { expect(() => parseGeneratorParams({ ...smoothFront, ...extra }, 't')).toThrow(re); });
  }
  it('an explicit direction and speed work without a constant velocity', () => {
    const p = parseGeneratorParams({ ...smoothFront, velocity: ['1 + 0.2*x'], inflow: '0', aspectRatio: 20, frontDirection: [1], frontSpeed: 1, frontGrading: 2 }, 't');
    expect(generateSystem(p).layout.provenance!.frontMap).toMatchObject({ direction: [1], speed: 1, position: 0.5 });
  });
});
