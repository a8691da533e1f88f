import type { Command } from 'commander';
import { UserError, optionError } from '../util/errors.js';
import { parseGeneratorParams, type GeneratorParams } from '../dg/generate.js';
import { PHYSICS_NAMES } from '../dg/physics/registry.js';

/**
 * Command-line options for generator parameters, shared by `generate` and `refine`.
 * Each entry: option flag, parameter field, help text, how the text becomes a JSON value.
 */
interface GeneratorOption {
  flags: string;
  key: string;
  field: string;
  help: string;
  kind: 'number' | 'string' | 'list' | 'periodic' | 'shear' | 'repeat' | 'flag-false' | 'flag-true';
}

const OPTIONS: readonly GeneratorOption[] = [
  { flags: '--physics <name>', key: 'physics', field: 'physics', kind: 'string', help: `physics: ${PHYSICS_NAMES.join(', ')}` },
  { flags: '--dim <d>', key: 'dim', field: 'dim', kind: 'number', help: 'space dimension 1, 2 or 3 (elements are (d+1)-simplices; default 2)' },
  { flags: '--order <p>', key: 'order', field: 'order', kind: 'number', help: 'polynomial degree p, 0–4 (0–3 in 3D+t; default 1)' },
  { flags: '--cells <n[,n,n]>', key: 'cells', field: 'cells', kind: 'list', help: 'cells per space axis; one value for all axes (default 8)' },
  { flags: '--extent <L[,L,L]>', key: 'extent', field: 'extent', kind: 'list', help: 'domain lengths, Ω = [0,L1]×… (default 1)' },
  { flags: '--slabs <n>', key: 'slabs', field: 'slabs', kind: 'number', help: 'number of time slabs (default 4)' },
  { flags: '--layers <n>', key: 'layers', field: 'layersPerSlab', kind: 'number', help: 'element layers in time per slab (default 1)' },
  { flags: '--cfl <c>', key: 'cfl', field: 'cfl', kind: 'number', help: 'slab thickness = c · h / (max wave speed), h = smallest cell size (default 0.5)' },
  { flags: '--slab-thickness <dt>', key: 'slabThickness', field: 'slabThickness', kind: 'number', help: 'slab thickness given directly (instead of --cfl)' },
  { flags: '--periodic <axes>', key: 'periodic', field: 'periodic', kind: 'periodic', help: "periodic space axes: letters from xyz, 'all' or 'none'; others are inflow/outflow (default none)" },
  { flags: '--shear <s[,s,s]|align>', key: 'shear', field: 'shear', kind: 'shear', help: "tilt the mesh x → x + s·t; 'align' = along the constant velocity / mean flow (default 0)" },
  { flags: '--jitter <f>', key: 'jitter', field: 'jitter', kind: 'number', help: 'random vertex displacement in space, fraction of the cell size in [0, 0.5) (default 0)' },
  { flags: '--seed <n>', key: 'seed', field: 'seed', kind: 'number', help: 'seed of the jitter and of --ordering random (default 1)' },
  { flags: '--aspect-ratio <A>', key: 'aspectRatio', field: 'aspectRatio', kind: 'number', help: 'front-aligned mesh map: target aspect ratio 1 < A ≤ 1000 of the elements at the front (longest edge / smallest altitude, regular simplex = 1; default: no map)' },
  { flags: '--front-direction <n[,n,n]|align>', key: 'frontDirection', field: 'frontDirection', kind: 'shear', help: "front normal n of the front x·n = x0 + s·t; 'align' = the constant velocity / mean flow (default align)" },
  { flags: '--front-speed <s|align>', key: 'frontSpeed', field: 'frontSpeed', kind: 'number', help: "front speed s along n; 'align' = the velocity's component along n (default align)" },
  { flags: '--front-position <x0|center>', key: 'frontPosition', field: 'frontPosition', kind: 'number', help: "front offset x0 at t = 0 (n normalized); 'center' = through the domain centre (default center)" },
  { flags: '--front-grading <r>', key: 'frontGrading', field: 'frontGrading', kind: 'number', help: 'growth ratio of the cell size per cell away from the front, 1 < r ≤ 3 (default 1.2)' },
  { flags: '--pseudo-cfl <c>', key: 'pseudoCfl', field: 'pseudoCfl', kind: 'number', help: 'add the pseudo-time term M/Δτ to the diagonal blocks, Δτ = c·h_K/λ (pseudo-transient continuation; default: none)' },
  { flags: '--ordering <name>', key: 'ordering', field: 'ordering', kind: 'string', help: 'element order inside each slab: natural, downstream or random (default natural)' },
  { flags: '--drop-zero-blocks', key: 'dropZeroBlocks', field: 'dropZeroBlocks', kind: 'flag-true', help: 'leave out off-diagonal blocks whose entries are all exactly zero (the numerical pattern; default: the full face pattern)' },
  { flags: '--velocity <expr>', key: 'velocity', field: 'velocity', kind: 'repeat', help: 'advection velocity, one per axis (repeat the option), numbers or expressions in x, y, z, t (default 1, 0.5, 0.25)' },
  { flags: '--diffusivity <nu>', key: 'diffusivity', field: 'diffusivity', kind: 'number', help: 'advection-diffusion: diffusion coefficient ν ≥ 0 (default 0.01)' },
  { flags: '--sound-speed <c>', key: 'soundSpeed', field: 'soundSpeed', kind: 'number', help: 'acoustics: speed of sound (default 1)' },
  { flags: '--mean-flow <U[,U,U]>', key: 'meanFlow', field: 'meanFlow', kind: 'list', help: 'acoustics: uniform mean flow (default 0)' },
  { flags: '--at-rest', key: 'atRest', field: 'travelling', kind: 'flag-false', help: 'acoustics: initial velocity 0 (default: a wave travelling towards +x)' },
  { flags: '--direction <b[,b,b]>', key: 'direction', field: 'direction', kind: 'list', help: 'burgers: flux direction, normalized (default along x)' },
  { flags: '--initial <expr>', key: 'initial', field: 'initial', kind: 'string', help: 'initial condition (acoustics: pressure) in x, y, z; Lx, Ly, Lz and pi available' },
  { flags: '--inflow <expr>', key: 'inflow', field: 'inflow', kind: 'string', help: "data on inflow boundaries: an expression in x, y, z, t, or 'exact' (acoustics: 'exact' or 'quiet')" },
  { flags: '--state <expr>', key: 'state', field: 'state', kind: 'string', help: 'burgers: state the Jacobian is taken at (default: the initial condition); euler: uniform, vortex or shock-tube (default uniform)' },
  { flags: '--gamma <g>', key: 'gamma', field: 'gamma', kind: 'number', help: 'euler: ratio of specific heats γ, 1 < γ ≤ 5/3 (default 1.4)' },
  { flags: '--flux <name>', key: 'flux', field: 'flux', kind: 'string', help: 'euler: numerical flux roe (with the Harten–Hyman entropy fix) or llf (local Lax–Friedrichs); default roe' },
  { flags: '--density <rho>', key: 'density', field: 'density', kind: 'number', help: 'euler, state uniform: density (default 1)' },
  { flags: '--pressure <p>', key: 'pressure', field: 'pressure', kind: 'number', help: 'euler, state uniform: pressure (default 1)' },
  { flags: '--vortex-strength <eps>', key: 'vortexStrength', field: 'vortexStrength', kind: 'number', help: 'euler, state vortex: strength ε of the isentropic vortex (default 5)' },
  { flags: '--left <rho,u,p>', key: 'left', field: 'left', kind: 'list', help: 'euler, state shock-tube: left primitive state (default 1,0,1: Sod)' },
  { flags: '--right <rho,u,p>', key: 'right', field: 'right', kind: 'list', help: 'euler, state shock-tube: right primitive state (default 0.125,0,0.1: Sod)' },
  { flags: '--diaphragm <x>', key: 'diaphragm', field: 'diaphragm', kind: 'number', help: 'euler, state shock-tube: initial discontinuity position along x (default Lx/2)' },
];

