import { describe, it, expect } from 'vitest';
import { buildSlabMesh, FaceKind, type SlabMeshOptions, type SpaceTimeMesh } from '../../src/mesh/space-time.js';
import { createElementAffine, elementAffine, faceVertexMatch, faceLocalVertices } from '../../src/mesh/geometry.js';
import { meshQuality } from '../../src/mesh/quality.js';
import { UserError } from '../../src/util/errors.js';

const front = (over: Partial<NonNullable<SlabMeshOptions['front']>> = {}): NonNullable<SlabMeshOptions['front']> => ({
  direction: [1], position: 0.4, speed: 1, grading: 2, aspectRatio: 100, ...over,
});

const variants: { name: string; opts: SlabMeshOptions }[] = [
  { name: '1D+t, A = 1000', opts: { dim: 1, cells: [48], nSlabs: 3, layersPerSlab: 2, slabThickness: 0.02, periodic: [false], front: front({ aspectRatio: 1000 }) } },
  { name: '1D+t periodic, backward front, jitter', opts: { dim: 1, cells: [40], nSlabs: 3, layersPerSlab: 1, slabThickness: 0.03, periodic: [true], jitter: 0.2, front: front({ speed: -0.7, position: 0.9 }) } },
  { name: '2D+t tilted front, shear, jitter', opts: { dim: 2, cells: [40, 4], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.02, periodic: [false, false], shear: [0.5, 0.2], jitter: 0.1, front: front({ direction: [1, 0.25], position: 0.5, speed: 1.2 }) } },
  { name: '2D+t periodic x, tilted front, A = 1000', opts: { dim: 2, cells: [40, 3], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.02, periodic: [true, false], front: front({ direction: [1, 0.3], aspectRatio: 1000 }) } },
  { name: '2D+t front along y', opts: { dim: 2, cells: [3, 40], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.02, periodic: [true, false], front: front({ direction: [0, -1], position: -0.5, speed: 0.5 }) } },
  { name: '3D+t periodic', opts: { dim: 3, cells: [24, 2, 2], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.02, periodic: [true, true, false], jitter: 0.1, front: front({ direction: [1, 0, 0.2], grading: 3 }) } },
];

/** Sorted vertex ids of local face f of element e. */
function faceVerts(m: SpaceTimeMesh, e: number, f: number): string {
  const nv = m.dim + 2;
  const out: number[] = [];
  for (let j = 0; j < nv; j++) if (j !== f) out.push(m.elements[e * nv + j]);
  return out.sort((a, b) => a - b).join(',');
}

