/**
 * Generator throughput and memory (issue 3 targets, 2D+t, p = 2, one core: ≥ 20 000 elements/s for
 * scalar advection, ≥ 3 000 elements/s for acoustics; peak memory < 1.5× the BSR bytes).
 *
 *   npx tsx bench/generate.bench.ts [--cells 16] [--slabs 4]
 *
 * For each case, from one run: generateSystem (mesh, element order, assembly, exact-solution
 * projection) in elements per wall-clock second and per CPU second of this process (the machine
 * may be shared), the time to merely allocate and first-touch a Float64Array as large as the BSR
 * values (the page-fault floor of this machine, which the generator cannot go below), and, in a
 * fresh child process, the peak RSS increase during generateSystem next to the BSR bytes it
 * returns. No assertions: figures only.
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { cpus, loadavg } from 'node:os';
import { Bench } from 'tinybench';
import { parseGeneratorParams, generateSystem, type GeneratorParams } from '../src/dg/generate.js';
import { bsrBytes } from '../src/sparse/bsr.js';

const self = fileURLToPath(import.meta.url);

function arg(name: string, dflt: string): string {
  const i = process.argv.indexOf(name);
  return i >= 0 && i + 1 < process.argv.length ? process.argv[i + 1] : dflt;
}

function caseParams(physics: string, cells: number, slabs: number): GeneratorParams {
  return parseGeneratorParams({ physics, dim: 2, order: 2, cells, slabs, cfl: 0.5 }, 'bench');
}

if (process.argv.includes('--child')) {
  // Child: one generation, peak RSS increase over the baseline after imports and a tiny warm-up.
  const physics = arg('--physics', 'advection');
  const params = caseParams(physics, Number(arg('--cells', '16')), Number(arg('--slabs', '4')));
  generateSystem(caseParams(physics, 2, 1));
  global.gc?.();
  const before = process.memoryUsage().rss;
  const s = generateSystem(params);
  const peak = process.resourceUsage().maxRSS * 1024;
  process.stdout.write(JSON.stringify({ before, peak, bsrBytes: bsrBytes(s.bsr), rhsBytes: s.rhs.byteLength }));
  process.exit(0);
}

const cells = Number(arg('--cells', '16'));
const slabs = Number(arg('--slabs', '4'));
console.log(`generator benchmark: 2D+t, p = 2, ${cells}×${cells} cells, ${slabs} slabs; node ${process.version}, ${cpus()[0]?.model ?? 'cpu'}, load average ${loadavg()[0].toFixed(1)}`);
for (const physics of ['advection', 'acoustics']) {
  const params = caseParams(physics, cells, slabs);
  const probe = generateSystem(params);
  const nElements = probe.layout.provenance!.nElements as number;
  const bytes = bsrBytes(probe.bsr);
  const nValues = probe.bsr.values.length;
  let cpuSeconds = 0;
  let calls = 0;
  const bench = new Bench({ iterations: 3, warmupIterations: 1, time: 0 });
  bench.add(`generate ${physics}`, () => {
    const c0 = process.cpuUsage();
    generateSystem(params);
    const c = process.cpuUsage(c0);
    cpuSeconds += (c.user + c.system) / 1e6;
    calls++;
  });
  bench.add('allocate + touch the BSR values', () => {
    const v = new Float64Array(nValues);
    for (let i = 0; i < v.length; i += 512) v[i] = 1;
  });
  await bench.run();
  const [gen, touch] = bench.tasks.map((t) => t.result);
  const genMs = (gen as { latency?: { mean: number } }).latency?.mean ?? NaN;
  const touchMs = (touch as { latency?: { mean: number } }).latency?.mean ?? NaN;
  // process.cpuUsage counts every thread of the process (GC helpers included).
  const perCpu = cpuSeconds > 0 ? (nElements * calls) / cpuSeconds : NaN;
  const child = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', self, '--child', '--physics', physics, '--cells', String(cells), '--slabs', String(slabs)], { encoding: 'utf8' });
  let memLine = `child failed: ${child.stderr.trim().split('\n').pop()}`;
  if (child.status === 0) {
    const m = JSON.parse(child.stdout) as { before: number; peak: number; bsrBytes: number; rhsBytes: number };
    const inc = m.peak - m.before;
    memLine = `peak RSS increase ${(inc / 2 ** 20).toFixed(1)} MiB = ${(inc / m.bsrBytes).toFixed(2)} × the BSR bytes (${(m.bsrBytes / 2 ** 20).toFixed(1)} MiB)`;
  }
  console.log(`\n${physics}: ${nElements} elements, block size ${probe.bsr.bs}, ${probe.bsr.rowPtr[probe.bsr.nBlockRows]} blocks, BSR ${(bytes / 2 ** 20).toFixed(1)} MiB`);
  console.log(`  generateSystem       ${(genMs / 1000).toFixed(3)} s → ${(nElements / (genMs / 1000)).toFixed(0)} elements/s wall, ${perCpu.toFixed(0)} elements per CPU second (all threads)`);
  console.log(`  allocate + touch     ${(touchMs / 1000).toFixed(3)} s for the value array alone (page-fault floor: ${(nElements / (touchMs / 1000)).toFixed(0)} elements/s)`);
  console.log(`  memory               ${memLine}`);
}
