import { describe, it, expect } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseGeneratorParams, generateSystem, resolveGenerator, writeGeneratedCase } from '../../src/dg/generate.js';
import { readSuiteCases } from '../../src/dg/suite-cases.js';
import { orderElements } from '../../src/dg/ordering.js';
import { buildSlabMesh } from '../../src/mesh/space-time.js';
import { UserError } from '../../src/util/errors.js';
import { readMatrixMarket, readMatrixMarketVector } from '../../src/sparse/matrix-market.js';
import { bsrToCsr } from '../../src/sparse/bsr.js';

const parse = (o: Record<string, unknown>) => parseGeneratorParams(o, 'case.json: matrices[2].generate');

function messageOf(f: () => unknown): string {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(UserError);
    const m = (e as Error).message;
    expect(m).not.toContain('\n');
    return m;
  }
  throw new Error('expected a UserError');
}

describe('parseGeneratorParams: one-line errors naming the field, before any work', () => {
  it.each([
    [{ physics: 'advection', dim: 3, order: 4 }, /^case\.json: matrices\[2\]\.generate\.order: expected an integer 0\.\.3 for 3D\+t, got 4$/],
    [{ physics: 'advection', dim: 2, order: 5 }, /\.order: expected an integer 0\.\.4 for 2D\+t/],
    [{ physics: 'advection', cells: [4, 0] }, /\.cells: expected a positive integer number of cells \(entry 1\), got 0/],
    [{ physics: 'advection', cfl: 0 }, /\.cfl: expected a number > 0, got 0/],
    [{ physics: 'advection', cfl: -0.5 }, /\.cfl: expected a number > 0/],
    [{ physics: 'advection', cfl: 0.5, slabThickness: 0.1 }, /\.cfl: give either a CFL number or a slab thickness/],
    [{ physics: 'advection', initial: 'sin(x' }, /\.initial: expression 'sin\(x' does not parse/],
    [{ physics: 'advection', dim: 1, velocity: ['sqrt(x - 2)'] }, /\.velocity\[0\]: expression 'sqrt\(x - 2\)' evaluates to a non-real value/],
    [{ physics: 'advection', dim: 1, velocity: ['1/(x - 0.5)'] }, /\.velocity\[0\]: expression .* evaluates to Infinity/],
    [{ physics: 'advection', dim: 1, initial: '0/0 + x' }, /\.initial: expression .* evaluates to NaN/],
    [{ physics: 'heat' }, /\.physics: expected one of advection, advection-diffusion, acoustics, burgers, euler, got "heat"/],
    [{ physics: 'advection', soundSpeed: 2 }, /\.soundSpeed: does not apply to physics advection \(it belongs to acoustics\)/],
    [{ physics: 'advection', colour: 'red' }, /\.colour: unknown field/],
    [{ physics: 'burgers', shear: 'align' }, /\.shear: 'align' needs a constant transport velocity/],
    [{ physics: 'acoustics', soundSpeed: 0 }, /\.soundSpeed: expected a number > 0/],
    [{ physics: 'advection', velocity: [0, 0] }, /\.cfl: the largest wave speed is 0/],
    [{ physics: 'advection', jitter: 0.7 }, /\.jitter: expected a number in \[0, 0\.5\)/],
    [{ physics: 'advection', ordering: 'sideways' }, /\.ordering: expected one of natural, downstream, random/],
    [{ physics: 'advection', dim: 3, cells: 400, order: 3 }, /\.cells: .* GiB of matrix values/],
  ])('%j', (input, pattern) => {
    const before = JSON.stringify(input);
    expect(messageOf(() => parse(input as Record<string, unknown>))).toMatch(pattern);
    expect(JSON.stringify(input)).toBe(before); // input unmodified
  });

  it('fills every default so the layout can rebuild the case', () => {
    const p = parse({ physics: 'acoustics', dim: 2 });
    expect(p).toMatchObject({
      physics: 'acoustics', dim: 2, order: 1, cells: [8, 8], extent: [1, 1], slabs: 4, layersPerSlab: 1, cfl: 0.5,
      slabThickness: null, periodic: [false, false], shear: [0, 0], jitter: 0, seed: 1, ordering: 'natural',
      soundSpeed: 1, meanFlow: [0, 0], travelling: true, inflow: 'exact',
    });
    // Re-parsing the normalized parameters gives the same object.
    expect(parse(JSON.parse(JSON.stringify(p)))).toEqual(p);
  });

  it('slab thickness = cfl · h / max wave speed (acoustics: |U| + c)', () => {
    const p = parse({ physics: 'acoustics', dim: 2, cells: [10, 20], extent: [1, 1], cfl: 0.4, soundSpeed: 2, meanFlow: [0.6, 0.8] });
    expect(resolveGenerator(p).slabThickness).toBeCloseTo((0.4 * 0.05) / 3, 15);
  });
});

