/**
 * Preconditioner benchmark (issue 4): flop rates of the dense block kernels and of block-ILU(0) /
 * block-Jacobi setup, and time per preconditioner application with its effective bandwidth.
 *
 *   npx tsx bench/precond.bench.ts [--quick]
 *
 * Matrices: an invented DG-like block pattern, built in memory: a periodic nx×ny grid of squares
 * split into two triangles, several time layers numbered layer by layer, each block row coupled
 * to itself, its 3 face neighbours and the same element one layer earlier (upwind in time) —
 * 5 blocks per block row after the first layer. Blocks are random and non-symmetric with a
 * dominant diagonal. Target (issue 4): ≥ 1 GFLOP/s in the dense block kernels for bs ≥ 20.
 * Flops count multiply and add separately (LU 2/3·bs³, LU + inverse 2·bs³, C −= A·B 2·bs³).
 * Figures only; no assertions. Times are medians of repeated runs; see timeIt for wall vs CPU time.
 */
import type { Bsr } from '../src/sparse/types.js';
import type { Preconditioner } from '../src/precond/types.js';
import { bsrToCsr } from '../src/sparse/bsr.js';
import { createPreconditioner } from '../src/precond/registry.js';
import { blockOrdering } from '../src/sparse/orderings.js';
import { DEFAULT_RECIPE, type Recipe } from '../src/solvers/recipe.js';
import {
  blockGemmSub, blockGemmSubNaive, blockMatVecSub, blockMatVecSubNaive, denseFlops, luFactor, luFactorUnblocked,
  luInverse,
} from '../src/precond/dense.js';
import { measureStreamBandwidths, settle } from './stream.js';
import { mulberry32 } from '../src/util/random.js';

const quick = process.argv.includes('--quick');

const rng = mulberry32;

/**
 * Median seconds per call of fn over `reps` batches each lasting at least minMs: wall clock and
 * CPU time of this process (process.cpuUsage). Flop rates use CPU seconds, so other load on a
 * shared machine does not count against the kernel; bandwidth ratios use wall seconds, like the
 * triad they are compared with.
 */
function timeIt(fn: () => void, minMs = 150, reps = 5): { wall: number; cpu: number } {
  for (let w = 0; w < 3; w++) fn(); // warm-up (and JIT)
  const wall: number[] = [], cpu: number[] = [];
  for (let r = 0; r < reps; r++) {
    let calls = 0;
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    let t1 = t0;
    do { fn(); calls++; t1 = performance.now(); } while (t1 - t0 < minMs);
    const c = process.cpuUsage(c0);
    wall.push((t1 - t0) / 1e3 / calls);
    cpu.push((c.user + c.system) / 1e6 / calls);
  }
  const med = (v: number[]): number => v.sort((a, b) => a - b)[v.length >> 1];
  return { wall: med(wall), cpu: med(cpu) };
}

/** The invented DG-like pattern described above, with random non-symmetric blocks. */
function dgLike(nx: number, ny: number, nLayers: number, bs: number, seed: number): Bsr {
  const r = rng(seed);
  const perLayer = 2 * nx * ny;
  const n = perLayer * nLayers;
  const id = (i: number, j: number, up: number): number => 2 * (((j + ny) % ny) * nx + ((i + nx) % nx)) + up;
  const rows: number[][] = new Array(n);
  for (let t = 0; t < nLayers; t++) {
    for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) for (let up = 0; up < 2; up++) {
      const e = id(i, j, up);
      const cols = [e, id(i, j, 1 - up)];
      if (up === 0) cols.push(id(i, j - 1, 1), id(i - 1, j, 1));
      else cols.push(id(i, j + 1, 0), id(i + 1, j, 0));
      const base = t * perLayer;
      const c = [...new Set(cols)].map((v) => base + v);
      if (t > 0) c.push(base - perLayer + e);
      rows[base + e] = c.sort((a, b) => a - b);
    }
  }
  const rowPtr = new Int32Array(n + 1);
  for (let I = 0; I < n; I++) rowPtr[I + 1] = rowPtr[I] + rows[I].length;
  const colInd = new Int32Array(rowPtr[n]);
  const bb = bs * bs;
  const values = new Float64Array(rowPtr[n] * bb);
  for (let I = 0; I < n; I++) {
    rows[I].forEach((J, q) => {
      const k = rowPtr[I] + q;
      colInd[k] = J;
      for (let p = 0; p < bb; p++) values[k * bb + p] = (2 * r() - 1) / bs;
      if (J === I) for (let d = 0; d < bs; d++) values[k * bb + d * bs + d] += 5;
    });
  }
  return { nBlockRows: n, nBlockCols: n, bs, rowPtr, colInd, values };
}

