// Hand-built results for the report tests: two invented matrices × three recipes, with
// realistic SolveResult objects (histories, Ritz values, memory, timing). Not a sweep output.
import type { Bsr } from '../../src/sparse/types.js';
import type { HistoryEntry, ResultsDoc, RunRecord } from '../../src/run/results-types.js';
import type { SolveResult, Cause } from '../../src/solvers/types.js';
import { isSolved, outcomeOf } from '../../src/solvers/types.js';
import { DEFAULT_RECIPE, type Recipe } from '../../src/solvers/recipe.js';
import { blockPattern } from '../../src/report/pattern.js';

/**
 * Block lower triangular by slabs: inside a slab each block row couples to its neighbours
 * (I−1, I+1), and to the same position in the previous slab (upwind in time).
 */
export function slabBsr(nSlabs: number, rowsPerSlab: number, bs: number): { bsr: Bsr; slabOffsets: Int32Array } {
  const n = nSlabs * rowsPerSlab;
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [];
  for (let I = 0; I < n; I++) {
    const s = Math.floor(I / rowsPerSlab), first = s * rowsPerSlab, last = first + rowsPerSlab - 1;
    const row: number[] = [];
    if (s > 0) row.push(I - rowsPerSlab);
    if (I > first) row.push(I - 1);
    row.push(I);
    if (I < last) row.push(I + 1);
    cols.push(...row);
    rowPtr[I + 1] = cols.length;
  }
  const values = new Float64Array(cols.length * bs * bs);
  for (let k = 0; k < values.length; k++) values[k] = ((k * 7919) % 13) / 13 - 0.4;
  const slabOffsets = Int32Array.from({ length: nSlabs + 1 }, (_, s) => s * rowsPerSlab);
  return { bsr: { nBlockRows: n, nBlockCols: n, bs, rowPtr, colInd: Int32Array.from(cols), values }, slabOffsets };
}

function geometricHistory(iterations: number, rate: number, wobble: number, restartEvery = 0): number[] {
  const h = [1];
  for (let i = 1; i <= iterations; i++) {
    const bump = restartEvery > 0 && i % restartEvery === 1 && i > 1 ? 3 : 1;
    h.push(h[i - 1] * rate * (1 + wobble * Math.sin(i * 1.7)) * bump);
  }
  return h;
}

function ritzCloud(count: number, center: number, radius: number, squash: number): { re: number[]; im: number[] } {
  const re: number[] = [], im: number[] = [];
  for (let i = 0; i < count; i++) {
    const a = (2 * Math.PI * i) / count, r = radius * (0.35 + 0.65 * ((i * 37) % 11) / 10);
    re.push(center + r * Math.cos(a));
    im.push(squash * r * Math.sin(a));
  }
  return { re, im };
}

function result(o: {
  method: string; preconditioner: string; cause: Cause; history: number[]; restarts: number;
  trueRes: number; setup: number; solve: number; precBytes: number; krylovBytes: number; matrixBytes: number;
  ritz?: { re: number[]; im: number[] }; mismatch?: boolean;
}): SolveResult {
  const iterations = o.history.length - 1;
  return {
    method: o.method, preconditioner: o.preconditioner,
    converged: isSolved(o.cause), outcome: outcomeOf(o.cause),
    cause: o.cause, iterations, restarts: o.restarts, history: o.history,
    watched: 'left-preconditioned', relativeTo: 'rhs', referenceNorm: 3.75,
    trueRelativeResidual: o.trueRes,
    residualChecks: [{ iteration: iterations, estimate: o.history[iterations], trueValue: o.trueRes }],
    residualMismatch: o.mismatch ?? false,
    timing: { setupSeconds: o.setup, solveSeconds: o.solve, preconditionerApplications: iterations + 1, secondsPerPreconditionerApply: o.solve / (iterations + 1) / 2 },
    memory: {
      matrixBytes: o.matrixBytes, preconditionerBytes: o.precBytes, krylovBytes: o.krylovBytes, workBytes: 4096,
      peakBytes: 80 * 1024 * 1024,
      buffers: { matrix: { values: o.matrixBytes }, preconditioner: { factors: o.precBytes }, krylov: { basis: o.krylovBytes }, work: { r: 4096 } },
    },
    work: {
      setup: { matvecs: 0, preconditionerApplies: 0, innerIterations: 0, flops: 40 * o.precBytes, bytes: 3 * o.precBytes },
      solve: { matvecs: iterations + 2, preconditionerApplies: iterations + 1, innerIterations: 0, flops: (iterations + 2) * o.matrixBytes / 6, bytes: (iterations + 2) * (o.matrixBytes + 2 * o.precBytes) },
    },
    ...(o.ritz ? { ritz: o.ritz } : {}),
  };
}

