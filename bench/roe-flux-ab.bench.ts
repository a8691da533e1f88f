/**
 * Per-point cost of the Roe flux with its exact Jacobian (both states): the chain rule written out
 * (euler-roe-closed.ts, what the assembler runs) against the forward-mode arena version
 * (euler-roe.ts) and, for scale, local Lax–Friedrichs' closed form — A/B in one process, the
 * kernels alternated round by round over the same face points so load hits them alike.
 * Face points: random states (density and pressure in [0.5, 1.5], speeds up to the sound speed,
 * a third of them transonic pairs with the entropy fix on) on random unit space normals (space
 * faces, n_t = 0, as in the assembler's space faces); time faces take neither kernel's main path
 * and are left out. Prints CPU µs per point (min–max over the rounds after one warm-up) and the
 * ratio per round; never asserts.
 *
 *   npx tsx bench/roe-flux-ab.bench.ts              # 2D (m = 4), 8 rounds
 *   npx tsx bench/roe-flux-ab.bench.ts --dim 3 --rounds 12
 */
import { loadavg } from 'node:os';
import { eulerNumericalFlux, toConserved } from '../src/dg/physics/euler-flux.js';
import { roeFluxClosed } from '../src/dg/physics/euler-roe-closed.js';
import { roeFluxTape } from '../src/dg/physics/euler-roe.js';
import { mulberry32 } from '../src/util/random.js';

const args = process.argv.slice(2);
const arg = (name: string, dflt: string): string => {
  const i = args.indexOf(name);
  return i >= 0 && args[i + 1] !== undefined ? args[i + 1]! : dflt;
};
const d = Number(arg('--dim', '2'));
const rounds = Number(arg('--rounds', '8'));
const refuse = (msg: string): never => { console.error(`roe-flux-ab: ${msg}`); process.exit(2); };
if (![1, 2, 3].includes(d)) refuse(`--dim: expected 1, 2 or 3, got ${arg('--dim', '')}`);
if (!(Number.isInteger(rounds) && rounds >= 2)) refuse(`--rounds: expected an integer ≥ 2, got ${arg('--rounds', '')}`);

const G = 1.4, m = d + 2, P = 512, sweeps = 200;
const r = mulberry32(2026);
const points = Array.from({ length: P }, (_, q) => {
  const n = new Float64Array(d + 1);
  let s = 0;
  for (let k = 0; k < d; k++) { n[k] = 2 * r() - 1; s += n[k]! ** 2; }
  for (let k = 0; k < d; k++) n[k]! /= Math.sqrt(s);
  const side = (f: number): Float64Array => {
    const rho = 0.5 + r(), p = 0.5 + r(), c = Math.sqrt((G * p) / rho);
    const u = Array.from({ length: d }, (_, k) => c * (f * n[k]! + 0.3 * (2 * r() - 1)));
    const U = new Float64Array(m);
    toConserved(rho, u, p, G, U);
    return U;
  };
  const transonic = q % 3 === 0;
  return { n, UL: side(transonic ? 0.8 : 2 * r() - 1), UR: side(transonic ? 1.2 : 2 * r() - 1) };
});
const h = new Float64Array(m), dL = new Float64Array(m * m), dR = new Float64Array(m * m);
type Kernel = (UL: Float64Array, UR: Float64Array, n: Float64Array) => void;
const kernels: [string, Kernel][] = [
  ['roe, arena (old)', (UL, UR, n) => roeFluxTape(UL, UR, n, d, G, h, dL, dR)],
  ['roe, chain rule (new)', (UL, UR, n) => roeFluxClosed(UL, UR, n, d, G, h, dL, dR)],
  ['llf, closed form', (UL, UR, n) => eulerNumericalFlux('llf', UL, UR, n, d, G, h, dL, dR)],
];
const times: number[][] = kernels.map(() => []);
for (let round = 0; round <= rounds; round++) {
  kernels.forEach(([, f], i) => {
    const c0 = process.cpuUsage();
    for (let s = 0; s < sweeps; s++) for (const p of points) f(p.UL, p.UR, p.n);
    const c = process.cpuUsage(c0);
    if (round > 0) times[i]!.push((c.user + c.system) / (sweeps * P)); // µs per point; round 0 is the warm-up
  });
}
const range = (v: number[]): string => `${Math.min(...v).toFixed(2)}–${Math.max(...v).toFixed(2)}`;
console.log(`Roe flux + exact Jacobian per space-face point, ${d}D (m = ${m}), ${P} points × ${sweeps} sweeps × ${rounds} rounds; load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}`);
kernels.forEach(([name], i) => console.log(`${name.padEnd(24)} ${range(times[i]!).padStart(12)} µs CPU per point`));
const ratio = times[0]!.map((t, k) => t / times[1]![k]!);
console.log(`old/new per round: ${range(ratio)}×`);