const fmt = (v: number, d = 2): string => (Number.isFinite(v) ? v.toFixed(d) : 'n/a');
const recipe = (over: Partial<Recipe>): Recipe => ({ ...DEFAULT_RECIPE, ...over });
const totalBytes = (m: Record<string, number>): number => Object.values(m).reduce((s, v) => s + v, 0);

async function main(): Promise<void> {
  const sizes = [10, 20, 35, 40];
  console.log('Preconditioner benchmark (figures only). Flops: multiply and add counted separately.\n');
  process.stderr.write('measuring streaming bandwidth …\n');
  const triads = await measureStreamBandwidths({ timeMs: quick ? 300 : 800, length: quick ? 1 << 22 : 1 << 24 });
  const triad = triads.wasm, triadJs = triads.js;
  console.log(`stream triad (bench/stream.ts): WebAssembly ${fmt(triad)} GB/s (the yardstick), JavaScript ${fmt(triadJs)} GB/s`);
  console.log('The preconditioners here run their TypeScript kernels (no kernel memory active): "of triad" is against the WebAssembly triad, "JS" against the JavaScript one.\n');

  // ---- dense block kernels --------------------------------------------------------------
  console.log('Dense block kernels (GFLOP/s per CPU second; a batch of 32 blocks cycled so operands stay in cache; target ≥ 1 for bs ≥ 20):');
  console.log('   bs   LU blocked   LU unblocked   LU+inverse   C−=A·B fast   C−=A·B naive   y−=A·x fast   y−=A·x naive');
  for (const bs of sizes) {
    const bb = bs * bs, K = 32;
    const r = rng(bs);
    const src = Float64Array.from({ length: K * bb }, () => 2 * r() - 1);
    for (let k = 0; k < K; k++) for (let d = 0; d < bs; d++) src[k * bb + d * bs + d] += bs;
    const work = new Float64Array(K * bb), inv = new Float64Array(bb), piv = new Int32Array(K * bs);
    const C = new Float64Array(K * bb), x = new Float64Array(bs).fill(1), y = new Float64Array(bs);
    // LU on a fresh copy each time: the copy (bs² moves) is included and is small beside bs³
    const cpuPer = (fn: () => void): number => timeIt(fn).cpu / K;
    const tLu = cpuPer(() => { work.set(src); for (let k = 0; k < K; k++) luFactor(work, k * bb, bs, piv, k * bs, 0); });
    const tLuU = cpuPer(() => { work.set(src); for (let k = 0; k < K; k++) luFactorUnblocked(work, k * bb, bs, piv, k * bs, 0); });
    const tInv = cpuPer(() => {
      work.set(src);
      for (let k = 0; k < K; k++) { luFactor(work, k * bb, bs, piv, k * bs, 0); luInverse(work, k * bb, piv, k * bs, bs, inv, 0); }
    });
    const tGemm = cpuPer(() => { for (let k = 0; k < K; k++) blockGemmSub(C, k * bb, src, k * bb, src, ((k + 1) % K) * bb, bs); });
    const tGemmN = cpuPer(() => { for (let k = 0; k < K; k++) blockGemmSubNaive(C, k * bb, src, k * bb, src, ((k + 1) % K) * bb, bs); });
    const tMv = cpuPer(() => { for (let k = 0; k < K; k++) blockMatVecSub(src, k * bb, bs, x, 0, y, 0); });
    const tMvN = cpuPer(() => { for (let k = 0; k < K; k++) blockMatVecSubNaive(src, k * bb, bs, x, 0, y, 0); });
    const g = (f: number, t: number): string => fmt(f / t / 1e9).padStart(10);
    console.log(`  ${String(bs).padStart(3)}  ${g(denseFlops.lu(bs), tLu)}  ${g(denseFlops.lu(bs), tLuU)}    ${g(denseFlops.inverse(bs), tInv)}   ${g(denseFlops.gemm(bs), tGemm)}     ${g(denseFlops.gemm(bs), tGemmN)}    ${g(denseFlops.matVec(bs), tMv)}    ${g(denseFlops.matVec(bs), tMvN)}`);
  }

  // ---- setup flop rates and apply times on DG-like matrices --------------------------------
  const targetValues = quick ? 1e6 : 4e6;
  console.log(`\nSetup on the invented DG-like pattern (~${targetValues / 1e6} million stored values per matrix; ` +
    'GFLOP/s = counted flops / median CPU seconds of setup; ms = median wall time):');
  console.log('   bs  block rows   block-ILU(0) setup        block-Jacobi setup (lu)   block-Jacobi setup (inverse)');
  const applyRows: string[] = [];
  for (const bs of sizes) {
    const layers = 4;
    const side = Math.max(2, Math.round(Math.sqrt(targetValues / (4.75 * bs * bs * layers * 2))));
    const a = dgLike(side, side, layers, bs, bs + 100);
    const offsets = Int32Array.from({ length: layers + 1 }, (_, t) => t * 2 * side * side);
    const system = { bsr: a, get csr() { return bsrToCsr(a); }, slabOffsets: offsets };
    const make = (over: Partial<Recipe>): Preconditioner => createPreconditioner(system, recipe(over));
    const setupRate = (over: Partial<Recipe>): { rate: number; secs: number; M: Preconditioner } => {
      let M = make(over);
      const t = timeIt(() => { M = make(over); const out = M.setup(); if (!out.ok) throw new Error(out.message); }, 50, 3);
      const flops = Number(M.stats?.().setupFlops ?? NaN);
      return { rate: flops / t.cpu / 1e9, secs: t.wall, M };
    };
    const ilu = setupRate({ preconditioner: 'block-ilu0' });
    const bjLu = setupRate({ preconditioner: 'block-jacobi', blockInverse: 'lu' });
    const bjInv = setupRate({ preconditioner: 'block-jacobi', blockInverse: 'inverse' });
    console.log(`  ${String(bs).padStart(3)}  ${String(a.nBlockRows).padStart(10)}   ${fmt(ilu.rate).padStart(6)} GFLOP/s (${fmt(ilu.secs * 1e3, 1)} ms)`
      + `   ${fmt(bjLu.rate).padStart(6)} GFLOP/s (${fmt(bjLu.secs * 1e3, 1)} ms)   ${fmt(bjInv.rate).padStart(6)} GFLOP/s (${fmt(bjInv.secs * 1e3, 1)} ms)`);

    if (bs !== 20 && !(quick && bs === 10)) continue;
    await settle();
    // apply: bytes each application must move = its factor/matrix arrays read once + r read + z written
    const n = a.nBlockRows * bs;
    const r = Float64Array.from({ length: n }, (_, i) => Math.sin(i));
    const z = new Float64Array(n);
    // a sweep from z = 0 reads only the blocks on its visited side: the first (forward) sweep the
    // strictly lower blocks, a later (backward) sweep every off-diagonal block; colInd/rowPtr in full
    const bb = bs * bs;
    let lowerBlocks = 0;
    for (let I = 0; I < a.nBlockRows; I++) for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) if (a.colInd[k] < I) lowerBlocks++;
    const indexBytes = a.colInd.byteLength + a.rowPtr.byteLength;
    const lowerBytes = lowerBlocks * bb * 8 + indexBytes;
    const offDiagBytes = (a.colInd.length - a.nBlockRows) * bb * 8 + indexBytes;
    const cases: Array<[string, Preconditioner, number]> = [
      ['block-jacobi (lu)', bjLu.M, totalBytes(bjLu.M.memory()) + 16 * n],
      ['block-jacobi (inverse)', bjInv.M, totalBytes(bjInv.M.memory()) + 16 * n],
      ['block-ilu0 (natural)', ilu.M, totalBytes(ilu.M.memory()) + 16 * n],
    ];
    const gs = make({ preconditioner: 'block-gs', sweep: 'forward' });
    if (gs.setup().ok) cases.push(['block-gs forward, 1 sweep', gs, totalBytes(gs.memory()) + lowerBytes + 16 * n]);
    const gsSym = make({ preconditioner: 'block-gs', sweep: 'symmetric' });
    if (gsSym.setup().ok) cases.push(['block-gs symmetric, 1 sweep', gsSym, 2 * totalBytes(gsSym.memory()) + lowerBytes + offDiagBytes + 32 * n]);
    const iluMdf = make({ preconditioner: 'block-ilu0', ordering: 'mdf' });
    if (iluMdf.setup().ok) cases.push(['block-ilu0 (mdf ordering)', iluMdf, totalBytes(iluMdf.memory()) + 32 * n]);
    for (const [label, M, bytes] of cases) {
      const t = timeIt(() => M.apply(r, z), 100, 5).wall;
      const gbs = bytes / t / 1e9;
      applyRows.push(`  bs ${String(bs).padStart(2)}  ${label.padEnd(28)} ${fmt(t * 1e3, 3).padStart(8)} ms   ${fmt(bytes / 1e6, 1).padStart(7)} MB   ${fmt(gbs).padStart(6)} GB/s   ${fmt(gbs / triad).padStart(5)} of triad  ${fmt(gbs / triadJs).padStart(5)} JS`);
    }
    // why block-ilu0 keeps its factors in sweep order (src/precond/block-ilu0.ts): a forward block
    // substitution over the strictly lower blocks where they sit on the pattern (the diagonal and
    // upper blocks skipped between rows) against the same blocks copied to one contiguous array
    {
      const lowerVals = new Float64Array(lowerBlocks * bb);
      const lowerCol = new Int32Array(lowerBlocks);
      const lowerPtr = new Int32Array(a.nBlockRows + 1);
      for (let I = 0, q = 0; I < a.nBlockRows; I++) {
        for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
          if (a.colInd[k] >= I) continue;
          lowerVals.set(a.values.subarray(k * bb, k * bb + bb), q * bb);
          lowerCol[q++] = a.colInd[k];
        }
        lowerPtr[I + 1] = q;
      }
      const y = new Float64Array(n);
      const inPlace = timeIt(() => {
        y.set(r);
        for (let I = 0; I < a.nBlockRows; I++) {
          for (let k = a.rowPtr[I]; k < a.rowPtr[I + 1]; k++) {
            if (a.colInd[k] < I) blockMatVecSub(a.values, k * bb, bs, y, a.colInd[k] * bs, y, I * bs);
          }
        }
      }, 100, 5).wall;
      const packed = timeIt(() => {
        y.set(r);
        for (let I = 0; I < a.nBlockRows; I++) {
          for (let q = lowerPtr[I]; q < lowerPtr[I + 1]; q++) blockMatVecSub(lowerVals, q * bb, bs, y, lowerCol[q] * bs, y, I * bs);
        }
      }, 100, 5).wall;
      const bytes = lowerBlocks * bb * 8 + 16 * n;
      for (const [label, t] of [['L sweep, blocks on the pattern', inPlace], ['L sweep, blocks contiguous', packed]] as const) {
        applyRows.push(`  bs ${String(bs).padStart(2)}  ${label.padEnd(28)} ${fmt(t * 1e3, 3).padStart(8)} ms   ${fmt(bytes / 1e6, 1).padStart(7)} MB   ${fmt(bytes / t / 1e9).padStart(6)} GB/s   ${fmt(bytes / t / 1e9 / triad).padStart(5)} of triad  ${fmt(bytes / t / 1e9 / triadJs).padStart(5)} JS`);
      }
    }
    // slab: one FGMRES-ready application (inner GMRES + block ILU(0) per slab, set up per slab)
    const slab = make({ preconditioner: 'slab' });
    if (slab.setup().ok) {
      const t = timeIt(() => slab.apply(r, z), 100, 3).wall;
      const st = slab.stats?.() ?? {};
      applyRows.push(`  bs ${String(bs).padStart(2)}  ${'slab (GMRES+block-ILU(0) inner)'.padEnd(28)} ${fmt(t * 1e3, 3).padStart(8)} ms   inner iterations per slab ${JSON.stringify(st.innerIterationsPerSlab)}`
        + `   peak one-slab preconditioner ${fmt(Number(slab.memory()['inner preconditioner (peak, one slab at a time)']) / 1e6, 1)} MB`);
    }
  }
  console.log('\nTime per application (bytes = the arrays an application must read or write once; ratio = effective GB/s over the triad):');
  for (const row of applyRows) console.log(row);

  // ---- ordering cost at 10^5 block rows (bs = 1: the orderings only look at the block graph and weights)
  const big = dgLike(125, 100, 4, 1, 7); // 2·125·100·4 = 100 000 block rows
  console.log(`\nOrderings on ${big.nBlockRows} block rows, ${big.rowPtr[big.nBlockRows]} blocks (median wall ms, 4 time slabs):`);
  const slabs = Int32Array.from({ length: 5 }, (_, t) => t * 25000);
  const parts: string[] = [];
  for (const name of ['rcm', 'downstream', 'mdf'] as const) {
    const t = timeIt(() => blockOrdering(big, name, { slabOffsets: slabs }), 50, 3).wall;
    parts.push(`${name} ${fmt(t * 1e3, 0)} ms`);
  }
  console.log(`  ${parts.join('   ')}`);
}

await main();
