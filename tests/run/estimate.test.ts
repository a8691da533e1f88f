import { describe, it, expect } from 'vitest';
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadSystem } from '../../src/sparse/load.js';
import {
  binomial, estimateMemory, ESTIMATE_PRECONDITIONERS, generatorModes, kuhnElements, spaceTimeBasisSize, type EstimateInput,
} from '../../src/run/estimate.js';
import { buildSlabMesh } from '../../src/mesh/space-time.js';
import { buildBlockPattern } from '../../src/dg/block-pattern.js';
import { bsrBytes, bsrMemory, bsrToCsr } from '../../src/sparse/bsr.js';
import type { Bsr } from '../../src/sparse/types.js';
import { createPreconditioner } from '../../src/precond/registry.js';
import { solveSystem } from '../../src/solvers/run-recipe.js';
import { DEFAULT_RECIPE, type Recipe } from '../../src/solvers/recipe.js';
import type { SystemMatrix } from '../../src/precond/types.js';

/** The block structure `slabbench generate` stores for a structured mesh (no values assembled). */
function generatorPattern(dim: 1 | 2 | 3, cells: number | number[], layersPerSlab: number, nSlabs: number, periodic: boolean | boolean[], bs: number) {
  const mesh = buildSlabMesh({
    dim, cells: Array.isArray(cells) ? cells : Array(dim).fill(cells), nSlabs, layersPerSlab, slabThickness: 0.1,
    periodic: Array.isArray(periodic) ? periodic : Array(dim).fill(periodic),
  });
  const identity = Int32Array.from({ length: mesh.nElements }, (_, i) => i);
  const p = buildBlockPattern(mesh, identity, bs);
  const bsr: Bsr = {
    nBlockRows: mesh.nElements, nBlockCols: mesh.nElements, bs, rowPtr: p.rowPtr, colInd: p.colInd,
    values: new Float64Array(p.colInd.length * bs * bs),
  };
  return { bsr, slabOffsets: mesh.slabOffsets };
}

/** Blocks of the slab's own diagonal square (the matrix a slab-by-slab solve factors). */
function slabBlocks(a: Bsr, offsets: Int32Array, s: number): number {
  let count = 0;
  for (let I = offsets[s]; I < offsets[s + 1]; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) if (a.colInd[k] >= offsets[s] && a.colInd[k] < offsets[s + 1]) count++;
  }
  return count;
}

const base = { equations: 1, restart: 30 };

describe('estimate: sizes', () => {
  it('basis size is C(p+d+1, d+1); 3D+t gives 15 for p = 2 and 35 for p = 3', () => {
    // Dimension of degree-p polynomials on a D-simplex is C(p+D, D) (shared/references.md:
    // Proriol 1957, Koornwinder 1975, Dubiner 1991).
    expect(spaceTimeBasisSize(3, 2)).toBe(15);
    expect(spaceTimeBasisSize(3, 3)).toBe(35);
    expect(spaceTimeBasisSize(1, 0)).toBe(1);
    expect(spaceTimeBasisSize(1, 2)).toBe(6);
    expect(spaceTimeBasisSize(2, 1)).toBe(4);
    expect(binomial(10, 4)).toBe(210);
    expect(kuhnElements(3, 4, 2, 5)).toBe(64 * 2 * 5 * 24);
  });

  it('3D+t, p = 2 → 3 multiplies Jacobian storage by (35/15)² ≈ 5.44', () => {
    // Common practice, no source: block storage grows with the square of the basis size,
    // C(p+4,4) = 15 → 35. The values part follows exactly; the index arrays do not grow with
    // p, so the measured total ratio is slightly lower.
    const input = { ...base, spaceDim: 3 as const, equations: 5, elements: 24_000, slabs: 10 };
    const p2 = estimateMemory({ ...input, order: 2 });
    const p3 = estimateMemory({ ...input, order: 3 });
    const exact = (35 / 15) ** 2;
    expect(exact).toBeCloseTo(5.444, 3);
    expect(p3.allAtOnce.jacobian.values / p2.allAtOnce.jacobian.values).toBeCloseTo(exact, 12);
    const total = p3.allAtOnce.jacobian.total / p2.allAtOnce.jacobian.total;
    expect(total).toBeLessThan(exact);
    expect(total).toBeGreaterThan(exact * 0.999);
    expect(p3.bs).toBe(175);
  });
  // The same ratio on matrices the generator built: tests/dg/storage-ratio.test.ts.
});

