/**
 * BSR SpMV effective bandwidth (target: ≥ 70% of a streaming loop, same run), for the WebAssembly
 * kernels (src/kernels/sparse.ts, the default in solves) and the TypeScript twins (the fallback).
 *
 *   npx tsx bench/spmv.bench.ts [--quick]
 *
 * Main figure: bs = 40 on a block pattern shaped like a 2D+t DG discretisation (invented test
 * pattern): a periodic 12×12 grid of squares split into two triangles, 9 time layers, each block
 * row coupled to itself, its 3 face neighbours and the same element one layer earlier (upwind in
 * time) — 2592 block rows, 12672 blocks, 20.3 million stored values, built in memory.
 * Bytes moved per product: values + colInd + rowPtr + x + y (each read or written once).
 * The streaming baselines are the triads of bench/stream.ts, timed in the same tinybench runs: the
 * WebAssembly triad (the yardstick: it runs at about a compiled loop's speed) and the JavaScript
 * triad (a second column: a plain Float64Array loop reaches only about half of it). 7 short rounds
 * (3 with --quick) of both triads + the kernels back to back; medians over rounds are printed.
 * The WebAssembly kernel runs on copies of the arrays in one kernel memory (KernelArena), as a solve
 * does; the TypeScript kernels on the JavaScript heap.
 * Second table (skipped with --quick): WebAssembly, the TypeScript fast path and the plain triple
 * loop for smaller block sizes on the same kind of pattern (~8 million stored values each), to show
 * which fast paths pay off. Figures only; no assertions.
 */
import { Bench } from 'tinybench';
import { bsrSpmvKernel, bsrSpmvReferenceKernel, bsrBytes } from '../src/sparse/bsr.js';
import type { Bsr } from '../src/sparse/types.js';
import { addStreamTask, addWasmStreamTask, gbPerSecond, streamArrays, wasmStreamArrays } from './stream.js';
import { KernelArena, kernelCopyF64, kernelCopyI32, kernelF64, setActiveArena } from '../src/kernels-host/arena.js';
import { loadavg } from 'node:os';
import { mulberry32 } from '../src/util/random.js';

const rng = mulberry32;

/**
 * Block pattern of upwind-in-time DG on a periodic triangulated nx×ny grid with nLayers time
 * layers, numbered layer by layer. Lower triangle L(i,j) and upper U(i,j) share the diagonal of
 * square (i,j); L touches U(i,j−1) below and U(i−1,j) on the left, U touches L(i,j+1) and L(i+1,j).
 */
export function dgPattern(nx: number, ny: number, nLayers: number, bs: number, seed = 1): Bsr {
  const perLayer = 2 * nx * ny;
  const n = perLayer * nLayers;
  const id = (i: number, j: number, upper: number): number => 2 * (((j + ny) % ny) * nx + ((i + nx) % nx)) + upper;
  const rowPtr = new Int32Array(n + 1);
  const cols: number[] = [];
  const row: number[] = [];
  for (let t = 0; t < nLayers; t++) {
    for (let j = 0; j < ny; j++) {
      for (let i = 0; i < nx; i++) {
        for (let upper = 0; upper < 2; upper++) {
          const e = id(i, j, upper);
          row.length = 0;
          row.push(e, id(i, j, 1 - upper));
          if (upper === 0) row.push(id(i, j - 1, 1), id(i - 1, j, 1));
          else row.push(id(i, j + 1, 0), id(i + 1, j, 0));
          const base = t * perLayer;
          const blockCols = row.map((c) => base + c);
          if (t > 0) blockCols.push(base - perLayer + e);
          blockCols.sort((a, b) => a - b);
          const I = base + e;
          for (const c of blockCols) cols.push(c);
          rowPtr[I + 1] = blockCols.length; // counts first (rows come out in element order, not I order)
        }
      }
    }
  }
  // rows were appended in (t, j, i, upper) order, which is I order since id() is row-major in (j, i)
  for (let I = 0; I < n; I++) rowPtr[I + 1] += rowPtr[I];
  const colInd = Int32Array.from(cols);
  const values = new Float64Array(colInd.length * bs * bs);
  const r = rng(seed);
  for (let k = 0; k < values.length; k++) values[k] = r() * 2 - 1;
  return { nBlockRows: n, nBlockCols: n, bs, rowPtr, colInd, values };
}