const FIELD_TO_FLAG = new Map(OPTIONS.map((o) => [o.field, o.flags.split(' ')[0]]));

/** Register every generator option on a command. */
export function addGeneratorOptions(cmd: Command): Command {
  for (const o of OPTIONS) {
    if (o.kind === 'repeat') cmd.option(o.flags, o.help, (v: string, prev: string[] | undefined) => [...(prev ?? []), v]);
    else cmd.option(o.flags, o.help);
  }
  return cmd;
}

/** Names of generator options the user actually gave. */
export function givenGeneratorOptions(opts: Record<string, unknown>): string[] {
  return OPTIONS.filter((o) => opts[o.key] !== undefined).map((o) => o.flags.split(' ')[0]);
}

/** Error label for a parameter field: the option that sets it. */
export function optionLabel(field: string): string {
  const m = /^([A-Za-z]+)(?:\[(\d+)\])?$/.exec(field);
  const flag = m ? FIELD_TO_FLAG.get(m[1]) : undefined;
  if (!flag) return `option for ${field}`;
  return m && m[2] !== undefined ? `option ${flag} (entry ${Number(m[2]) + 1})` : `option ${flag}`;
}

function numberOrText(s: string): number | string {
  const v = Number(s);
  return s.trim() !== '' && Number.isFinite(v) ? v : s;
}

