/**
 * Matrix Market reader throughput and memory (issue 2 targets: ≥ 100 MB/s on one core, peak
 * memory < 2× the final CSR).
 *
 *   npx tsx bench/read.bench.ts [--mb 200] [--order columns|rows]
 *
 * Generates bench/data/read-bench-<MB>mb-<order>.mtx once (gitignored): a random coordinate real
 * general matrix, written column by column (default: as many published collections are, so the
 * reader's row bucketing is exercised) or row by row (as slabbench and scipy write). Values are
 * shortest round-trip decimals (up to 17 significant digits, what most writers emit). Reports,
 * from one run: a raw byte stream of the same file (fs.createReadStream, nothing parsed) and
 * readMatrixMarket in MB/s (tinybench; wall clock and, because a shared machine may be busy,
 * also per CPU-second of this process), then a fresh child process's single read with its peak
 * RSS increase next to the bytes of the CSR it returns. No assertions: figures only.
 */
import { createReadStream, createWriteStream, existsSync, mkdirSync, statSync, renameSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { dirname, join } from 'node:path';
import { cpus, loadavg } from 'node:os';
import { once } from 'node:events';
import { Bench } from 'tinybench';
import { readMatrixMarket } from '../src/sparse/matrix-market.js';
import { csrBytes } from '../src/sparse/csr.js';
import { mulberry32 } from '../src/util/random.js';

const here = dirname(fileURLToPath(import.meta.url));
const self = fileURLToPath(import.meta.url);

function arg(name: string, dflt: string): string {
  const i = process.argv.indexOf(name);
  return i >= 0 && i + 1 < process.argv.length ? process.argv[i + 1] : dflt;
}

const rng = mulberry32;

async function generate(path: string, targetBytes: number, byRows: boolean): Promise<void> {
  const perCol = 24; // entries per column (per row when byRows)
  const approxLine = 34; // "iiiiii jjjjjj -0.xxxxxxxxxxxxxxxxx\n"
  const nEntriesTarget = Math.ceil(targetBytes / approxLine);
  const n = Math.ceil(nEntriesTarget / perCol);
  const nnz = n * perCol;
  const r = rng(42);
  const tmp = `${path}.tmp`;
  const out = createWriteStream(tmp);
  out.write(`%%MatrixMarket matrix coordinate real general\n% slabbench reader benchmark: random ${n}x${n}, ${perCol} entries per column\n${n} ${n} ${nnz}\n`);
  let s = '';
  const rowsOfCol = new Set<number>();
  for (let j = 1; j <= n; j++) {
    rowsOfCol.clear();
    while (rowsOfCol.size < perCol) rowsOfCol.add(1 + Math.floor(r() * n));
    const sorted = byRows ? [...rowsOfCol].sort((x, y) => x - y) : rowsOfCol;
    // byRows: the matrix is the transpose (line "j i v"), so rows come out in order
    for (const i of sorted) s += byRows ? `${j} ${i} ${String(r() * 2 - 1)}\n` : `${i} ${j} ${String(r() * 2 - 1)}\n`;
    if (s.length > 1 << 20) {
      if (!out.write(s)) await once(out, 'drain');
      s = '';
    }
  }
  out.end(s);
  await once(out, 'close');
  renameSync(tmp, path);
}

const cpuSeconds: Record<string, number> = { raw: 0, read: 0 };
const cpuRuns: Record<string, number> = { raw: 0, read: 0 };
/** Wrap a task so the CPU time (user + system, all threads of this process) of each run is summed. */
function cpuTimed(key: string, fn: () => Promise<void>): () => Promise<void> {
  return async () => {
    const c0 = process.cpuUsage();
    await fn();
    const c = process.cpuUsage(c0);
    cpuSeconds[key] += (c.user + c.system) / 1e6;
    cpuRuns[key]++;
  };
}

async function rawRead(path: string): Promise<number> {
  let bytes = 0;
  for await (const chunk of createReadStream(path, { highWaterMark: 1 << 20 })) bytes += (chunk as Buffer).length;
  return bytes;
}

/** Child mode: read once in a fresh process, print peak RSS increase and CSR bytes as JSON. */
async function child(path: string): Promise<void> {
  if (global.gc) global.gc();
  const before = process.memoryUsage().rss;
  const t0 = performance.now();
  const c0 = process.cpuUsage();
  const { csr } = await readMatrixMarket(path);
  const c = process.cpuUsage(c0);
  const seconds = (performance.now() - t0) / 1000;
  const cpu = (c.user + c.system) / 1e6;
  const peak = process.resourceUsage().maxRSS * 1024;
  process.stdout.write(JSON.stringify({ seconds, cpu, rssBefore: before, peakRss: peak, csrBytes: csrBytes(csr), nnz: csr.rowPtr[csr.nRows] }) + '\n');
}

async function mainBench(): Promise<void> {
  const mb = Number(arg('--mb', '200'));
  const order = arg('--order', 'columns');
  if (order !== 'columns' && order !== 'rows') throw new Error('--order: expected columns or rows');
  const dataDir = join(here, 'data');
  mkdirSync(dataDir, { recursive: true });
  const path = join(dataDir, `read-bench-${mb}mb-${order}.mtx`);
  if (!existsSync(path)) {
    process.stderr.write(`generating ${path} (~${mb} MB, once)...\n`);
    await generate(path, mb * 1e6, order === 'rows');
  }
  const size = statSync(path).size;
  const fileMB = size / 1e6;
  console.log(`file: ${path} (${fileMB.toFixed(1)} MB, entries in ${order === 'rows' ? 'row' : 'column'} order)`);
  console.log(`load average ${loadavg().map((x) => x.toFixed(1)).join(' ')} on ${cpus().length} cores (wall-clock rates drop on a busy machine; CPU-second rates much less)`);

  const bench = new Bench({ name: 'matrix market read', iterations: 3, time: 0, warmup: true, warmupIterations: 1, warmupTime: 0 });
  bench
    .add('raw byte stream (fs.createReadStream)', cpuTimed('raw', async () => { await rawRead(path); }))
    .add('readMatrixMarket', cpuTimed('read', async () => { await readMatrixMarket(path); }));
  await bench.run();
  const rates: Record<string, number> = {};
  for (const t of bench.tasks) {
    const res = t.result as { latency?: { mean: number } };
    const ms = res.latency?.mean ?? NaN;
    rates[t.name] = fileMB / (ms / 1000);
    const key = t.name.startsWith('raw') ? 'raw' : 'read';
    const cpuPerRun = cpuSeconds[key] / cpuRuns[key];
    console.log(`${t.name.padEnd(40)} ${(ms / 1000).toFixed(3)} s wall  ${rates[t.name].toFixed(1).padStart(7)} MB/s   ${cpuPerRun.toFixed(3)} CPU-s  ${(fileMB / cpuPerRun).toFixed(1).padStart(7)} MB per CPU-s`);
  }
  const ratio = rates.readMatrixMarket / rates['raw byte stream (fs.createReadStream)'];
  console.log(`reader / raw stream: ${(100 * ratio).toFixed(1)}%   (target: reader ≥ 100 MB/s)`);

  const c = spawnSync(process.execPath, [...process.execArgv, '--expose-gc', self, '--child', path], { encoding: 'utf8', maxBuffer: 1 << 20 });
  if (c.status !== 0) {
    console.log(`child run failed: ${c.stderr}`);
    return;
  }
  const m = JSON.parse(c.stdout.trim().split('\n').pop()!) as { seconds: number; cpu: number; rssBefore: number; peakRss: number; csrBytes: number; nnz: number };
  const inc = m.peakRss - m.rssBefore;
  console.log(`fresh process (first read, JIT warm-up included): ${m.nnz} entries in ${m.seconds.toFixed(3)} s wall (${(fileMB / m.seconds).toFixed(1)} MB/s), ${m.cpu.toFixed(3)} CPU-s (${(fileMB / m.cpu).toFixed(1)} MB per CPU-s)`);
  console.log(`peak RSS increase ${(inc / 2 ** 20).toFixed(1)} MiB vs final CSR ${(m.csrBytes / 2 ** 20).toFixed(1)} MiB: ${(inc / m.csrBytes).toFixed(2)}× (target < 2×)`);
}

if (process.argv.includes('--child')) await child(arg('--child', ''));
else await mainBench();
