/**
 * Assembly throughput and peak memory of the Euler generator, 2D+t, p = 2 (block size 40), both
 * fluxes, at the isentropic vortex state (Ω = [0, 10]² periodic). Targets of the issue: at least
 * 2,000 elements/s on one core, and peak memory under 1.5× the BSR bytes of the result.
 *
 * Each flux runs in a fresh child process (so the peak RSS is its own): the parent prints the
 * table. Figures per child:
 *  - elements/s of `assembleDg` (residual + exact Jacobian), median of `--repeats` assemblies at
 *    the projected state after one untimed warm-up;
 *  - elements/s of the whole `generateSystem` (projection, positivity scaling, assembly, zero-block
 *    count), one run;
 *  - peak memory = peak RSS (process.resourceUsage().maxRSS) minus the RSS just before
 *    generateSystem, against the BSR bytes (values + colInd + rowPtr) of the matrix — in a second
 *    fresh process that runs generateSystem alone (the timed assemblies would set the peak).
 * Benchmarks print; they never assert. The load average is printed with the figures: on the
 * shared 2-core machine the rates move by 2–3× with it.
 *
 *   npx tsx bench/euler-assembly.bench.ts                  # 12×12 cells, 2 slabs: 1728 elements, ≈ 110 MB of BSR
 *   npx tsx bench/euler-assembly.bench.ts --cells 8 --repeats 3
 */
import { spawnSync } from 'node:child_process';
import { loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import { buildDiscretization, generateSystem, parseGeneratorParams } from '../src/dg/generate.js';
import { assembleDg } from '../src/dg/assemble.js';
import { projectFunction } from '../src/dg/projection.js';
import { scaleToAdmissible } from '../src/dg/positivity.js';
import type { NonlinearSystemPhysics } from '../src/dg/physics/types.js';

const args = process.argv.slice(2);
const arg = (name: string, dflt: string): string => {
  const i = args.indexOf(name);
  return i >= 0 && args[i + 1] !== undefined ? args[i + 1]! : dflt;
};
const cells = Number(arg('--cells', '12'));
const repeats = Number(arg('--repeats', '3'));

interface ChildFigures {
  flux: string; nElements: number; bs: number; assemblyElementsPerSecond: number[];
  /** Elements per second of this process's CPU time (user + system): the one-core rate, less load-dependent. */
  assemblyElementsPerCpuSecond: number[]; generateElementsPerSecond: number;
  bsrBytes: number; peakBytes: number; load: number[];
}

function params(flux: string) {
  return parseGeneratorParams({
    physics: 'euler', state: 'vortex', flux, dim: 2, order: 2, cells, extent: [10, 10], periodic: [true, true], slabs: 2,
  }, 'euler-assembly');
}

function childMemory(flux: string): void {
  const p = params(flux);
  globalThis.gc?.();
  const before = process.memoryUsage().rss;
  const system = generateSystem(p);
  const peak = process.resourceUsage().maxRSS * 1024;
  const bsrBytes = system.bsr.values.byteLength + system.bsr.colInd.byteLength + system.bsr.rowPtr.byteLength;
  process.stdout.write(`${JSON.stringify({ bsrBytes, peakBytes: peak - before })}\n`);
}

function child(flux: string): void {
  const p = params(flux);
  // assembly alone, at the projected state
  const { disc } = buildDiscretization(p);
  const physics = disc.physics as NonlinearSystemPhysics;
  const U = projectFunction(disc.mesh, p.order, physics.nEquations, disc.ordering.inv, physics.state!);
  scaleToAdmissible(disc, physics, U);
  const n = disc.mesh.nElements;
  assembleDg(disc, U); // warm-up (JIT)
  const rates: number[] = [], cpuRates: number[] = [];
  for (let r = 0; r < repeats; r++) {
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    assembleDg(disc, U);
    rates.push(n / ((performance.now() - t0) / 1000));
    const c = process.cpuUsage(c0);
    cpuRates.push(n / ((c.user + c.system) / 1e6));
  }
  // the whole generation
  const t0 = performance.now();
  const system = generateSystem(p);
  const seconds = (performance.now() - t0) / 1000;
  const out: ChildFigures = {
    flux, nElements: n, bs: system.bsr.bs, assemblyElementsPerSecond: rates, assemblyElementsPerCpuSecond: cpuRates,
    generateElementsPerSecond: n / seconds,
    bsrBytes: 0, peakBytes: 0, load: loadavg(),
  };
  process.stdout.write(`${JSON.stringify(out)}\n`);
}

const median = (v: number[]): number => { const s = [...v].sort((a, b) => a - b); return s[Math.floor(s.length / 2)]!; };

if (args[0] === '--child') {
  child(args[1]!);
} else if (args[0] === '--child-memory') {
  childMemory(args[1]!);
} else {
  const self = fileURLToPath(import.meta.url);
  console.log(`Euler 2D+t, p = 2, vortex state, ${cells}×${cells} cells, 2 slabs; load average before: ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  console.log('flux  elements  bs   assembly el/s (median [min–max])   per CPU s   generate el/s   BSR MB   peak MB   peak/BSR');
  for (const flux of ['llf', 'roe']) {
    // peak RSS from a fresh process; --expose-gc so the baseline is taken after a full collection
    const r = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', self, '--child', flux, '--cells', String(cells), '--repeats', String(repeats)], { encoding: 'utf8' });
    if (r.status !== 0) { console.log(`${flux}: child failed: ${r.stderr.trim().split('\n').slice(-3).join(' | ')}`); continue; }
    const f = JSON.parse(r.stdout.trim().split('\n').pop()!) as ChildFigures;
    const mem = spawnSync(process.execPath, ['--expose-gc', '--import', 'tsx', self, '--child-memory', flux, '--cells', String(cells)], { encoding: 'utf8' });
    if (mem.status !== 0) { console.log(`${flux}: memory child failed: ${mem.stderr.trim().split('\n').slice(-3).join(' | ')}`); continue; }
    Object.assign(f, JSON.parse(mem.stdout.trim().split('\n').pop()!) as { bsrBytes: number; peakBytes: number });
    const rates = f.assemblyElementsPerSecond;
    console.log([
      f.flux.padEnd(4), String(f.nElements).padStart(8), String(f.bs).padStart(4),
      `${median(rates).toFixed(0)} [${Math.min(...rates).toFixed(0)}–${Math.max(...rates).toFixed(0)}]`.padStart(34),
      median(f.assemblyElementsPerCpuSecond).toFixed(0).padStart(10),
      f.generateElementsPerSecond.toFixed(0).padStart(15), (f.bsrBytes / 1e6).toFixed(1).padStart(8),
      (f.peakBytes / 1e6).toFixed(1).padStart(9), (f.peakBytes / f.bsrBytes).toFixed(2).padStart(10),
      ` (load after ${f.load.map((v) => v.toFixed(2)).join(' ')})`,
    ].join('  '));
  }
  console.log('targets: ≥ 2000 elements/s on one core; peak/BSR < 1.5');
}
