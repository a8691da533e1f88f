/**
 * Our kernels against a compiled general-purpose sparse library, on the same Matrix Market files in
 * the same run: `npx tsx bench/compiled-library.bench.ts [--quick] [--rounds N]`.
 *
 * The library side is bench/compiled_library.py on Debian's python3-petsc4py (the options it uses
 * are listed at the top of that script), kept running per matrix and called between our own
 * repeats, so each of our timings has one of theirs next to it (ratios of two runs minutes apart
 * swung 2× with last-level cache residency on the shared bench machine); without petsc4py the
 * bench prints our figures and a note.
 * Benchmarks only: petsc4py is never used by tests or CI.
 *
 * Matrices (written to bench/data/, reused when present; invented test problems):
 *  - acoustics: `slabbench generate --physics acoustics --dim 2 --order 2 --cells 12 --slabs 2
 *    --periodic all` (2D+t, p = 2, block size 30, about 5.2 million nonzeros);
 *  - block16: a seeded random block 5-point stencil on a 70×70 grid, block size 16, non-symmetric
 *    blocks, diagonal blocks shifted by 2·bs (about 6.3 million nonzeros);
 *  - SpMV only: the same stencil with block sizes 4, 8 and 40 (about 6 million stored values each).
 *
 * Printed: SpMV GB/s (ours on WebAssembly and on TypeScript; theirs; bytes = the arrays one product
 * must move once, the same count for both) and their ratio; for GMRES(30) (right preconditioning,
 * modified Gram–Schmidt, a fixed number of iterations) per preconditioner our setup time and time
 * per iteration as ratios to theirs — the first solve (includes our JIT warm-up and the tier-up of
 * the WebAssembly code) and the minimum over the later solves reported separately; setup is the
 * minimum over the later solves (each solve sets the preconditioner up afresh on both sides). The two streaming
 * triads (WebAssembly and JavaScript) are printed with each round. Print the load average: on a
 * shared machine figures move by 2× within minutes.
 */