const recipe = (name: string, krylov: Recipe['krylov'], preconditioner: Recipe['preconditioner']): Recipe =>
  ({ ...DEFAULT_RECIPE, name, krylov, preconditioner });

export const RECIPES = {
  bilu: recipe('gmres-bilu0', 'gmres', 'block-ilu0'),
  bjac: recipe('gmres-bjacobi', 'gmres', 'block-jacobi'),
  bicg: recipe('bicgstab-jacobi', 'bicgstab', 'jacobi'),
};

export function makeResults(): ResultsDoc {
  const duct = slabBsr(4, 12, 12);
  const tank = slabBsr(6, 20, 4);
  const runs: RunRecord[] = [
    {
      matrix: 'duct-pulse', recipe: 'gmres-bilu0', recipeParams: RECIPES.bilu,
      result: result({ method: 'gmres', preconditioner: 'block-ilu0', cause: 'relative-target', history: geometricHistory(9, 0.11, 0.3),
        restarts: 0, trueRes: 6.1e-9, setup: 0.0042, solve: 0.0061, precBytes: 120_000, krylovBytes: 143_000, matrixBytes: 110_000,
        ritz: ritzCloud(9, 1, 0.35, 0.6) }),
    },
    {
      matrix: 'duct-pulse', recipe: 'gmres-bjacobi', recipeParams: RECIPES.bjac,
      result: result({ method: 'gmres', preconditioner: 'block-jacobi', cause: 'relative-target', history: geometricHistory(37, 0.6, 0.2, 30),
        restarts: 1, trueRes: 8.7e-9, setup: 0.0011, solve: 0.0213, precBytes: 56_000, krylovBytes: 143_000, matrixBytes: 110_000,
        ritz: ritzCloud(30, 0.9, 0.8, 0.9) }),
    },
    {
      matrix: 'duct-pulse', recipe: 'bicgstab-jacobi', recipeParams: RECIPES.bicg,
      result: result({ method: 'bicgstab', preconditioner: 'jacobi', cause: 'relative-target', history: geometricHistory(58, 0.72, 0.5),
        restarts: 0, trueRes: 9.9e-9, setup: 0.0001, solve: 0.0188, precBytes: 4_600, krylovBytes: 36_800, matrixBytes: 110_000, mismatch: true }),
    },
    {
      matrix: 'tank-stir', recipe: 'gmres-bilu0', recipeParams: RECIPES.bilu,
      result: result({ method: 'gmres', preconditioner: 'block-ilu0', cause: 'relative-target', history: geometricHistory(24, 0.45, 0.25),
        restarts: 0, trueRes: 7.4e-9, setup: 0.0031, solve: 0.0140, precBytes: 72_000, krylovBytes: 119_000, matrixBytes: 68_000,
        ritz: ritzCloud(24, 1.05, 0.7, 0.5) }),
    },
    {
      matrix: 'tank-stir', recipe: 'gmres-bjacobi', recipeParams: RECIPES.bjac,
      result: result({ method: 'gmres', preconditioner: 'block-jacobi', cause: 'iteration-budget', history: geometricHistory(120, 0.93, 0.1, 30),
        restarts: 4, trueRes: 2.3e-4, setup: 0.0008, solve: 0.0902, precBytes: 15_400, krylovBytes: 119_000, matrixBytes: 68_000,
        ritz: ritzCloud(30, 0.7, 0.75, 1.1) }),
    },
    {
      matrix: 'tank-stir', recipe: 'bicgstab-jacobi', recipeParams: RECIPES.bicg,
      result: result({ method: 'bicgstab', preconditioner: 'jacobi', cause: 'residual-growth', history: [1, 0.9, 2.5, 40, 900, 2.2e4],
        restarts: 0, trueRes: 1.9e4, setup: 0.0001, solve: 0.0009, precBytes: 3_840, krylovBytes: 30_700, matrixBytes: 68_000 }),
    },
  ];
  return {
    schema: 'slabbench-results/2', slabbench: '0.1.0', commit: '3f2a9c1d8e7b6a5f4e3d2c1b0a9f8e7d6c5b4a39', node: 'v20.19.0',
    cpu: 'Invented CPU @ 2.0GHz', date: '2026-12-01T22:00:00.000Z',
    suite: { path: 'matrices/suite.json', description: 'Report test fixture <invented scenarios & "quotes">' },
    parameters: { jobs: 2 },
    matrices: [
      { name: 'duct-pulse', source: 'generated', path: 'duct-pulse.mtx', note: 'invented scenario', n: 48 * 12, nnz: duct.bsr.colInd.length * 144,
        bs: 12, nBlockRows: 48, nBlocks: duct.bsr.colInd.length, nSlabs: 4, pattern: blockPattern(duct.bsr, duct.slabOffsets) },
      { name: 'tank-stir', source: 'generated', path: 'tank-stir.mtx', note: 'invented scenario', n: 120 * 4, nnz: tank.bsr.colInd.length * 16,
        bs: 4, nBlockRows: 120, nBlocks: tank.bsr.colInd.length, nSlabs: 6, pattern: blockPattern(tank.bsr, tank.slabOffsets, 40) },
    ],
    runs,
  };
}

