/**
 * p-multigrid benchmark: setup and per-application time and bytes, per level, on two generated
 * matrices of at least 5 million stored entries — 2D+t upwind advection at p = 2 and 2D+t
 * acoustics at p = 2 (invented scenarios: a plume carried across a square room by a steady draught;
 * a pressure pulse in a square hall). Ratios to the streaming triad measured in the same run.
 *
 *   npx tsx bench/p-multigrid.bench.ts [--quick]
 *
 * Per level: rows, stored blocks, bytes (matrix values on coarse levels, smoother or coarse
 * preconditioner, vectors), setup seconds (from stats()), the time of one smoothing step (residual
 * product + smoother apply) and of one residual product, and their effective bandwidth (bytes of
 * the level's matrix values and indices read once, plus vectors) over the triad's. Then one whole
 * preconditioner application (default V-cycle; coarse solve GMRES + block ILU(0) to 1e-6) and one
 * FGMRES iteration (measured as the solve time over the iterations of an rtol 1e-8 solve).
 * Figures only; no assertions. Times are medians of repeated runs (wall clock).
 */
import { loadavg } from 'node:os';
import { generateSystem, parseGeneratorParams } from '../src/dg/generate.js';
import { bsrMultiplyAddKernel, bsrToCsr, bsrSpmv } from '../src/sparse/bsr.js';
import { createPreconditioner } from '../src/precond/registry.js';
import { PMultigridPreconditioner } from '../src/precond/p-multigrid.js';
import { parseRecipe } from '../src/solvers/recipe.js';
import { solveSystem } from '../src/solvers/run-recipe.js';
import { totalBytes } from '../src/precond/common.js';
import type { SystemMatrix } from '../src/precond/types.js';
import { measureStreamBandwidths, settle } from './stream.js';

const quick = process.argv.includes('--quick');

function median(fn: () => void, reps: number): number {
  fn();
  const t: number[] = [];
  for (let r = 0; r < reps; r++) { const t0 = performance.now(); fn(); t.push((performance.now() - t0) / 1e3); }
  return t.sort((a, b) => a - b)[t.length >> 1];
}

const cases = [
  { name: 'advection 2D+t p=2 (room draught, invented)', params: { physics: 'advection', dim: 2, order: 2, cells: quick ? [10, 10] : [22, 22], extent: [1, 1], slabs: 4, cfl: 0.5, periodic: [false, false], velocity: [1, 0.4] } },
  { name: 'acoustics 2D+t p=2 (hall pulse, invented)', params: { physics: 'acoustics', dim: 2, order: 2, cells: quick ? [5, 5] : [11, 11], extent: [1, 1], slabs: 2, cfl: 1, periodic: [false, false], soundSpeed: 1, meanFlow: [0, 0] } },
];

const fmt = (x: number, d = 3): string => (Number.isFinite(x) ? x.toPrecision(d) : '–');
const mib = (b: number): string => `${(b / 2 ** 20).toFixed(1)} MiB`;

console.log(`p-multigrid bench, load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}${quick ? ' (quick)' : ''}`);
for (const c of cases) {
  const g = generateSystem(parseGeneratorParams(c.params, 'bench'));
  const sys: SystemMatrix = { bsr: g.bsr, csr: bsrToCsr(g.bsr), slabOffsets: Int32Array.from(g.layout.slabOffsets ?? []), modes: g.layout.modes };
  const n = g.bsr.nBlockRows * g.bsr.bs;
  const stored = g.bsr.rowPtr[g.bsr.nBlockRows] * g.bsr.bs ** 2;
  const b = new Float64Array(n);
  bsrSpmv(g.bsr, new Float64Array(n).fill(1), b);
  await settle();
  const triads = await measureStreamBandwidths({ timeMs: 600 });
  const triad = triads.wasm;
  console.log(`\n${c.name}: n = ${n}, block size ${g.bsr.bs}, ${stored} stored entries; triad ${triad.toFixed(2)} GB/s (WebAssembly; the ratios below), JavaScript triad ${triads.js.toFixed(2)} GB/s (multiply a ratio by ${fmt(triad / triads.js)} for it); level kernels timed here: TypeScript`);
  const recipe = parseRecipe({ krylov: 'fgmres', preconditioner: 'p-multigrid', rtol: 1e-8 }, 'bench');
  const reps = quick ? 3 : 5;
  let M = createPreconditioner(sys, recipe) as PMultigridPreconditioner;
  const setup = median(() => { M = createPreconditioner(sys, recipe) as PMultigridPreconditioner; M.setup(); }, reps);
  const stats = M.stats() as { levels: Array<{ level: number; degree: number; rows: number; nonzeroBlocks: number; bytes: number; setupSeconds: number }> };
  console.log(`  setup ${fmt(setup)} s (median of ${reps}); preconditioner ${mib(totalBytes(M.memory()))}`);
  console.log('  level degree      rows   blocks      bytes  setup s   residual s  res/triad   smooth s  smooth/triad');
  const view = M.levelView();
  for (const lev of stats.levels) {
    const v = view[lev.level];
    const a = v.a;
    const ln = a.nBlockRows * a.bs;
    const x = new Float64Array(ln).fill(1), rhs = new Float64Array(ln).fill(0.5), res = new Float64Array(ln), cor = new Float64Array(ln);
    const tRes = median(() => bsrMultiplyAddKernel(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, -1, rhs, res), reps);
    const matBytes = a.values.byteLength + a.colInd.byteLength + a.rowPtr.byteLength + 3 * ln * 8;
    let smooth = '        –', smoothRatio = '            –';
    if (v.smoother) {
      const S = v.smoother;
      const tS = median(() => { bsrMultiplyAddKernel(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, -1, rhs, res); S.apply(res, cor); }, reps);
      const sBytes = matBytes + totalBytes(S.memory()) + matBytes; // residual product, then the smoother reads A again and its own factors
      smooth = fmt(tS).padStart(9);
      smoothRatio = fmt(sBytes / tS / 1e9 / triad).padStart(13);
    }
    console.log(`  ${String(lev.level).padStart(5)} ${String(lev.degree).padStart(6)} ${String(lev.rows).padStart(9)} ${String(lev.nonzeroBlocks).padStart(8)} ${mib(lev.bytes).padStart(10)} ${fmt(lev.setupSeconds).padStart(8)} ${fmt(tRes).padStart(12)} ${fmt(matBytes / tRes / 1e9 / triad).padStart(10)} ${smooth} ${smoothRatio}`);
  }
  const r = new Float64Array(n).fill(1), z = new Float64Array(n);
  const tApply = median(() => M.apply(r, z), reps);
  const st = M.stats() as { coarseIterationsTotal: number; coarseSolves: number };
  console.log(`  one application: ${fmt(tApply)} s (coarse solve: ${fmt(st.coarseIterationsTotal / Math.max(1, st.coarseSolves))} GMRES iterations on average)`);
  const { result } = solveSystem(sys, b, recipe);
  const perIt = result.timing.solveSeconds / Math.max(1, result.iterations);
  console.log(`  FGMRES + p-multigrid: ${result.iterations} iterations (${result.cause}), ${fmt(perIt)} s per iteration, setup ${fmt(result.timing.setupSeconds)} s, preconditioner ${mib(result.memory.preconditionerBytes)}`);
}