describe('generateSystem', () => {
  it('layout: block size, slab offsets in block rows, provenance with every parameter', () => {
    const p = parse({ physics: 'acoustics', dim: 2, order: 2, cells: 2, slabs: 3 });
    const s = generateSystem(p);
    expect(s.layout.blockSize).toBe(3 * 10); // d+1 equations × C(2+3, 3) basis functions (references.md)
    expect(s.bsr.bs).toBe(30);
    expect(s.layout.slabOffsets).toEqual([0, 24, 48, 72]); // 2·2 cells × 3! Kuhn simplices per slab
    const prov = s.layout.provenance!;
    expect(prov).toMatchObject({ physics: 'acoustics', dim: 2, order: 2, nElements: 72, nEquations: 3, nBasis: 10 });
    expect(prov.params).toEqual(p);
    expect(s.exactSolution!.length).toBe(72 * 30);
  });
  it('Burgers has no exact solution; a case with a velocity field has none either', () => {
    expect(generateSystem(parse({ physics: 'burgers', dim: 1, cells: 4, slabs: 1 })).exactSolution).toBeUndefined();
    expect(generateSystem(parse({ physics: 'advection', dim: 1, cells: 4, slabs: 1, velocity: ['1 + 0.1*x'] })).exactSolution).toBeUndefined();
  });
  it('is deterministic for a seed (jitter and random order) and changes with it', () => {
    const a = generateSystem(parse({ physics: 'advection', cells: 3, slabs: 1, jitter: 0.2, ordering: 'random', seed: 5 }));
    const b = generateSystem(parse({ physics: 'advection', cells: 3, slabs: 1, jitter: 0.2, ordering: 'random', seed: 5 }));
    const c = generateSystem(parse({ physics: 'advection', cells: 3, slabs: 1, jitter: 0.2, ordering: 'random', seed: 6 }));
    expect(Array.from(a.bsr.values)).toEqual(Array.from(b.bsr.values));
    expect(Array.from(a.bsr.colInd)).not.toEqual(Array.from(c.bsr.colInd));
  });
});

describe('generateSystem: element centroids in the layout', () => {
  it('1D+t: the Kuhn triangles of each space-time box have centroids (x₀ + h/3, t₀ + 2τ/3) and (x₀ + 2h/3, t₀ + τ/3)', () => {
    // cells 4 on [0, 2] (h = 0.5), 2 slabs of τ = 0.25: 16 triangles, the mean of the three vertices each
    const s = generateSystem(parse({ physics: 'advection', dim: 1, cells: 4, extent: 2, slabs: 2, slabThickness: 0.25 }));
    const c = s.layout.centroids!;
    expect(c.nCoordinates).toBe(2);
    expect(c.values.length).toBe(2 * s.bsr.nBlockRows);
    const got = Array.from({ length: 16 }, (_v, I) => [c.values[2 * I], c.values[2 * I + 1]]).sort((p, q) => p[0] - q[0] || p[1] - q[1]);
    const want: number[][] = [];
    for (let i = 0; i < 4; i++) {
      for (let k = 0; k < 2; k++) {
        const x0 = 0.5 * i, t0 = 0.25 * k;
        want.push([x0 + 0.5 / 3, t0 + 0.5 / 3], [x0 + 1 / 3, t0 + 0.25 / 3]);
      }
    }
    want.sort((p, q) => p[0] - q[0] || p[1] - q[1]);
    for (let j = 0; j < 16; j++) for (let k = 0; k < 2; k++) expect(got[j][k]).toBeCloseTo(want[j][k], 6);
    // slab by slab: the first slab's block rows have t < 0.25
    for (let I = 0; I < s.layout.slabOffsets![1]; I++) expect(c.values[2 * I + 1]).toBeLessThan(0.25);
  });

  it('2D+t, random element order: the points follow the block rows (face neighbours are close, the rest far)', () => {
    const s = generateSystem(parse({ physics: 'advection', dim: 2, cells: [4, 3], slabs: 1, ordering: 'random', seed: 3 }));
    const { nCoordinates: nc, values } = s.layout.centroids!;
    expect(nc).toBe(3);
    const a = s.bsr;
    const dist = (I: number, J: number) => Math.hypot(...[0, 1, 2].map((k) => values[I * nc + k] - values[J * nc + k]));
    // neighbours sharing a face lie inside two adjacent boxes of 0.25 × 0.33 × τ: closer than one box diagonal
    const diag = Math.hypot(1 / 4, 1 / 3, s.layout.provenance!.slabThickness as number);
    let far = 0;
    for (let I = 0; I < a.nBlockRows; I++) {
      for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) expect(dist(I, a.colInd[k])).toBeLessThan(diag);
      if (dist(I, (I + 1) % a.nBlockRows) > diag) far++;
    }
    expect(far).toBeGreaterThan(a.nBlockRows / 4); // consecutive rows of a random order are mostly not neighbours
  });
});

