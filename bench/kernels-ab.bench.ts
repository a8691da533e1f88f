/**
 * Kernel A/B in one process: the WebAssembly kernels of this checkout ("new") against the ones of a
 * base revision ("old", default `main`; built from `git archive REV src/kernels` with the pinned
 * compiler and the options of asconfig.json), both instantiated on the same kernel memory, so both
 * read the same arrays. Calls alternate old and new (order flipped every pair) and the ratio
 * new/old is taken per pair, so load that comes and goes on a shared machine hits both sides.
 *
 *   npx tsx bench/kernels-ab.bench.ts [--base REV] [--rounds N] [--quick] [--only spmv|mgs|gmres] [--values V] [--applies-only]
 *
 * --values: stored values of each stencil matrix (default 6e6, far beyond cache; 2e5 keeps them in
 * cache, which shows the instruction cost alone).
 *
 * Rows:
 *  - spmv bs B: y = A x on seeded random block 5-point stencils with bs 4, 8, 16, 30, 40 (about
 *    --values stored values each — invented) and on the acoustics matrix (2D+t p = 2, bs 30,
 *    generated, 7 M stored values whatever --values says);
 *  - mgs j=…: one modified Gram–Schmidt orthogonalization against j + 1 basis vectors of the
 *    acoustics length, as gmres.ts does it (norm of A z, dot, j fused update+dot, fused update+norm,
 *    scale);
 *  - setup PC / apply PC / gmres(30) cycle PC: one preconditioner setup (its buffers released
 *    after each), one application, and one GMRES(30) cycle (30 iterations, rtol 0; the cycles not
 *    with --applies-only), on the acoustics matrix and on the bs 16 and bs 30 stencils with their
 *    diagonal blocks shifted by 2·bs, with the default recipe's preconditioner settings (block
 *    Gauss–Seidel: symmetric sweep), the whole solve in kernel memory; the kernels called by the
 *    TypeScript solver and preconditioners are swapped between the two modules (the arena's
 *    export object).
 * Prints median seconds of each side and the new/old ratio (median of pair ratios per round;
 * median and min–max over rounds), with the load average. Figures only; no assertions.
 */
import { execFileSync, execSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseGeneratorParams, generateSystem } from '../src/dg/generate.js';
import { bsrToCsr } from '../src/sparse/bsr.js';
import type { Bsr } from '../src/sparse/types.js';
import type { SystemMatrix } from '../src/precond/types.js';
import { KernelArena, setActiveArena } from '../src/kernels-host/arena.js';
import { WA, type KernelExports } from '../src/kernels-host/module.js';
import { createPreconditioner } from '../src/precond/registry.js';
import { parseRecipe } from '../src/solvers/recipe.js';
import { bsrOperator } from '../src/solvers/operator.js';
import { gmres } from '../src/solvers/gmres.js';
import { krylovOptionsFromRecipe } from '../src/solvers/options.js';
import { mulberry32 } from '../src/util/random.js';
import { blockStencil } from './block-stencil.js';
import { settle } from './stream.js';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const argv = process.argv.slice(2);
const opt = (name: string, dflt: string): string => { const i = argv.indexOf(name); return i >= 0 ? argv[i + 1] : dflt; };
const quick = argv.includes('--quick');
const base = opt('--base', 'main');
const rounds = Number(opt('--rounds', quick ? '3' : '7'));
const only = opt('--only', '');
const appliesOnly = argv.includes('--applies-only');

/** The base revision's kernel module, compiled into a temporary folder. */
function buildBase(rev: string): Uint8Array {
  const dir = mkdtempSync(join(tmpdir(), 'kernels-base-'));
  try {
    execSync(`git archive ${rev} src/kernels | tar -x -C ${dir}`, { cwd: ROOT });
    const cfg = JSON.parse(readFileSync(join(ROOT, 'asconfig.json'), 'utf8')).options;
    execFileSync(process.execPath, [join(ROOT, 'node_modules', 'assemblyscript', 'bin', 'asc.js'), join(dir, 'src', 'kernels', 'index.ts'),
      '-o', join(dir, 'k.wasm'), '--runtime', cfg.runtime, '--importMemory', '--enable', cfg.enable.join(','),
      '--optimizeLevel', String(cfg.optimizeLevel), '--shrinkLevel', String(cfg.shrinkLevel)], { stdio: 'inherit' });
    return readFileSync(join(dir, 'k.wasm'));
  } finally { rmSync(dir, { recursive: true, force: true }); }
}

const median = (xs: number[]): number => { const s = [...xs].sort((a, b) => a - b); return s[s.length >> 1]; };

const oldBytes = buildBase(base);
const oldModule = new WA.Module(oldBytes);

