/**
 * Euler assembly A/B in one process: `assembleDg` of this checkout ("new") against the one of a
 * base revision ("old", default `main`; its src/ from `git archive REV src` in a temporary folder
 * under .slabbench-tmp/), on the problem of euler-assembly.bench.ts (2D+t, p = 2, bs 40, vortex
 * state, 12×12 cells, 2 slabs: 1728 elements). Each side builds its own discretization; both
 * assemble at the same projected state. After one untimed warm-up each, assemblies alternate old
 * and new (order flipped every pair) and the ratio new/old is taken per pair, so load that comes
 * and goes on the shared machine hits both sides. Prints elements per second of the process's CPU
 * time and of wall time (median [min–max]), the median pair ratio, the largest matrix difference
 * relative to the largest entry, and whether the residuals are identical. Figures only.
 *
 *   npx tsx bench/euler-assembly-ab.bench.ts [--base REV] [--pairs N] [--cells C] [--flux llf|roe|both]
 */
import { execSync } from 'node:child_process';
import { mkdirSync, rmSync } from 'node:fs';
import { loadavg } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import * as genNew from '../src/dg/generate.js';
import * as asmNew from '../src/dg/assemble.js';
import { projectFunction } from '../src/dg/projection.js';
import { scaleToAdmissible } from '../src/dg/positivity.js';
import type { NonlinearSystemPhysics } from '../src/dg/physics/types.js';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const argv = process.argv.slice(2);
const opt = (name: string, dflt: string): string => { const i = argv.indexOf(name); return i >= 0 && argv[i + 1] !== undefined ? argv[i + 1]! : dflt; };
const base = opt('--base', 'main');
const pairs = Number(opt('--pairs', '4'));
const cells = Number(opt('--cells', '12'));
const fluxes = opt('--flux', 'both') === 'both' ? ['llf', 'roe'] : [opt('--flux', 'llf')];

const median = (v: number[]): number => { const s = [...v].sort((a, b) => a - b); return s[Math.floor(s.length / 2)]!; };
const fmt = (v: number[]): string => `${median(v).toFixed(0)} [${Math.min(...v).toFixed(0)}–${Math.max(...v).toFixed(0)}]`;

const dir = join(ROOT, '.slabbench-tmp', `euler-ab-${process.pid}`);
mkdirSync(dir, { recursive: true });
try {
  execSync(`git archive ${base} src | tar -x -C ${dir}`, { cwd: ROOT });
  const genOld = await import(pathToFileURL(join(dir, 'src', 'dg', 'generate.ts')).href) as typeof genNew;
  const asmOld = await import(pathToFileURL(join(dir, 'src', 'dg', 'assemble.ts')).href) as typeof asmNew;
  console.log(`Euler assembly A/B: old = ${base} (${execSync(`git rev-parse --short ${base}`, { cwd: ROOT }).toString().trim()}), new = this checkout; ${cells}×${cells} cells, 2 slabs, ${pairs} pairs; load before ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
  for (const flux of fluxes) {
    const raw = { physics: 'euler', state: 'vortex', flux, dim: 2, order: 2, cells, extent: [10, 10], periodic: [true, true], slabs: 2 };
    const sides = [
      { name: 'old', disc: genOld.buildDiscretization(genOld.parseGeneratorParams(raw, 'euler-ab')).disc, assemble: asmOld.assembleDg },
      { name: 'new', disc: genNew.buildDiscretization(genNew.parseGeneratorParams(raw, 'euler-ab')).disc, assemble: asmNew.assembleDg },
    ];
    const p = genNew.parseGeneratorParams(raw, 'euler-ab');
    const d0 = sides[1]!.disc;
    const physics = d0.physics as NonlinearSystemPhysics;
    const U = projectFunction(d0.mesh, p.order, physics.nEquations, d0.ordering.inv, physics.state!);
    scaleToAdmissible(d0, physics, U);
    const n = d0.mesh.nElements;
    // equality check and warm-up
    const ro = sides[0]!.assemble(sides[0]!.disc as never, U), rn = sides[1]!.assemble(sides[1]!.disc, U);
    let diff = 0, big = 0, resSame = true;
    const vo = ro.bsr!.values, vn = rn.bsr!.values;
    for (let k = 0; k < vn.length; k++) { diff = Math.max(diff, Math.abs(vo[k]! - vn[k]!)); big = Math.max(big, Math.abs(vo[k]!)); }
    for (let k = 0; k < rn.residual.length; k++) if (!Object.is(ro.residual[k], rn.residual[k])) resSame = false;
    const cpu: Record<string, number[]> = { old: [], new: [] }, wall: Record<string, number[]> = { old: [], new: [] };
    const ratio: number[] = [];
    for (let k = 0; k < pairs; k++) {
      const order = k % 2 === 0 ? [0, 1] : [1, 0];
      const got: Record<string, number> = {};
      for (const s of order) {
        const side = sides[s]!;
        const c0 = process.cpuUsage(); const t0 = performance.now();
        side.assemble(side.disc as never, U);
        const t = (performance.now() - t0) / 1000; const c = process.cpuUsage(c0);
        cpu[side.name]!.push(n / ((c.user + c.system) / 1e6)); wall[side.name]!.push(n / t);
        got[side.name] = n / ((c.user + c.system) / 1e6);
      }
      ratio.push(got.new! / got.old!);
    }
    console.log(`${flux}: per CPU s old ${fmt(cpu.old!)}, new ${fmt(cpu.new!)}; wall old ${fmt(wall.old!)}, new ${fmt(wall.new!)}; new/old per CPU s ${median(ratio).toFixed(3)} [${Math.min(...ratio).toFixed(3)}–${Math.max(...ratio).toFixed(3)}]; max |Δ| / max |a| ${(diff / big).toExponential(1)}; residual ${resSame ? 'identical' : 'DIFFERENT'}`);
  }
  console.log(`load after ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
} finally { rmSync(dir, { recursive: true, force: true }); }