export function makeHistory(): HistoryEntry[] {
  const commits = ['a1b2c3d4e5', 'b2c3d4e5f6', 'c3d4e5f6a7', '3f2a9c1d8e'];
  return commits.map((commit, k) => ({
    date: `2026-11-${String(20 + k).padStart(2, '0')}T10:00:00Z`, commit, slabbench: '0.1.0',
    runs: [
      { matrix: 'duct-pulse', recipe: 'gmres-bilu0', outcome: 'solved', cause: 'relative-target', iterations: 9 + (k === 1 ? 2 : 0), trueRelativeResidual: 6e-9, setupSeconds: 0.004, solveSeconds: 0.006 + 0.001 * k, peakBytes: 8e7 },
      { matrix: 'duct-pulse', recipe: 'gmres-bjacobi', outcome: 'solved', cause: 'relative-target', iterations: 37, trueRelativeResidual: 8e-9, setupSeconds: 0.001, solveSeconds: 0.021, peakBytes: 8e7 },
      ...(k >= 2 ? [{ matrix: 'duct-pulse', recipe: 'bicgstab-jacobi', outcome: k === 2 ? 'unsolved' : 'solved', cause: k === 2 ? 'iteration-budget' : 'relative-target', iterations: 58, trueRelativeResidual: 9e-9, setupSeconds: 0.0001, solveSeconds: 0.019, peakBytes: 8e7 }] : []),
      { matrix: 'tank-stir', recipe: 'gmres-bilu0', outcome: 'solved', cause: 'relative-target', iterations: 24 - k, trueRelativeResidual: 7e-9, setupSeconds: 0.003, solveSeconds: 0.014, peakBytes: 8e7 },
    ],
  }));
}