describe('front map: the mesh stays a conforming slab mesh', () => {
  it('every half-face is listed once; interior and slab-interface faces are shared by exactly two elements with the same vertices, periodic ones match after the shift', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const D = m.dim + 1, nv = D + 1;
      const seen = new Uint8Array(m.nElements * nv);
      const counts = new Map<string, number>();
      for (let e = 0; e < m.nElements; e++) for (let f = 0; f < nv; f++) { const k = faceVerts(m, e, f); counts.set(k, (counts.get(k) ?? 0) + 1); }
      const match = new Int32Array(D);
      let badShared = 0, worstPeriodic = 0;
      for (let f = 0; f < m.nFaces; f++) {
        seen[m.faceLeft[f] * nv + m.faceLeftLocal[f]]++;
        if (m.faceRight[f] < 0) continue;
        seen[m.faceRight[f] * nv + m.faceRightLocal[f]]++;
        const key = faceVerts(m, m.faceLeft[f], m.faceLeftLocal[f]);
        if (m.faceKind[f] === FaceKind.periodic) {
          faceVertexMatch(m, f, match);
          const lv = faceLocalVertices(D, m.faceLeftLocal[f]);
          for (let i = 0; i < D; i++) {
            const a = m.elements[m.faceLeft[f] * nv + lv[i]], b = m.elements[m.faceRight[f] * nv + match[i]];
            for (let c = 0; c < D; c++) worstPeriodic = Math.max(worstPeriodic, Math.abs(m.coords[a * D + c] + m.faceShift[f * D + c] - m.coords[b * D + c]));
          }
        } else if (faceVerts(m, m.faceRight[f], m.faceRightLocal[f]) !== key || counts.get(key) !== 2) {
          badShared++;
        }
      }
      expect(badShared, name).toBe(0);
      expect(worstPeriodic, name).toBeLessThan(1e-12);
      expect(seen.every((c) => c === 1), name).toBe(true);
    }
  });

  it('every element is positive (det J × Kuhn sign > 0), the total volume is |Ω|·T, time coordinates are those of the plain lattice', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const q = meshQuality(m);
      expect(q.minJacobianDeterminant, name).toBeGreaterThan(0);
      const D = m.dim + 1;
      let fact = 1;
      for (let k = 2; k <= D; k++) fact *= k;
      const aff = createElementAffine(D);
      let volume = 0;
      for (let e = 0; e < m.nElements; e++) volume += elementAffine(m, e, aff).absDet / fact;
      const T = opts.nSlabs * opts.slabThickness;
      expect(volume / T, name).toBeCloseTo(1, 11); // |Ω| = 1
      // slab interfaces stay flat t = s·Δt: time never moves
      const plain = buildSlabMesh({ ...opts, front: null, jitter: 0 });
      let moved = 0;
      for (let v = 0; v < m.nVertices; v++) if (m.coords[v * D + D - 1] !== plain.coords[v * D + D - 1]) moved++;
      expect(moved, name).toBe(0);
    }
  });

  it('non-periodic sides keep their vertices: the box is unchanged', () => {
    const m = buildSlabMesh(variants[0].opts);
    let onLow = 0, onHigh = 0;
    for (let v = 0; v < m.nVertices; v++) {
      const x = m.coords[v * 2];
      expect(x).toBeGreaterThanOrEqual(0);
      expect(x).toBeLessThanOrEqual(1);
      if (x === 0) onLow++;
      if (x === 1) onHigh++;
    }
    expect(onLow).toBe(7); // one per time level
    expect(onHigh).toBe(7);
  });
});

describe('front map: clustering and alignment', () => {
  it('1D+t: the lattice line on the front moves with it, x = x₀ + s·t, and the cells grow geometrically away from it', () => {
    const opts = variants[0].opts;
    const m = buildSlabMesh(opts);
    const N = opts.cells[0];
    const levels = opts.nSlabs * opts.layersPerSlab + 1;
    // the front line at t = 0
    let jc = -1;
    for (let j = 0; j <= N; j++) if (Math.abs(m.coords[j * 2] - 0.4) < 1e-12) jc = j;
    expect(jc).toBeGreaterThan(0);
    for (let l = 0; l < levels; l++) {
      const v = l * (N + 1) + jc;
      const t = m.coords[v * 2 + 1];
      expect(m.coords[v * 2]).toBeCloseTo(0.4 + t, 12);
      // widths on the high side: ratio between neighbours equals e^{(r-1)} per cell while uncapped (r = 2 → e)
      const w = (i: number): number => m.coords[(v + i + 1) * 2] - m.coords[(v + i) * 2];
      expect(w(1) / w(0)).toBeCloseTo(Math.E, 6);
      expect(w(0)).toBeCloseTo(m.front!.frontSpacing, 12);
    }
  });

  it('the target aspect ratio is reached and reported: max ≈ A for A = 100 and 1000 (1D+t and 2D+t), reported in the mesh summary', () => {
    for (const v of [variants[0], variants[3]]) {
      const m = buildSlabMesh(v.opts);
      const q = meshQuality(m);
      const A = v.opts.front!.aspectRatio;
      expect(q.aspectRatio.max / A, v.name).toBeGreaterThan(0.9);
      expect(q.aspectRatio.max / A, v.name).toBeLessThan(1.1);
      expect(q.aspectRatio.median, v.name).toBeLessThan(A / 10); // thin elements only at the front
      expect(m.front).toMatchObject({ axis: 0, aspectRatio: A, grading: 2 });
    }
    // without the map the same mesh stays near-isotropic
    const plain = meshQuality(buildSlabMesh({ ...variants[0].opts, front: null }));
    expect(plain.aspectRatio.max).toBeLessThan(5);
  });

  it('2D+t periodic: lattice lines near the front are parallel to it in every row and time level', () => {
    const opts = variants[3].opts;
    const m = buildSlabMesh(opts);
    const [nx, ny] = opts.cells;
    const n = [1, 0.3].map((c) => c / Math.hypot(1, 0.3));
    const levels = opts.nSlabs + 1;
    // n·x − s t is the same for the vertices of one lattice line at every row and level
    let worst = 0;
    for (let j = 0; j <= nx; j++) {
      const ref = m.coords[j * 3] * n[0] + m.coords[j * 3 + 1] * n[1];
      for (let l = 0; l < levels; l++) {
        for (let r = 0; r <= ny; r++) {
          const v = l * (nx + 1) * (ny + 1) + r * (nx + 1) + j;
          const val = m.coords[v * 3] * n[0] + m.coords[v * 3 + 1] * n[1] - 1 * m.coords[v * 3 + 2];
          worst = Math.max(worst, Math.abs(val - ref));
        }
      }
    }
    expect(worst).toBeLessThan(1e-12);
  });
});