import { execFileSync, spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { createInterface } from 'node:readline';
import { existsSync, mkdirSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadSystem } from '../src/sparse/load.js';
import { bsrToCsr, bsrSpmv } from '../src/sparse/bsr.js';
import { writeMatrixMarket } from '../src/sparse/matrix-market-write.js';
import type { Bsr } from '../src/sparse/types.js';
import { solveSystem } from '../src/solvers/run-recipe.js';
import { planKernels } from '../src/solvers/kernel-plan.js';
import { DEFAULT_RECIPE, type Recipe } from '../src/solvers/recipe.js';
import type { SolveResult } from '../src/solvers/types.js';
import { kernelF64 } from '../src/kernels-host/arena.js';
import { blockStencil } from './block-stencil.js';
import { measureStreamBandwidths, settle } from './stream.js';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const DATA = join(ROOT, 'bench', 'data');
const quick = process.argv.includes('--quick');
const roundsArg = process.argv.indexOf('--rounds');
const rounds = roundsArg > 0 ? Number(process.argv[roundsArg + 1]) : 1;
const ITERATIONS = quick ? 30 : 60;
/** Solves per preconditioner and side: the first (cold: our JIT warm-up) and the minimum of the others. */
const REPEATS = 3;
const PRECONDITIONERS = ['none', 'block-jacobi', 'block-gs', 'block-ilu0'] as const;

const fmt = (x: number, d = 2): string => (Number.isFinite(x) ? x.toFixed(d) : '–');
const median = (xs: number[]): number => { const s = [...xs].sort((a, b) => a - b); return s[s.length >> 1]; };

async function ensureMatrices(): Promise<Array<{ name: string; file: string; bs: number; solve: boolean }>> {
  mkdirSync(DATA, { recursive: true });
  const out: Array<{ name: string; file: string; bs: number; solve: boolean }> = [];
  const cells = quick ? '6' : '12';
  const acoustics = join(DATA, `acoustics-2d-p2-c${cells}.mtx`);
  if (!existsSync(acoustics)) {
    process.stderr.write('generating the acoustics matrix (slabbench generate) …\n');
    execFileSync(process.execPath, [join(ROOT, 'dist', 'cli', 'bin.js'), 'generate', '--physics', 'acoustics', '--dim', '2',
      '--order', '2', '--cells', cells, '--slabs', '2', '--periodic', 'all', '--name', `acoustics-2d-p2-c${cells}`, '--out', DATA],
    { stdio: ['ignore', 'ignore', 'inherit'] });
  }
  out.push({ name: `acoustics 2D+t p=2 (${cells}×${cells}, 2 slabs)`, file: acoustics, bs: 30, solve: true });
  const target = quick ? 1e6 : 6e6;
  for (const bs of [16, 4, 8, 40]) {
    const grid = Math.max(4, Math.round(Math.sqrt(target / (5 * bs * bs))));
    const file = join(DATA, `stencil-bs${bs}-g${grid}.mtx`);
    if (!existsSync(file)) {
      process.stderr.write(`writing ${file} …\n`);
      await writeMatrixMarket(file, bsrToCsr(blockStencil(grid, bs, 1000 + bs, { dominant: true })), { comments: [`invented block 5-point stencil, bs ${bs}, grid ${grid}×${grid}`] });
    }
    out.push({ name: `block stencil bs ${bs} (${grid}×${grid})`, file, bs, solve: bs === 16 });
  }
  return out;
}

/**
 * The library kept running for one matrix (bench/compiled_library.py --serve): each request is one
 * JSON line and its answer one JSON line, so our repeats and theirs alternate on warm processes.
 */
class Library {
  private pending: Array<(line: string | null) => void> = [];
  private queued: string[] = [];
  private closed = false;
  private stderr = '';
  /** The ready line: library version and the BLAS thread count it runs with. */
  info: { library?: string; blasThreads?: string } = {};
  private constructor(private readonly child: ChildProcessWithoutNullStreams) {
    createInterface({ input: child.stdout }).on('line', (line) => {
      const r = this.pending.shift();
      if (r) r(line); else this.queued.push(line);
    });
    child.stderr.on('data', (d: Buffer) => { this.stderr += d.toString(); });
    child.on('close', () => { this.closed = true; for (const r of this.pending.splice(0)) r(null); });
  }

  /** Start it on a matrix file; a string says why it could not start. */
  static async start(file: string, bs: number): Promise<Library | string> {
    if (!existsSync('/usr/bin/python3')) return 'no /usr/bin/python3';
    const lib = new Library(spawn('/usr/bin/python3', [join(ROOT, 'bench', 'compiled_library.py'), '--serve', file, String(bs)]));
    const first = await lib.next();
    if (first === null) {
      const err = lib.stderr.trim().split('\n').pop() ?? '';
      return /No module named 'petsc4py'/.test(lib.stderr) ? 'python3-petsc4py is not installed' : `library run failed: ${err}`;
    }
    lib.info = JSON.parse(first) as Library['info'];
    return lib;
  }

  private next(): Promise<string | null> {
    const q = this.queued.shift();
    if (q !== undefined) return Promise.resolve(q);
    if (this.closed) return Promise.resolve(null);
    return new Promise((resolve) => this.pending.push(resolve));
  }

  async request<T>(cmd: object): Promise<T> {
    this.child.stdin.write(`${JSON.stringify(cmd)}\n`);
    const line = await this.next();
    if (line === null) throw new Error(`compiled library stopped: ${this.stderr.trim().split('\n').pop() ?? ''}`);
    return JSON.parse(line) as T;
  }

  quit(): void { this.child.stdin.end(`${JSON.stringify({ op: 'quit' })}\n`); }
}

interface LibrarySolve { setupSeconds: number; solveSeconds: number; iterations: number }

function spmvBytes(a: Bsr): number {
  const nBlocks = a.rowPtr[a.nBlockRows];
  return nBlocks * a.bs * a.bs * 8 + nBlocks * 4 + (a.nBlockRows + 1) * 4 + 2 * a.nBlockRows * a.bs * 8;
}

/**
 * Memory floors of one GMRES iteration at the read-stream rate (seconds): `storage` = the bytes of
 * the matrix and the preconditioner's stored arrays, each read once (about a lower bound for any
 * implementation when they exceed the last-level cache, as on the bench files; a compiled read ran
 * up to about 1.4× our read stream's rate in one check, README "Benchmarks"); `work` = the work
 * model's bytes per iteration (README "Work model": every vector pass too, some of which may hit
 * cache, so it bounds only an implementation that moves what the model counts).
 */
function floors(r: SolveResult, readGBs: number): { storage: number; work: number } {
  const it = Math.max(1, r.iterations);
  const bw = readGBs * 1e9;
  return { storage: (r.memory.matrixBytes + r.memory.preconditionerBytes) / bw, work: r.work.solve.bytes / it / bw };
}

let floorNoted = false;
function floorNote(): void {
  if (floorNoted) return;
  floorNoted = true;
  console.log('  (floors / theirs: the storage floor and the work-model floor of one iteration at the read-stream rate, over their time per' +
    ' iteration; a storage floor near or above 0.8 leaves an implementation reading these arrays once per iteration almost no room for the ≤ 0.8 target here)');
}

async function main(): Promise<void> {
  console.log(`compiled-library bench: ${cpus().length} cores, load average ${loadavg().map((x) => x.toFixed(1)).join(' ')} at start`);
  const matrices = await ensureMatrices();
  for (let round = 0; round < rounds; round++) {
    const triad = await measureStreamBandwidths({ timeMs: 600 });
    console.log(`\nround ${round + 1}: stream triad WebAssembly ${fmt(triad.wasm)} GB/s, JavaScript ${fmt(triad.js)} GB/s;` +
      ` read stream (WebAssembly) ${fmt(triad.read)} GB/s; load ${loadavg()[0].toFixed(1)}`);
    for (const m of matrices) {
      const sys = await loadSystem(m.file, { blockSize: m.bs });
      const a = sys.bsr;
      const nnz = a.rowPtr[a.nBlockRows] * a.bs * a.bs;
      console.log(`\n${m.name}: n = ${a.nBlockRows * a.bs}, bs ${a.bs}, ${(nnz / 1e6).toFixed(2)} M stored values`);
      const started = await Library.start(m.file, m.bs);
      const lib = typeof started === 'string' ? undefined : started;
      if (typeof started === 'string') console.log(`  compiled library skipped: ${started}`);
      else console.log(`  compiled library: ${started.info.library ?? '?'}, BLAS threads ${started.info.blasThreads ?? '?'} (ours: one thread)`);
      // SpMV: TypeScript on the JavaScript heap, then WebAssembly in kernel memory
      const n = a.nBlockRows * a.bs;
      const reps = quick ? 5 : 15;
      const time = (f: () => void): number => { f(); const ts: number[] = []; for (let i = 0; i < reps; i++) { const t = performance.now(); f(); ts.push((performance.now() - t) / 1e3); } return median(ts); };
      await settle(200);
      const xj = new Float64Array(n).fill(1), yj = new Float64Array(n);
      const tTs = time(() => bsrSpmv(a, xj, yj));
      const plan = planKernels(sys, { ...DEFAULT_RECIPE }, 'wasm');
      const xw = kernelF64(n).fill(1), yw = kernelF64(n);
      // ours and theirs alternated, three pairs; medians of each side and of the per-pair ratios
      const oursS: number[] = [], theirsS: number[] = [], pairRatios: number[] = [];
      for (let pair = 0; pair < 3; pair++) {
        oursS.push(time(() => bsrSpmv(sys.bsr, xw, yw)));
        theirsS.push(lib ? (await lib.request<{ spmvSeconds: number }>({ op: 'spmv', repeats: reps })).spmvSeconds : NaN);
        pairRatios.push(theirsS[pair] / oursS[pair]);
      }
      const tW = median(oursS);
      plan.finish();
      const bytes = spmvBytes(a);
      const theirs = bytes / median(theirsS) / 1e9;
      console.log(`  SpMV GB/s: ours WebAssembly ${fmt(bytes / tW / 1e9)}, ours TypeScript ${fmt(bytes / tTs / 1e9)}, theirs ${fmt(theirs)};` +
        ` ours/theirs ${fmt(median(pairRatios))} (target ≥ 1.0; pairs ${pairRatios.map((r) => fmt(r)).join(' ')}); ours/WebAssembly triad ${fmt(bytes / tW / 1e9 / triad.wasm)},` +
        ` ours/read stream ${fmt(bytes / tW / 1e9 / triad.read)}, theirs/read stream ${fmt(theirs / triad.read)}`);
      if (!m.solve) { lib?.quit(); continue; }
      const b = new Float64Array(n);
      bsrSpmv(a, new Float64Array(n).fill(1), b);
      console.log(`  GMRES(30), ${ITERATIONS} iterations per solve; ratios ours/theirs (targets: per iteration ≤ 0.8, setup ≤ 1.5)`);
      console.log('  precond        setup s ours / theirs / ratio   s per iteration, first solve: ours / theirs / ratio   later solves (min): ours / theirs / ratio   floors / theirs   iterations');
      floorNote();
      for (const pc of PRECONDITIONERS) {
        const recipe: Recipe = {
          ...DEFAULT_RECIPE, name: pc, preconditioner: pc, restart: 30, rtol: 1e-300, maxIterations: ITERATIONS,
          sweep: 'symmetric', blockInverse: 'inverse',
        };
        await settle(100);
        const ours = [];
        const L: { setupSeconds: number[]; solveSeconds: number[]; iterations: number[] } | undefined = lib ? { setupSeconds: [], solveSeconds: [], iterations: [] } : undefined;
        // ours and theirs alternated, one fresh solver each per repeat
        for (let rep = 0; rep < REPEATS; rep++) {
          ours.push(solveSystem(sys, b, recipe, { kernels: 'wasm' }).result);
          if (lib && L) {
            const s = await lib.request<LibrarySolve>({ op: 'solve', name: pc, iterations: ITERATIONS });
            L.setupSeconds.push(s.setupSeconds); L.solveSeconds.push(s.solveSeconds); L.iterations.push(s.iterations);
          }
        }
        const perIt = (s: number, it: number): number => s / Math.max(1, it);
        const o1 = perIt(ours[0].timing.solveSeconds, ours[0].iterations);
        const oW = Math.min(...ours.slice(1).map((r) => perIt(r.timing.solveSeconds, r.iterations)));
        const oS = Math.min(...ours.slice(1).map((r) => r.timing.setupSeconds));
        const t1 = L ? perIt(L.solveSeconds[0], L.iterations[0]) : NaN;
        const tW = L ? Math.min(...L.solveSeconds.slice(1).map((s, i) => perIt(s, L.iterations[i + 1]))) : NaN;
        const tS = L ? Math.min(...L.setupSeconds.slice(1)) : NaN;
        const fl = floors(ours[1], triad.read);
        console.log(`  ${pc.padEnd(13)} ${fmt(oS, 3)} / ${fmt(tS, 3)} / ${fmt(oS / tS)}`.padEnd(48) +
          `${fmt(o1, 4)} / ${fmt(t1, 4)} / ${fmt(o1 / t1)}`.padEnd(54) + `${fmt(oW, 4)} / ${fmt(tW, 4)} / ${fmt(oW / tW)}`.padEnd(44) +
          `${fmt(fl.storage / tW)} ${fmt(fl.work / tW)}`.padEnd(18) +
          `${ours.map((r) => r.iterations).join(',')} vs ${L ? L.iterations.join(',') : '–'}; kernels ${ours[1].kernels}; our cold setup ${fmt(ours[0].timing.setupSeconds, 3)} s`);
      }
      lib?.quit();
    }
  }
  console.log(`\nload average at the end: ${loadavg().map((x) => x.toFixed(1)).join(' ')}`);
}

await main();