interface Row { label: string; run: (k: KernelExports) => void; reps: number }

/**
 * Calls alternate old/new in pairs (order flipped from pair to pair); a round's ratio is the median
 * of its `reps` pair ratios new/old, and the row prints the median and range over the rounds.
 */
function ab(row: Row, kOld: KernelExports, kNew: KernelExports): void {
  const once = (k: KernelExports): number => { const t = performance.now(); row.run(k); return (performance.now() - t) / 1e3; };
  for (let i = 0; i < 3; i++) { once(kOld); once(kNew); } // warm-up: tier-up of both modules
  const to: number[] = [], tn: number[] = [], ratio: number[] = [];
  for (let r = 0; r < rounds; r++) {
    const pr: number[] = [];
    for (let i = 0; i < row.reps; i++) {
      let a: number, b: number;
      if ((i + r) % 2 === 0) { a = once(kOld); b = once(kNew); } else { b = once(kNew); a = once(kOld); }
      to.push(a); tn.push(b); pr.push(b / a);
    }
    ratio.push(median(pr));
  }
  console.log(`${row.label.padEnd(26)} old ${median(to).toExponential(3)} s  new ${median(tn).toExponential(3)} s  ` +
    `new/old ${median(ratio).toFixed(3)} (rounds ${Math.min(...ratio).toFixed(3)}–${Math.max(...ratio).toFixed(3)})  load ${loadavg()[0].toFixed(1)}`);
}