describe('front map: refused options (one line naming the field)', () => {
  const base: SlabMeshOptions = { dim: 2, cells: [40, 4], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.02, periodic: [false, true] };
  const cases: [Partial<NonNullable<SlabMeshOptions['front']>>, RegExp][] = [
    [{ aspectRatio: 2000 }, /^mesh option front\.aspectRatio: expected a target aspect ratio 1 < A ≤ 1000, got 2000$/],
    [{ grading: 1 }, /^mesh option front\.grading: expected a growth ratio/],
    [{ direction: [0, 0] }, /^mesh option front\.direction: expected a nonzero normal/],
    [{ direction: [1, 0.5] }, /^mesh option front\.direction: a front tilted towards the periodic axis y does not wrap onto itself/],
    [{ direction: [1, 0], grading: 1.05, aspectRatio: 1000 }, /^mesh option front\.grading: grading 1\.05 from the front spacing .* needs \d+ cells along x, the mesh has 40/],
    [{ direction: [1, 0], position: 0.99, speed: 1 }, /^mesh option front\.position: the front crosses x at 0\.99.* the map needs it inside \(0, 1\)/],
    [{ direction: [1, 0], aspectRatio: 1.5 }, /^mesh option front\.aspectRatio: the elements at the front of the uniform mesh already reach about 1\.5/],
  ];
  for (const [over, re] of cases) {
    it(re.source.slice(1, 60), () => {
      expect(() => buildSlabMesh({ ...base, front: { direction: [1, 0], position: 0.4, speed: 1, grading: 2, aspectRatio: 100, ...over } })).toThrow(re);
    });
  }
  it('a jittered front mesh that inverts an element is refused naming both options and the element', () => {
    let message = '';
    try {
      buildSlabMesh({ dim: 2, cells: [30, 4], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.02, periodic: [false, false], jitter: 0.45, seed: 1,
        front: { direction: [1, 0], position: 0.7, speed: 1.5, grading: 2, aspectRatio: 1000 } });
    } catch (e) {
      expect(e).toBeInstanceOf(UserError);
      message = (e as Error).message;
    }
    expect(message).toMatch(/^mesh option jitter with mesh option front\.aspectRatio: element \d+ \(slab \d\) would be inverted .*vertices \(x…, t\) (\([-\d., e]+\) ?){4}; lower the jitter, the aspect ratio or the grading$/);
  });
});
