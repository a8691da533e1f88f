import { describe, it, expect } from 'vitest';
import { buildSlabMesh, FaceKind, MAX_MESH_ELEMENTS, type SlabMeshOptions, type SpaceTimeMesh } from '../../src/mesh/space-time.js';
import { createElementAffine, elementAffine, faceLocalVertices, faceOutwardNormal } from '../../src/mesh/geometry.js';
import { UserError } from '../../src/util/errors.js';

const fact = (n: number): number => { let f = 1; for (let k = 2; k <= n; k++) f *= k; return f; };

/** Sorted vertex ids of local face f of element e. */
function faceVerts(m: SpaceTimeMesh, e: number, f: number): number[] {
  const nv = m.dim + 2;
  const out: number[] = [];
  for (let j = 0; j < nv; j++) if (j !== f) out.push(m.elements[e * nv + j]);
  return out.sort((a, b) => a - b);
}

function signedVolume(m: SpaceTimeMesh, e: number): number {
  const aff = elementAffine(m, e, createElementAffine(m.dim + 1));
  return aff.det / fact(m.dim + 1);
}

/** Naive reference: every half-face key counted with a Map of strings. */
function naiveFaceCounts(m: SpaceTimeMesh): Map<string, number> {
  const counts = new Map<string, number>();
  const nv = m.dim + 2;
  for (let e = 0; e < m.nElements; e++) {
    for (let f = 0; f < nv; f++) {
      const k = faceVerts(m, e, f).join(',');
      counts.set(k, (counts.get(k) ?? 0) + 1);
    }
  }
  return counts;
}

const variants: { name: string; opts: SlabMeshOptions }[] = [
  { name: '1D+t plain', opts: { dim: 1, cells: [5], nSlabs: 3, layersPerSlab: 2, slabThickness: 0.2, periodic: [false] } },
  { name: '1D+t periodic, 1 cell', opts: { dim: 1, cells: [1], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.5, periodic: [true] } },
  { name: '2D+t mixed periodic, sheared', opts: { dim: 2, cells: [4, 3], extent: [2, 1], nSlabs: 2, layersPerSlab: 2, slabThickness: 0.25, periodic: [true, false], shear: [0.7, -0.3] } },
  { name: '2D+t periodic 2 cells, jitter', opts: { dim: 2, cells: [2, 2], nSlabs: 3, layersPerSlab: 1, slabThickness: 0.1, periodic: [true, true], jitter: 0.2, seed: 3 } },
  { name: '3D+t plain', opts: { dim: 3, cells: [2, 3, 2], extent: [1, 3, 2], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.5, periodic: [false, false, false] } },
  { name: '3D+t periodic, shear, jitter', opts: { dim: 3, cells: [3, 2, 3], nSlabs: 2, layersPerSlab: 2, slabThickness: 0.3, periodic: [true, false, true], shear: [1, 0.5, -2], jitter: 0.2, seed: 77 } },
];

describe('buildSlabMesh: counts and volumes', () => {
  it('(d+1)! simplices per space-time box, numbered slab by slab', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const nBoxes = opts.cells.reduce((a, b) => a * b, 1) * opts.nSlabs * opts.layersPerSlab;
      expect(m.nElements, name).toBe(nBoxes * fact(opts.dim + 1));
      expect(m.elements.length).toBe(m.nElements * (opts.dim + 2));
      expect(m.slabOffsets.length).toBe(opts.nSlabs + 1);
      expect(m.slabOffsets[0]).toBe(0);
      expect(m.slabOffsets[opts.nSlabs]).toBe(m.nElements);
      // every element of slab s lies in [s·thickness, (s+1)·thickness]
      const D = opts.dim + 1;
      for (let s = 0; s < opts.nSlabs; s++) {
        for (let e = m.slabOffsets[s]; e < m.slabOffsets[s + 1]; e++) {
          for (let j = 0; j <= D; j++) {
            const t = m.coords[m.elements[e * (D + 1) + j] * D + D - 1];
            expect(t).toBeGreaterThanOrEqual(s * opts.slabThickness - 1e-15);
            expect(t).toBeLessThanOrEqual((s + 1) * opts.slabThickness + 1e-15);
          }
        }
      }
    }
  });

  it('Kuhn split: equal volumes box volume/(d+1)! without jitter (Freudenthal 1942; Kuhn 1960); total = |Ω|·T always', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const extent = opts.extent ?? new Array<number>(opts.dim).fill(1);
      const boxVol = extent.reduce((a, L, k) => (a * L) / opts.cells[k], opts.slabThickness / opts.layersPerSlab);
      let total = 0;
      for (let e = 0; e < m.nElements; e++) {
        const v = Math.abs(signedVolume(m, e));
        if (!opts.jitter) expect(v / (boxVol / fact(opts.dim + 1)), name).toBeCloseTo(1, 12);
        total += v;
      }
      const T = opts.nSlabs * opts.slabThickness;
      expect(total / (extent.reduce((a, b) => a * b, 1) * T), name).toBeCloseTo(1, 12);
      expect(m.finalTime).toBeCloseTo(T, 15);
    }
  });
});