/** Bytes one product moves: the three BSR arrays plus x read and y written once. */
function spmvBytes(a: Bsr): number {
  return bsrBytes(a) + 2 * a.nBlockRows * a.bs * 8;
}

function fmt(x: number, d = 2): string {
  return Number.isFinite(x) ? x.toFixed(d) : 'n/a';
}

/** The matrix and two vectors copied into a fresh kernel memory made active (the WebAssembly path). */
function inKernelMemory(a: Bsr, x: Float64Array): { a: Bsr; x: Float64Array; y: Float64Array } {
  const n = a.nBlockRows * a.bs;
  const arena = new KernelArena(bsrBytes(a) + 2 * n * 8 + (1 << 20));
  setActiveArena(arena);
  const w: Bsr = { ...a, rowPtr: kernelCopyI32(a.rowPtr), colInd: kernelCopyI32(a.colInd), values: kernelCopyF64(a.values) };
  return { a: w, x: kernelCopyF64(x), y: kernelF64(n) };
}

function median(v: number[]): number {
  const s = v.filter((x) => Number.isFinite(x)).sort((a, b) => a - b);
  if (s.length === 0) return Number.NaN;
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
}

async function main(): Promise<void> {
  const quick = process.argv.includes('--quick');
  const a = dgPattern(12, 12, 9, 40);
  const n = a.nBlockRows * a.bs;
  const x = new Float64Array(n).map((_, i) => Math.sin(i));
  const y = new Float64Array(n);
  const stream = streamArrays();
  const wstream = wasmStreamArrays();
  const w = inKernelMemory(a, x);
  // Several short rounds, each timing both triads and the kernels back to back, so a busy machine
  // slows both sides of a ratio alike; figures are medians over rounds.
  const rounds = quick ? 3 : 7;
  const triadW: number[] = [], triadJ: number[] = [], wasm: number[] = [], fast: number[] = [], plain: number[] = [];
  const ratioW: number[] = [], ratioJ: number[] = [];
  const load0 = loadavg()[0];
  for (let round = 0; round < rounds; round++) {
    const bench = new Bench({ name: 'spmv', time: 400, warmupTime: 100 });
    addWasmStreamTask(bench, wstream);
    addStreamTask(bench, stream);
    bench.add('bsr spmv bs 40, WebAssembly', () => bsrSpmvKernel(w.a.nBlockRows, w.a.bs, w.a.rowPtr, w.a.colInd, w.a.values, w.x, w.y));
    bench.add('bsr spmv bs 40, TypeScript', () => bsrSpmvKernel(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, y));
    bench.add('bsr spmv bs 40, plain triple loop', () => bsrSpmvReferenceKernel(a.nBlockRows, a.bs, a.rowPtr, a.colInd, a.values, x, y));
    process.stderr.write(`running bs 40, round ${round + 1} of ${rounds} …\n`);
    await bench.run();
    triadW.push(gbPerSecond(bench.tasks[0], wstream.bytes));
    triadJ.push(gbPerSecond(bench.tasks[1], stream.bytes));
    wasm.push(gbPerSecond(bench.tasks[2], spmvBytes(a)));
    fast.push(gbPerSecond(bench.tasks[3], spmvBytes(a)));
    plain.push(gbPerSecond(bench.tasks[4], spmvBytes(a)));
    ratioW.push(wasm[round] / triadW[round]);
    ratioJ.push(wasm[round] / triadJ[round]);
  }
  const nBlocks = a.rowPtr[a.nBlockRows];
  const tw = median(triadW), tj = median(triadJ);
  const row = (label: string, gb: number): string => `  ${label.padEnd(40)} ${fmt(gb).padStart(6)} GB/s   ${fmt(gb / tw).padStart(5)}   ${fmt(gb / tj).padStart(5)}`;
  console.log(`BSR SpMV, bs 40: ${a.nBlockRows} block rows, ${nBlocks} blocks (${fmt(nBlocks / a.nBlockRows)} per row), `
    + `${a.values.length} stored values, ${fmt(spmvBytes(a) / 1e6, 1)} MB moved per product; median of ${rounds} rounds; load ${fmt(load0, 1)} → ${fmt(loadavg()[0], 1)}`);
  console.log(`  ${''.padEnd(40)} ${''.padStart(11)}   ratio to triad`);
  console.log(`  ${''.padEnd(40)} ${''.padStart(11)}   ${'wasm'.padStart(5)}   ${'JS'.padStart(5)}`);
  console.log(row('stream triad, WebAssembly (yardstick)', tw));
  console.log(row('stream triad, JavaScript', tj));
  console.log(`${row('bsrSpmv, WebAssembly (solves)', median(wasm))}   (target ≥ 0.70 of the WebAssembly triad)`);
  console.log(row('bsrSpmv, TypeScript (tiled fallback)', median(fast)));
  console.log(row('plain triple loop (reference kernel)', median(plain)));
  console.log(`  per-round ratios WebAssembly SpMV / WebAssembly triad: ${ratioW.map((r) => fmt(r)).join(' ')}; / JavaScript triad: ${ratioJ.map((r) => fmt(r)).join(' ')}`);
  setActiveArena(null);
  if (quick) return;

  const rows: string[] = [];
  for (const bs of [1, 2, 3, 4, 6, 10, 20]) {
    // ~8 million stored values: about 4.9 blocks per row on a square periodic grid with 9 layers
    const side = Math.max(2, Math.round(Math.sqrt(8e6 / (4.9 * bs * bs * 9 * 2))));
    const m = dgPattern(side, side, 9, bs, bs);
    const xm = new Float64Array(m.nBlockRows * bs).map((_, i) => Math.cos(i));
    const ym = new Float64Array(m.nBlockRows * bs);
    const wm = inKernelMemory(m, xm);
    const b2 = new Bench({ name: `spmv bs ${bs}`, time: 700, warmupTime: 150 });
    addWasmStreamTask(b2, wstream);
    addStreamTask(b2, stream);
    b2.add('wasm', () => bsrSpmvKernel(wm.a.nBlockRows, bs, wm.a.rowPtr, wm.a.colInd, wm.a.values, wm.x, wm.y));
    b2.add('fast', () => bsrSpmvKernel(m.nBlockRows, bs, m.rowPtr, m.colInd, m.values, xm, ym));
    b2.add('plain', () => bsrSpmvReferenceKernel(m.nBlockRows, bs, m.rowPtr, m.colInd, m.values, xm, ym));
    process.stderr.write(`running bs ${bs} …\n`);
    await b2.run();
    setActiveArena(null);
    const gtw = gbPerSecond(b2.tasks[0], wstream.bytes), gtj = gbPerSecond(b2.tasks[1], stream.bytes);
    const gw = gbPerSecond(b2.tasks[2], spmvBytes(m));
    const gf = gbPerSecond(b2.tasks[3], spmvBytes(m));
    const gp = gbPerSecond(b2.tasks[4], spmvBytes(m));
    rows.push(`  ${String(bs).padStart(3)}  ${String(m.values.length).padStart(9)}  ${fmt(gw).padStart(6)}  ${fmt(gf).padStart(6)}  ${fmt(gp).padStart(6)}  ${fmt(gf / gp).padStart(7)}  ${fmt(gw / gtw).padStart(9)}  ${fmt(gw / gtj).padStart(7)}`);
  }
  console.log('\nWebAssembly, TypeScript fast path and plain triple loop (GB/s, same run; triads timed beside each bs):');
  console.log('   bs     values    wasm      TS   plain  TS/plain  wasm/wasm  wasm/JS');
  console.log('                                                     triad      triad');
  for (const r of rows) console.log(r);
}

await main();