describe('estimate: block counts against the generator pattern', () => {
  const cases: Array<[1 | 2 | 3, number | number[], number, number, boolean | boolean[]]> = [
    [1, 5, 2, 3, false],
    [1, 6, 1, 4, true],
    [2, 3, 1, 2, false],
    [2, 4, 2, 2, true],
    [2, [5, 3], 1, 3, [true, false]],
    [3, 2, 1, 2, false],
    [3, [3, 2, 2], 2, 1, false],
    [3, 3, 1, 1, true],
  ];
  for (const [d, c, L, S, periodic] of cases) {
    it(`${d}D+t, cells ${c}, ${L} layers, ${S} slabs, periodic ${periodic}: exact all-at-once and per-slab counts and bytes`, () => {
      const order = 1, equations = 2;
      const bs = equations * spaceTimeBasisSize(d, order);
      const { bsr, slabOffsets } = generatorPattern(d, c, L, S, periodic, bs);
      const e = estimateMemory({ ...base, spaceDim: d, order, equations, cells: c, layersPerSlab: L, slabs: S, periodic });
      expect(e.blockCountSource).toBe('structured-mesh');
      expect(e.allAtOnce.elements).toBe(bsr.nBlockRows);
      expect(e.allAtOnce.blocks).toBe(bsr.colInd.length);
      expect(e.allAtOnce.jacobian.total).toBe(bsrBytes(bsr));
      const mem = bsrMemory(bsr);
      expect(e.allAtOnce.jacobian.values).toBe(bsr.values.byteLength);
      expect(Object.values(mem).reduce((x, y) => x + y, 0)).toBe(e.allAtOnce.jacobian.total);
      for (let s = 0; s < S; s++) expect(slabBlocks(bsr, slabOffsets, s)).toBe(e.slab.blocks);
      expect(e.slab.elements * S).toBe(e.allAtOnce.elements);
      // The element-count form is an upper bound on the same mesh.
      const ub = estimateMemory({ ...base, spaceDim: d, order, equations, elements: bsr.nBlockRows, slabs: S });
      expect(ub.blockCountSource).toBe('upper-bound');
      expect(ub.allAtOnce.blocks).toBeGreaterThanOrEqual(bsr.colInd.length);
      expect(ub.allAtOnce.blocks).toBe(bsr.nBlockRows * (d + 3));
      // An exact count replaces the bound.
      const ex = estimateMemory({ ...base, spaceDim: d, order, equations, elements: bsr.nBlockRows, slabs: S, blocks: bsr.colInd.length });
      expect(ex.allAtOnce.jacobian.total).toBe(bsrBytes(bsr));
    });
  }
});

/** Non-symmetric blocks with a dominant diagonal so every factorization succeeds. */
function filled(a: Bsr): Bsr {
  const values = new Float64Array(a.values.length);
  const bs = a.bs, bb = bs * bs;
  let seed = 12345;
  const rnd = (): number => { seed = (seed * 1103515245 + 12345) % 2147483648; return seed / 2147483648 - 0.5; };
  for (let I = 0; I < a.nBlockRows; I++) {
    for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
      for (let q = 0; q < bb; q++) values[k * bb + q] = 0.1 * rnd();
      if (a.colInd[k] === I) for (let i = 0; i < bs; i++) values[k * bb + i * bs + i] += 4 + i;
    }
  }
  return { ...a, values };
}