describe('buildSlabMesh: faces', () => {
  it('every half-face appears once; interior faces are shared by exactly two elements (naive Map cross-check)', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const nv = opts.dim + 2;
      const seen = new Uint8Array(m.nElements * nv);
      for (let f = 0; f < m.nFaces; f++) {
        seen[m.faceLeft[f] * nv + m.faceLeftLocal[f]]++;
        if (m.faceRight[f] >= 0) seen[m.faceRight[f] * nv + m.faceRightLocal[f]]++;
      }
      expect(seen.every((c) => c === 1), name).toBe(true);
      const counts = naiveFaceCounts(m);
      for (const c of counts.values()) expect(c === 1 || c === 2).toBe(true);
      for (let f = 0; f < m.nFaces; f++) {
        const kind = m.faceKind[f];
        const kl = faceVerts(m, m.faceLeft[f], m.faceLeftLocal[f]).join(',');
        if (kind === FaceKind.interior || kind === FaceKind.slabInterface) {
          expect(m.faceRight[f]).toBeGreaterThan(m.faceLeft[f]);
          expect(faceVerts(m, m.faceRight[f], m.faceRightLocal[f]).join(',')).toBe(kl);
          expect(counts.get(kl)).toBe(2);
        } else {
          expect(counts.get(kl), name).toBe(1);
        }
      }
      const nInteriorKeys = [...counts.values()].filter((c) => c === 2).length;
      const nShared = Array.from(m.faceKind).filter((k) => k === FaceKind.interior || k === FaceKind.slabInterface).length;
      expect(nShared).toBe(nInteriorKeys);
    }
  });

  it('classifies faces: initial at t = 0, final at t = T, slab interfaces flat between consecutive slabs, space sides', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const d = opts.dim;
      const D = d + 1;
      const extent = opts.extent ?? new Array<number>(d).fill(1);
      const slabOf = (e: number): number => { let s = 0; while (m.slabOffsets[s + 1] <= e) s++; return s; };
      const counts = new Array<number>(6).fill(0);
      for (let f = 0; f < m.nFaces; f++) {
        const kind = m.faceKind[f];
        counts[kind]++;
        const verts = faceVerts(m, m.faceLeft[f], m.faceLeftLocal[f]);
        const times = verts.map((v) => m.coords[v * D + d]);
        if (kind === FaceKind.initial) expect(times.every((t) => t === 0)).toBe(true);
        if (kind === FaceKind.final) expect(times.every((t) => t === m.finalTime)).toBe(true);
        if (kind === FaceKind.slabInterface) {
          const sl = slabOf(m.faceLeft[f]);
          expect(slabOf(m.faceRight[f])).toBe(sl + 1);
          expect(times.every((t) => t === (sl + 1) * opts.slabThickness)).toBe(true);
        }
        if (kind === FaceKind.interior) expect(slabOf(m.faceRight[f])).toBe(slabOf(m.faceLeft[f]));
        if (kind === FaceKind.spaceBoundary) {
          const side = m.faceSide[f];
          const axis = side >> 1;
          expect(opts.periodic[axis]).toBe(false);
          const target = (side & 1) === 1 ? extent[axis] : 0;
          const shear = opts.shear?.[axis] ?? 0;
          for (const v of verts) expect(m.coords[v * D + axis] - shear * m.coords[v * D + d]).toBeCloseTo(target, 12);
        } else {
          expect(m.faceSide[f]).toBe(-1);
        }
        if (kind !== FaceKind.periodic) for (let k = 0; k < D; k++) expect(m.faceShift[f * D + k]).toBe(0);
      }
      // bottom and top of every space box split into d! simplices (Kuhn split of the d-cube)
      const nSpaceBoxes = opts.cells.reduce((a, b) => a * b, 1);
      expect(counts[FaceKind.initial], name).toBe(nSpaceBoxes * fact(d));
      expect(counts[FaceKind.final], name).toBe(nSpaceBoxes * fact(d));
      expect(counts[FaceKind.slabInterface], name).toBe((opts.nSlabs - 1) * nSpaceBoxes * fact(d));
      // every side of axis k: (Π_{j≠k} cells_j)·layers boxes, each side face split into d! simplices
      let sideFaces = 0; let periodicFaces = 0;
      for (let k = 0; k < d; k++) {
        const n = (nSpaceBoxes / opts.cells[k]) * opts.nSlabs * opts.layersPerSlab * fact(d);
        if (opts.periodic[k]) periodicFaces += n; else sideFaces += 2 * n;
      }
      expect(counts[FaceKind.spaceBoundary], name).toBe(sideFaces);
      expect(counts[FaceKind.periodic], name).toBe(periodicFaces);
    }
  });

  it('periodic pairs: left face vertices + faceShift coincide with the right face vertices (with shear and jitter)', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const D = opts.dim + 1;
      const extent = opts.extent ?? new Array<number>(opts.dim).fill(1);
      for (let f = 0; f < m.nFaces; f++) {
        if (m.faceKind[f] !== FaceKind.periodic) continue;
        const shift = Array.from(m.faceShift.subarray(f * D, f * D + D));
        const axis = shift.findIndex((s) => s !== 0);
        expect(shift[axis]).toBe(-extent[axis]);
        expect(shift.filter((s) => s !== 0).length).toBe(1);
        const key = (vs: number[], add: number[]): string[] =>
          vs.map((v) => Array.from({ length: D }, (_, k) => (m.coords[v * D + k] + add[k]).toFixed(10))).map((c) => c.join(' ')).sort();
        const left = key(faceVerts(m, m.faceLeft[f], m.faceLeftLocal[f]), shift);
        const right = key(faceVerts(m, m.faceRight[f], m.faceRightLocal[f]), new Array<number>(D).fill(0));
        expect(left, name).toEqual(right);
      }
    }
  });

  it('outward normals: opposite across shared faces, equal measures, closed element surfaces (Σ |F| n_F = 0, divergence theorem)', () => {
    for (const { name, opts } of variants) {
      const m = buildSlabMesh(opts);
      const D = opts.dim + 1;
      const nl = new Float64Array(D); const nr = new Float64Array(D);
      for (let f = 0; f < m.nFaces; f++) {
        const al = faceOutwardNormal(m, m.faceLeft[f], m.faceLeftLocal[f], nl);
        let len = 0;
        for (let k = 0; k < D; k++) len += nl[k] * nl[k];
        expect(len).toBeCloseTo(1, 14);
        const kind = m.faceKind[f];
        if (kind === FaceKind.initial) expect(nl[D - 1]).toBeCloseTo(-1, 14);
        if (kind === FaceKind.final || kind === FaceKind.slabInterface) expect(nl[D - 1]).toBeCloseTo(1, 14);
        if (kind === FaceKind.spaceBoundary) expect(Math.sign(nl[m.faceSide[f] >> 1])).toBe((m.faceSide[f] & 1) === 1 ? 1 : -1);
        if (m.faceRight[f] < 0) continue;
        const ar = faceOutwardNormal(m, m.faceRight[f], m.faceRightLocal[f], nr);
        expect(ar / al, name).toBeCloseTo(1, 12);
        for (let k = 0; k < D; k++) expect(nl[k] + nr[k]).toBeCloseTo(0, 12);
      }
      const sum = new Float64Array(D);
      for (let e = 0; e < Math.min(m.nElements, 200); e++) {
        sum.fill(0);
        for (let lf = 0; lf <= D; lf++) {
          const a = faceOutwardNormal(m, e, lf, nl);
          for (let k = 0; k < D; k++) sum[k] += a * nl[k];
        }
        for (let k = 0; k < D; k++) expect(Math.abs(sum[k])).toBeLessThan(1e-13);
      }
    }
  });

  it('face order is deterministic (same options, same arrays)', () => {
    const a = buildSlabMesh(variants[5].opts);
    const b = buildSlabMesh(variants[5].opts);
    expect(Array.from(a.faceLeft)).toEqual(Array.from(b.faceLeft));
    expect(Array.from(a.faceRight)).toEqual(Array.from(b.faceRight));
    expect(Array.from(a.coords)).toEqual(Array.from(b.coords));
  });
});

