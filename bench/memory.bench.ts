/**
 * Counted bytes against the process's peak memory. For each case × recipe, one fresh process runs
 * `slabbench solve FILE --json -` (the built CLI, dist/), and the table compares the bytes the
 * result counts (matrix + preconditioner + Krylov + work, b and x included) with its peak RSS minus
 * the baseline RSS of a Node process that has loaded the CLI's modules and nothing else, and with the
 * matrix copy the WebAssembly path makes while moving the matrix into kernel memory added.
 *
 *   npm run build && npx tsx bench/memory.bench.ts [DIR]
 *
 * DIR (default /tmp/slabbench-memory) holds the cases; missing ones are generated with
 * `slabbench generate` (about a minute each): a 3D+t p = 3 acoustics case (≈ 830 MB of text,
 * ≈ 290 MB of matrix values) and a 2D+t p = 2 advection case (≈ 970 MB of text, ≈ 300 MB of values).
 * Generation needs about 1 GB of memory, each solve up to 0.9 GB. MEMORY_BENCH_CASES=adv2d-p2 runs only the
 * cases named. Prints a row per run as it finishes; never asserts.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync } from 'node:fs';
import { loadavg } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const bin = join(root, 'dist', 'cli', 'bin.js');
const dir = resolve(process.argv[2] ?? '/tmp/slabbench-memory');

const CASES: Array<{ name: string; args: string[] }> = [
  { name: 'ac3d-p3', args: ['--physics', 'acoustics', '--dim', '3', '--order', '3', '--cells', '2', '--slabs', '2'] },
  { name: 'adv2d-p2', args: ['--physics', 'advection', '--dim', '2', '--order', '2', '--cells', '64', '--slabs', '3'] },
];
const RECIPES: Array<{ name: string; args: string[] }> = [
  { name: 'gmres + block-ilu0', args: ['--precond', 'block-ilu0'] },
  { name: 'gmres + ilu0', args: ['--precond', 'ilu0'] },
];

const mib = (b: number): string => (b / 2 ** 20).toFixed(1);

/** maxRSS of a Node process that imported the CLI's modules (what every solve process starts from). */
function baselineRss(): number {
  const script = `await import(${JSON.stringify(join(root, 'dist', 'cli', 'main.js'))}); await import(${JSON.stringify(join(root, 'dist', 'index.js'))});` +
    ' process.stdout.write(String(process.resourceUsage().maxRSS * 1024));';
  return Number(execFileSync(process.execPath, ['--input-type=module', '-e', script], { encoding: 'utf8' }));
}

if (!existsSync(bin)) {
  process.stderr.write(`memory.bench: ${bin} not found; run \`npm run build\` first\n`);
  process.exit(2);
}
mkdirSync(dir, { recursive: true });
for (const c of CASES) {
  if (existsSync(join(dir, `${c.name}.mtx`))) continue;
  process.stderr.write(`generating ${c.name} in ${dir} …\n`);
  execFileSync(process.execPath, [bin, 'generate', ...c.args, '--name', c.name, '--out', dir], { stdio: ['ignore', 'ignore', 'inherit'] });
}

const base = [baselineRss(), baselineRss(), baselineRss()].sort((a, b) => a - b)[1];
console.log(`memory: counted bytes vs peak RSS − baseline (baseline: Node with the CLI modules loaded, ${mib(base)} MiB; load ${loadavg().map((x) => x.toFixed(1)).join(' ')})`);
const head = ['case', 'recipe', 'iters', 'matrix', 'precond', 'Krylov', 'work', 'counted', 'peak RSS', 'peak − base', 'kernels', 'counted / (peak − base)', '+ moved / (peak − base)', 'reserved basis / (peak − base)'];
const widths = [8, 18, 5, 7, 7, 7, 6, 7, 8, 11, 10, 23, 23, 30];
const line = (cells: string[]): string => cells.map((x, j) => (j < 2 ? x.padEnd(widths[j]) : x.padStart(widths[j]))).join('  ');
console.log(line(head));
const only = process.env.MEMORY_BENCH_CASES?.split(',');
for (const c of CASES) {
  if (only && !only.includes(c.name)) continue;
  for (const r of RECIPES) {
    const out = execFileSync(process.execPath, [bin, 'solve', join(dir, `${c.name}.mtx`), ...r.args, '--max-iters', '200', '--json', '-'], {
      encoding: 'utf8', maxBuffer: 1 << 28,
    });
    const doc = JSON.parse(out) as {
      iterations: number; kernels?: string; kernelMatrixMovedBytes?: number;
      memory: { matrixBytes: number; preconditionerBytes: number; krylovBytes: number; workBytes: number; peakBytes: number; basisReservedBytes: number; buffers: { krylov: Record<string, number> } };
    };
    const m = doc.memory;
    // counted: GMRES holds the basis vectors it wrote (min(iterations, restart) + 1); the reserved
    // figure (a full cycle, what estimate projects) is shown beside it for comparison
    const counted = m.matrixBytes + m.preconditionerBytes + m.krylovBytes + m.workBytes;
    const reserved = counted - (m.buffers.krylov.basis ?? 0) + m.basisReservedBytes;
    const above = m.peakBytes - base;
    // the WebAssembly path copies the matrix into kernel memory: both copies exist while it moves
    const moved = doc.kernelMatrixMovedBytes ?? 0;
    // one row as soon as it is measured (a run takes minutes on a loaded machine)
    console.log(line([c.name, r.name, String(doc.iterations), mib(m.matrixBytes), mib(m.preconditionerBytes), mib(m.krylovBytes), mib(m.workBytes),
      mib(counted), mib(m.peakBytes), mib(above), doc.kernels ?? '?', (counted / above).toFixed(3), ((counted + moved) / above).toFixed(3),
      ((reserved + moved) / above).toFixed(3)]));
  }
}
console.log('(MiB; counted = matrix + preconditioner + Krylov + work, work including b and x, Krylov = the basis vectors the run');
console.log(' wrote; "+ moved" adds the matrix arrays copied into WebAssembly kernel memory (kernelMatrixMovedBytes: the JavaScript');
console.log(' copy and the kernel copy coexist while they move); "reserved basis" counts the full GMRES(30) basis of 31 vectors');
console.log(' instead of the written ones (+ moved). SLABBENCH_KERNELS=typescript measures the TypeScript path.)');