describe('estimate: preconditioner factors and Krylov basis against measured buffers', () => {
  const d = 1, order = 1, equations = 2, c = 4, L = 1, S = 2;
  const bs = equations * spaceTimeBasisSize(d, order);
  const { bsr: pattern, slabOffsets } = generatorPattern(d, c, L, S, false, bs);
  const bsr = filled(pattern);
  // the layout's modes as the generator writes them (p-multigrid reads them)
  const system: SystemMatrix = { bsr, csr: bsrToCsr(bsr), slabOffsets, modes: generatorModes(d, order, equations) };
  const input: EstimateInput = { spaceDim: d, order, equations, cells: c, layersPerSlab: L, slabs: S, restart: 5 };
  const e = estimateMemory(input);
  const recipe = (o: Partial<Recipe>): Recipe => ({ ...DEFAULT_RECIPE, ...o });
  const without = (m: Record<string, number>, key: string): number =>
    Object.entries(m).filter(([k]) => k !== key).reduce((s, [, v]) => s + v, 0);

  it('preconditioner bytes match what each preconditioner reports (workspace included)', () => {
    for (const name of ESTIMATE_PRECONDITIONERS) {
      if (name === 'block-iluk') continue; // needs its fill pattern's block count: tests/run/estimate-generated.test.ts
      const M = createPreconditioner(system, recipe({ preconditioner: name }));
      expect(M.setup().ok, name).toBe(true);
      // ilu0 shares the row pointers and column indices of A's CSR: they count as the Jacobian (CSR)
      const measured = without(M.memory(), '');
      expect(measured, name).toBe(e.allAtOnce.preconditioners[name]!.total);
    }
    expect(e.allAtOnce.jacobianCsr.total).toBe(system.csr.values.byteLength + system.csr.colInd.byteLength + system.csr.rowPtr.byteLength);
  });

  it('Krylov basis bytes match GMRES, FGMRES and BiCGStab', () => {
    const b = new Float64Array(system.csr.nRows).fill(1);
    const n = system.csr.nRows;
    const run = (o: Partial<Recipe>, iters = 3) => solveSystem(system, b, recipe({ rtol: 1e-30, maxIterations: iters, ...o })).result.memory;
    // estimate projects the reserved basis of a full cycle; the run holds the vectors it wrote:
    // 3 iterations write v_0 … v_3 (and z_0 … z_2 for FGMRES), 7 iterations of GMRES(5) all 6
    const g = run({ krylov: 'gmres', restart: 5, preconditioner: 'jacobi' });
    expect(g.basisReservedBytes).toBe(e.allAtOnce.krylov.gmres);
    expect(g.buffers.krylov.basis).toBe(4 * n * 8);
    expect(run({ krylov: 'gmres', restart: 5, preconditioner: 'jacobi' }, 7).buffers.krylov.basis).toBe(e.allAtOnce.krylov.gmres);
    const f = run({ krylov: 'fgmres', restart: 5, preconditioner: 'jacobi' });
    expect(f.basisReservedBytes).toBe(e.allAtOnce.krylov.fgmres);
    expect(f.buffers.krylov.basis + f.buffers.krylov.flexibleBasis).toBe((4 + 3) * n * 8);
    const bi = run({ krylov: 'bicgstab', preconditioner: 'jacobi' });
    expect(Object.values(bi.buffers.krylov).reduce((x, y) => x + y, 0)).toBe(e.allAtOnce.krylov.bicgstab);
    expect(bi.basisReservedBytes).toBe(e.allAtOnce.krylov.bicgstab);
  });

  it('Krylov basis bytes match GMRES-DR and GCRO-DR (default and given deflate, k = 0 included)', () => {
    const b = new Float64Array(system.csr.nRows).fill(1);
    const n = system.csr.nRows;
    const run = (o: Partial<Recipe>) => solveSystem(system, b, recipe({ rtol: 1e-30, maxIterations: 3, preconditioner: 'jacobi', restart: 5, ...o })).result.memory;
    // the n-length vectors of each method's buffers (its Hessenberg-sized arrays are left out, as for GMRES)
    const vectors = (m: ReturnType<typeof run>, names: string[]) => names.reduce((s, k) => s + (m.buffers.krylov[k] ?? 0), 0);
    const dr = ['basis', 'deflationBasis'];
    const gcro = ['basis', 'recycledU', 'recycledC', 'newU', 'newC'];
    // restart 5: default deflate ⌊5/3⌋ = 1
    expect(e.deflate).toBe(1);
    expect(vectors(run({ krylov: 'gmres-dr' }), dr)).toBe(e.allAtOnce.krylov['gmres-dr']);
    expect(e.allAtOnce.krylov['gmres-dr']).toBe((5 + 1 + 2) * n * 8);
    expect(vectors(run({ krylov: 'gcro-dr' }), gcro)).toBe(e.allAtOnce.krylov['gcro-dr']);
    expect(e.allAtOnce.krylov['gcro-dr']).toBe((5 + 1 + 4) * n * 8);
    for (const deflate of [0, 3]) {
      const ek = estimateMemory({ ...input, deflate });
      expect(ek.deflate).toBe(deflate);
      expect(vectors(run({ krylov: 'gmres-dr', deflate }), dr), `deflate ${deflate}`).toBe(ek.allAtOnce.krylov['gmres-dr']);
      expect(vectors(run({ krylov: 'gcro-dr', deflate }), gcro), `deflate ${deflate}`).toBe(ek.allAtOnce.krylov['gcro-dr']);
    }
    expect(estimateMemory({ ...input, deflate: 0 }).allAtOnce.krylov['gmres-dr']).toBe(e.allAtOnce.krylov.gmres);
    expect(() => estimateMemory({ ...input, deflate: 5 })).toThrow(/deflate must be an integer from 0 to restart − 1 = 4, got 5/);
  });
});