describe('buildSlabMesh: shear and jitter', () => {
  it('shear moves x_k by s_k·t and keeps the mesh conforming', () => {
    const base = { dim: 2 as const, cells: [3, 3], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.5, periodic: [true, true] };
    const plain = buildSlabMesh(base);
    const sheared = buildSlabMesh({ ...base, shear: [2, -1] });
    for (let v = 0; v < plain.nVertices; v++) {
      const t = plain.coords[v * 3 + 2];
      expect(sheared.coords[v * 3]).toBeCloseTo(plain.coords[v * 3] + 2 * t, 14);
      expect(sheared.coords[v * 3 + 1]).toBeCloseTo(plain.coords[v * 3 + 1] - t, 14);
      expect(sheared.coords[v * 3 + 2]).toBe(t);
    }
  });

  it('jitter moves space coordinates only, keeps non-periodic sides, periodic copies and volumes positive', () => {
    const base: SlabMeshOptions = { dim: 3, cells: [4, 3, 3], nSlabs: 3, layersPerSlab: 1, slabThickness: 0.2, periodic: [true, false, true] };
    const plain = buildSlabMesh(base);
    const D = 4;
    for (const seed of [1, 2, 3]) {
      const m = buildSlabMesh({ ...base, jitter: 0.2, seed });
      let moved = 0;
      for (let v = 0; v < m.nVertices; v++) {
        expect(m.coords[v * D + 3]).toBe(plain.coords[v * D + 3]); // time never moves: slab interfaces stay flat
        for (let k = 0; k < 3; k++) {
          const dx = m.coords[v * D + k] - plain.coords[v * D + k];
          expect(Math.abs(dx)).toBeLessThanOrEqual(0.2 * (1 / base.cells[k]) + 1e-15);
          if (dx !== 0) moved++;
        }
        // y is non-periodic: vertices on y = 0 and y = 1 keep y
        const y = plain.coords[v * D + 1];
        if (y === 0 || y === 1) expect(m.coords[v * D + 1]).toBe(y);
      }
      expect(moved).toBeGreaterThan(m.nVertices);
      // the plain and jittered vertex of the same id differ by the displacement; periodic copies (x = 0 and x = 1) move alike
      const nx = base.cells[0] + 1;
      for (let v = 0; v < m.nVertices; v += nx) {
        for (let k = 0; k < 3; k++) {
          const d0 = m.coords[v * D + k] - plain.coords[v * D + k];
          const d1 = m.coords[(v + nx - 1) * D + k] - plain.coords[(v + nx - 1) * D + k];
          expect(d1).toBeCloseTo(d0, 14);
        }
      }
      for (let e = 0; e < m.nElements; e++) {
        expect(Math.sign(signedVolume(m, e))).toBe(Math.sign(signedVolume(plain, e)));
        expect(Math.abs(signedVolume(m, e))).toBeGreaterThan(0);
      }
    }
    const other = buildSlabMesh({ ...base, jitter: 0.2, seed: 4 });
    const again = buildSlabMesh({ ...base, jitter: 0.2, seed: 4 });
    expect(Array.from(other.coords)).toEqual(Array.from(again.coords));
    expect(Array.from(other.coords)).not.toEqual(Array.from(buildSlabMesh({ ...base, jitter: 0.2, seed: 5 }).coords));
  });

  it('a jitter that inverts an element is refused with a message naming jitter', () => {
    let refused = 0;
    for (let seed = 1; seed <= 6; seed++) {
      try {
        buildSlabMesh({ dim: 3, cells: [4, 4, 4], nSlabs: 2, layersPerSlab: 1, slabThickness: 0.05, periodic: [true, true, true], jitter: 0.49, seed });
      } catch (err) {
        expect(err).toBeInstanceOf(UserError);
        expect((err as Error).message).toMatch(/^mesh option jitter: .*inverted/);
        refused++;
      }
    }
    expect(refused).toBeGreaterThan(0);
  });
});