async function main(): Promise<void> {
  console.log(`kernel A/B: new = this checkout's dist/kernels/kernels.wasm, old = ${base}; ${rounds} rounds; load average ${loadavg().map((x) => x.toFixed(1)).join(' ')}`);
  const cells = quick ? [6, 6] : [12, 12];
  const gen = generateSystem(parseGeneratorParams(
    { physics: 'acoustics', dim: 2, order: 2, cells, slabs: 2, layersPerSlab: 1, periodic: [true, true] }, 'bench'));
  const acoustics = gen.bsr;
  const nAc = acoustics.nBlockRows * acoustics.bs;
  const target = Number(opt('--values', quick ? '1e6' : '6e6'));
  const stencils = [4, 8, 16, 30, 40].map((bs) => blockStencil(Math.max(4, Math.round(Math.sqrt(target / (5 * bs * bs)))), bs, 1000 + bs));
  const mats: Bsr[] = [...stencils, acoustics];
  const bytesOf = (a: Bsr): number => a.values.byteLength + a.colInd.byteLength + a.rowPtr.byteLength;
  let total = 0;
  for (const a of mats) total += bytesOf(a) + 2 * a.nBlockRows * a.bs * 8;
  const arena = new KernelArena(2 * total + 80 * nAc * 8 + 4 * bytesOf(acoustics) + 4 * bytesOf(stencils[2]) + 4 * bytesOf(stencils[3]) + (64 << 20));
  const kNew = arena.k;
  const kOld = new WA.Instance(oldModule, { env: { memory: arena.memory } }).exports as unknown as KernelExports;
  const inA = <T extends Float64Array | Int32Array>(a: T): T => {
    const v = (a instanceof Float64Array ? arena.f64(a.length) : arena.i32(a.length)) as T;
    v.set(a);
    return v;
  };
  const p = (a: Float64Array | Int32Array): number => a.byteOffset;

  if (only === '' || only === 'spmv') {
    for (const a0 of mats) {
      const a = { ...a0, rowPtr: inA(a0.rowPtr), colInd: inA(a0.colInd), values: inA(a0.values) };
      const n = a.nBlockRows * a.bs;
      const x = arena.f64(n)!, y = arena.f64(n)!;
      for (let i = 0; i < n; i++) x[i] = Math.sin(i);
      await settle(200);
      ab({ label: `spmv bs ${a.bs} (${a0 === acoustics ? 'acoustics, ' : ''}${(a.values.length / 1e6).toFixed(1)} M)`, reps: 9,
        run: (k) => k.bsrMulAdd(a.nBlockRows, a.bs, p(a.rowPtr), p(a.colInd), p(a.values), p(x), 1, 0, p(y)) }, kOld, kNew);
    }
  }

  if (only === '' || only === 'mgs') {
    const n = nAc;
    const basis: Float64Array[] = [];
    const r = mulberry32(5);
    for (let j = 0; j <= 30; j++) { const v = arena.f64(n)!; for (let i = 0; i < n; i++) v[i] = 2 * r() - 1; basis.push(v); }
    const w = arena.f64(n)!;
    for (let i = 0; i < n; i++) w[i] = 2 * r() - 1;
    const mgs = (k: KernelExports, j: number): void => {
      const w0 = k.norm2(n, p(w));
      let h = k.dot(n, p(w), p(basis[0]));
      for (let i = 0; i < j; i++) h = k.axpyDot(n, -h, p(basis[i]), p(w), p(basis[i + 1]));
      const hn = k.axpyNorm2(n, -h, p(basis[j]), p(w));
      k.scale(n, w0 > 0 ? 1 : hn, p(w));
    };
    await settle(200);
    for (const j of [0, 14, 29]) ab({ label: `mgs j=${j} (n ${n})`, reps: 15, run: (k) => mgs(k, j) }, kOld, kNew);
    ab({ label: 'mgs cycle j=0..29', reps: 5, run: (k) => { for (let j = 0; j < 30; j++) mgs(k, j); } }, kOld, kNew);
  }

  if (only === '' || only === 'gmres') {
    const swap = (k: KernelExports): void => { (arena as unknown as { k: KernelExports }).k = k; };
    // the bs 16 and bs 30 stencils with their diagonal blocks shifted by 2·bs (as bench/compiled-library.bench.ts)
    const shift = (a: Bsr): Bsr => {
      const bs = a.bs, out: Bsr = { ...a, values: Float64Array.from(a.values) };
      for (let I = 0; I < a.nBlockRows; I++) {
        for (let q = a.rowPtr[I]; q < a.rowPtr[I + 1]; q++) {
          if (a.colInd[q] === I) for (let d = 0; d < bs; d++) out.values[q * bs * bs + d * bs + d] += 2 * bs;
        }
      }
      return out;
    };
    const stencilSystem = (a: Bsr) => ({ name: `stencil bs ${a.bs}`, bsr: shift(a), rhs: Float64Array.from({ length: a.nBlockRows * a.bs }, (_, i) => Math.cos(i)), slabOffsets: undefined });
    const systems = [
      { name: 'acoustics', bsr: acoustics, rhs: gen.rhs, slabOffsets: Int32Array.from(gen.layout.slabOffsets ?? []) as Int32Array | undefined },
      stencilSystem(stencils[2]), stencilSystem(stencils[3]),
    ];
    setActiveArena(arena);
    for (const sys of systems) {
      const n = sys.bsr.nBlockRows * sys.bsr.bs;
      const bsrK: Bsr = { ...sys.bsr, rowPtr: inA(sys.bsr.rowPtr), colInd: inA(sys.bsr.colInd), values: inA(sys.bsr.values) };
      // the block preconditioners read the block view only; a scalar view asked for is built on demand
      let csr: ReturnType<typeof bsrToCsr> | undefined;
      const src = sys.bsr;
      const system: SystemMatrix = { bsr: bsrK, get csr() { return (csr ??= bsrToCsr(src)); }, slabOffsets: sys.slabOffsets };
      const rhs = inA(sys.rhs);
      const A = bsrOperator(bsrK);
      const r = arena.f64(n)!, z = arena.f64(n)!;
      for (let i = 0; i < n; i++) r[i] = Math.sin(i);
      for (const pc of ['none', 'block-jacobi', 'block-gs', 'block-ilu0']) {
        const recipe = parseRecipe({ preconditioner: pc, restart: 30, rtol: 0, maxIterations: 30, ...(pc === 'block-gs' ? { sweep: 'symmetric' } : {}) }, 'bench');
        if (pc !== 'none') {
          await settle(200);
          ab({ label: `${sys.name}: setup ${pc}`, reps: 3, run: (k) => {
            swap(k);
            const m = arena.mark();
            createPreconditioner(system, recipe).setup();
            arena.release(m);
          } }, kOld, kNew);
          swap(kNew);
        }
        const M = createPreconditioner(system, recipe);
        if (!M.setup().ok) { console.log(`${pc}: setup failed`); continue; }
        const x = arena.f64(n)!;
        const mark = arena.mark();
        const opts = { ...krylovOptionsFromRecipe(recipe, M), ritz: false };
        await settle(200);
        if (pc !== 'none') ab({ label: `${sys.name}: apply ${pc}`, reps: 9, run: (k) => { swap(k); M.apply(r, z); } }, kOld, kNew);
        if (!appliesOnly) ab({ label: `${sys.name}: gmres(30) cycle ${pc}`, reps: 3, run: (k) => {
          swap(k);
          x.fill(0);
          gmres(A, rhs, x, opts);
          arena.release(mark);
        } }, kOld, kNew);
        swap(kNew);
      }
    }
    setActiveArena(null);
    console.log(`kernel calls during the solves: ${arena.dispatched} in WebAssembly, ${arena.missed} in TypeScript (must be 0)`);
  }
  console.log(`load average at the end: ${loadavg().map((x) => x.toFixed(1)).join(' ')}`);
}

await main();