describe('orderElements', () => {
  it('every ordering is a permutation that keeps each slab in place', () => {
    const mesh = buildSlabMesh({ dim: 2, cells: [4, 4], nSlabs: 3, layersPerSlab: 1, slabThickness: 0.1, periodic: [true, false] });
    for (const o of ['natural', 'downstream', 'random'] as const) {
      // Fast flow along periodic x: the upwind graph wraps around into cycles that downstream must cut.
      const { perm, inv, cyclesCut } = orderElements(mesh, o, 3, (_X, _xo, out) => { out[0] = 4; out[1] = 0.3; });
      const seen = new Uint8Array(mesh.nElements);
      for (let s = 0; s < mesh.nSlabs; s++) {
        for (let i = mesh.slabOffsets[s]; i < mesh.slabOffsets[s + 1]; i++) {
          expect(perm[i]).toBeGreaterThanOrEqual(mesh.slabOffsets[s]);
          expect(perm[i]).toBeLessThan(mesh.slabOffsets[s + 1]);
          expect(inv[perm[i]]).toBe(i);
          seen[perm[i]]++;
        }
      }
      expect(seen.every((v) => v === 1)).toBe(true);
      if (o === 'downstream') expect(cyclesCut).toBeGreaterThan(0);
    }
  });
});

describe('writeGeneratedCase and suite cases', () => {
  it('writes NAME.mtx, NAME.rhs.mtx and NAME.layout.json that read back exactly', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-gen-'));
    try {
      const p = parse({ physics: 'advection', dim: 1, order: 1, cells: 4, slabs: 2 });
      const files = await writeGeneratedCase(p, dir, 'tiny');
      expect(files).toEqual({ mtx: join(dir, 'tiny.mtx'), rhs: join(dir, 'tiny.rhs.mtx'), layout: join(dir, 'tiny.layout.json'), triangularUnderPermutation: expect.any(Boolean) as boolean });
      const s = generateSystem(p);
      const { csr } = await readMatrixMarket(files.mtx);
      const expected = bsrToCsr(s.bsr);
      expect(Array.from(csr.colInd)).toEqual(Array.from(expected.colInd));
      expect(Array.from(csr.values)).toEqual(Array.from(expected.values));
      expect(Array.from(await readMatrixMarketVector(files.rhs))).toEqual(Array.from(s.rhs));
      const layout = JSON.parse(readFileSync(files.layout, 'utf8'));
      expect(layout.blockSize).toBe(3);
      expect(layout.slabOffsets).toEqual([0, 8, 16]);
      expect(layout.provenance.params).toEqual(p);
      await expect(writeGeneratedCase(p, dir, '../escape')).rejects.toThrow(/case name/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
  it('readSuiteCases validates every generator case and names the failing entry', () => {
    const dir = mkdtempSync(join(tmpdir(), 'slabbench-suite-'));
    try {
      const path = join(dir, 'suite.json');
      writeFileSync(path, JSON.stringify({
        schema: 'slabbench-suite/1', matrices: [
          { name: 'mine', file: 'A.mtx' },
          { name: 'ok', generate: { physics: 'advection', dim: 1 } },
          { name: 'bad', generate: { physics: 'advection', dim: 1, order: 9 } },
        ], recipes: [],
      }));
      expect(messageOf(() => readSuiteCases(path))).toBe(`${path}: matrices[2].generate.order: expected an integer 0..4 for 1D+t, got 9`);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
  it('the demo suite lists ten invented scenarios that all validate', () => {
    const cases = readSuiteCases(new URL('../../matrices/suite.json', import.meta.url).pathname);
    expect(cases.map((c) => c.name)).toEqual(['duct-pulse', 'stirred-tank', 'corridor-smoke', 'channel-bore', 'room-sound', 'tank-burst', 'hall-eddy', 'room-recirculation', 'corridor-front', 'floor-screed']);
    for (const c of cases) expect(c.note).toMatch(/^invented scenario/);
  });
});