describe('buildSlabMesh: option validation', () => {
  const good: SlabMeshOptions = { dim: 2, cells: [2, 2], nSlabs: 1, layersPerSlab: 1, slabThickness: 1, periodic: [false, false] };
  const cases: [Partial<SlabMeshOptions> & Record<string, unknown>, RegExp][] = [
    [{ dim: 4 as 3 }, /^mesh option dim: expected 1, 2 or 3, got 4$/],
    [{ cells: [2, 0] }, /^mesh option cells\[1\]: expected a positive integer, got 0$/],
    [{ cells: [2] }, /^mesh option cells: expected 2 entries \(one per space axis\), got 1$/],
    [{ cells: [2, 1.5] }, /^mesh option cells\[1\]: expected a positive integer/],
    [{ extent: [1, -1] }, /^mesh option extent\[1\]: expected a positive number, got -1$/],
    [{ nSlabs: 0 }, /^mesh option nSlabs: expected a positive integer, got 0$/],
    [{ layersPerSlab: -2 }, /^mesh option layersPerSlab: expected a positive integer/],
    [{ slabThickness: 0 }, /^mesh option slabThickness: expected a positive number, got 0$/],
    [{ slabThickness: Number.NaN }, /^mesh option slabThickness: expected a positive number, got NaN$/],
    [{ periodic: [true] }, /^mesh option periodic: expected 2 entries/],
    [{ shear: [1, 2, 3] }, /^mesh option shear: expected 2 entries/],
    [{ jitter: 0.5 }, /^mesh option jitter: expected a number in \[0, 0.5\), got 0.5$/],
    [{ seed: -1 }, /^mesh option seed: expected an integer/],
    [{ cells: [100000, 100000] }, /^mesh option cells: mesh would have 60000000000 elements \(limit 20000000\)/],
  ];
  it('names the bad option in one line', () => {
    for (const [patch, re] of cases) {
      const opts = { ...good, ...patch } as SlabMeshOptions;
      expect(() => buildSlabMesh(opts)).toThrow(UserError);
      expect(() => buildSlabMesh(opts)).toThrow(re);
    }
    expect(MAX_MESH_ELEMENTS).toBe(20_000_000);
  });

  it('uses the caller prefix and leaves the options unmodified', () => {
    expect(() => buildSlabMesh({ ...good, cells: [0, 1] }, 'suite.json: matrices[1].generate')).toThrow(/^suite\.json: matrices\[1\]\.generate\.cells\[0\]: expected a positive integer, got 0$/);
    const opts: SlabMeshOptions = { ...good, shear: [0.5, 0], jitter: 0.1, seed: 9 };
    const copy = JSON.parse(JSON.stringify(opts)) as SlabMeshOptions;
    const m = buildSlabMesh(opts);
    expect(opts).toEqual(copy);
    expect(m.options).toEqual({ ...copy, extent: [1, 1], front: null });
  });
});

describe('faceLocalVertices', () => {
  it('lists every local vertex except the face index, ascending', () => {
    expect(Array.from(faceLocalVertices(3, 0))).toEqual([1, 2, 3]);
    expect(Array.from(faceLocalVertices(3, 2))).toEqual([0, 1, 3]);
    expect(Array.from(faceLocalVertices(4, 4))).toEqual([0, 1, 2, 3]);
    expect(() => faceLocalVertices(3, 4)).toThrow(/local face must be 0..3/);
  });
});