/** Build and validate generator parameters from parsed command-line options. */
export function generatorParamsFromOptions(opts: Record<string, unknown>): GeneratorParams {
  if (opts.physics === undefined) throw optionError('--physics', `required (one of ${PHYSICS_NAMES.join(', ')}), or use --case NAME`);
  const raw: Record<string, unknown> = {};
  const dimGiven = opts.dim !== undefined ? numberOrText(String(opts.dim)) : 2;
  const dim = typeof dimGiven === 'number' ? dimGiven : 2;
  for (const o of OPTIONS) {
    const v = opts[o.key];
    if (v === undefined) continue;
    switch (o.kind) {
      case 'number': raw[o.field] = numberOrText(String(v)); break;
      case 'string': raw[o.field] = String(v); break;
      case 'list': raw[o.field] = String(v).split(',').map((s) => numberOrText(s.trim())); break;
      case 'repeat': raw[o.field] = (v as string[]).map((s) => numberOrText(s)); break;
      case 'flag-false': raw[o.field] = false; break;
      case 'flag-true': raw[o.field] = true; break;
      case 'shear': raw[o.field] = String(v) === 'align' ? 'align' : String(v).split(',').map((s) => numberOrText(s.trim())); break;
      case 'periodic': {
        const s = String(v).trim().toLowerCase();
        const axes = 'xyz'.slice(0, dim);
        if (s === 'all') raw.periodic = new Array(dim).fill(true);
        else if (s === 'none') raw.periodic = new Array(dim).fill(false);
        else {
          for (const ch of s) {
            if (!axes.includes(ch)) throw optionError('--periodic', `expected letters from '${axes}', 'all' or 'none', got '${String(v)}'`);
          }
          raw.periodic = [...axes].map((a) => s.includes(a));
        }
        break;
      }
    }
  }
  return parseGeneratorParams(raw, 'options', optionLabel);
}

/** `--case NAME` and `--all-cases` exclude the generator options: say which one was given. */
export function rejectGeneratorOptions(opts: Record<string, unknown>, mode: string): void {
  const given = givenGeneratorOptions(opts);
  if (given.length > 0) throw new UserError(`option ${given[0]}: cannot be combined with ${mode} (the case file holds every parameter)`);
}

/** Progress on stderr, only when it is a terminal. */
export function progressPrinter(label: string): ((done: number, total: number) => void) | undefined {
  if (!process.stderr.isTTY) return undefined;
  let last = -1;
  return (done, total) => {
    const pct = Math.floor((100 * done) / Math.max(1, total));
    if (pct === last) return;
    last = pct;
    process.stderr.write(`\r${label}: ${pct}%${pct >= 100 ? '\n' : ''}`);
  };
}