describe('estimate: input checks', () => {
  it('rejects bad input before computing anything', () => {
    const ok = { spaceDim: 2 as const, order: 1, equations: 1, elements: 100, slabs: 2, restart: 30 };
    expect(() => estimateMemory({ ...ok, spaceDim: 4 as unknown as 1 })).toThrow(/spaceDim/);
    expect(() => estimateMemory({ ...ok, order: -1 })).toThrow(/order/);
    expect(() => estimateMemory({ ...ok, equations: 0 })).toThrow(/equations/);
    expect(() => estimateMemory({ ...ok, slabs: 1.5 })).toThrow(/slabs/);
    expect(() => estimateMemory({ ...ok, elements: undefined })).toThrow(/exactly one/);
    expect(() => estimateMemory({ ...ok, cells: 4 })).toThrow(/exactly one/);
    expect(() => estimateMemory({ ...ok, blocks: 50 })).toThrow(/blocks/);
    expect(() => estimateMemory({ ...ok, elements: 1 })).toThrow(/at least slabs/);
  });
  it('does not modify its input', () => {
    const input = { spaceDim: 3 as const, order: 2, equations: 5, cells: 3, layersPerSlab: 2, slabs: 4, restart: 20, periodic: true };
    const copy = structuredClone(input);
    estimateMemory(input);
    expect(input).toEqual(copy);
  });
});

describe('estimate: committed generated matrices (matrices/ci, written by `slabbench generate`)', () => {
  const dir = fileURLToPath(new URL('../../matrices/ci/', import.meta.url));
  const names = readdirSync(dir).filter((f) => f.endsWith('.layout.json')).map((f) => f.slice(0, -'.layout.json'.length));
  it('finds the committed cases', () => {
    expect(names.length).toBeGreaterThanOrEqual(3);
  });
  for (const name of names) {
    it(`${name}: the structured-mesh estimate equals the stored blocks and BSR bytes`, async () => {
      const mtx = existsSync(join(dir, `${name}.mtx.gz`)) ? join(dir, `${name}.mtx.gz`) : join(dir, `${name}.mtx`);
      const sys = await loadSystem(mtx);
      const prov = sys.layout!.provenance as { nEquations: number; params: { dim: 1 | 2 | 3; order: number; cells: number[]; slabs: number; layersPerSlab: number; periodic: boolean[] } };
      const p = prov.params;
      const e = estimateMemory({
        spaceDim: p.dim, order: p.order, equations: prov.nEquations, cells: p.cells, layersPerSlab: p.layersPerSlab,
        slabs: p.slabs, periodic: p.periodic, restart: 30,
      });
      expect(e.bs).toBe(sys.bs);
      expect(e.allAtOnce.elements).toBe(sys.bsr.nBlockRows);
      expect(e.allAtOnce.blocks).toBe(sys.bsr.colInd.length);
      expect(e.allAtOnce.jacobian.total).toBe(bsrBytes(sys.bsr));
      for (let s = 0; s < p.slabs; s++) expect(slabBlocks(sys.bsr, sys.slabOffsets!, s)).toBe(e.slab.blocks);
    });
  }
});
