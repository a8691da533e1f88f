import { UserError } from '../../util/errors.js';
import { compileScalarField, sampleField, type ScalarField } from '../expressions.js';
import { show } from './fields.js';

/**
 * Euler states given as expressions of the primitive variables in (x, y, z, t): density ρ,
 * velocity components u, v, w (one per space axis) and pressure p. Written on the command line as
 * semicolon-separated assignments, `rho = 1 + 0.2*sin(2*pi*x); u = 0.5; v = 0; p = 1`, or in a
 * suite file as that string or an object { "rho": …, "u": …, "v": …, "p": … } (numbers or
 * expression texts). The normalized form is the object (JSON, kept in the layout provenance).
 */
export type PrimitiveExpressions = Record<string, string | number>;

const VELOCITY_NAMES = ['u', 'v', 'w'];

/** The primitive variable names in order for d space dimensions: rho, u[, v[, w]], p. */
export function primitiveNames(d: number): string[] {
  return ['rho', ...VELOCITY_NAMES.slice(0, d), 'p'];
}

/**
 * Parse a primitive-expression state (string of assignments or object). Every name of
 * primitiveNames(d) must be given exactly once; each expression must compile.
 */
export function parsePrimitiveExpressions(v: unknown, d: number, label: string, extent: readonly number[]): PrimitiveExpressions {
  const names = primitiveNames(d);
  const form = `'${names.map((n) => `${n} = …`).join('; ')}'`;
  let entries: [string, unknown][];
  if (typeof v === 'string') {
    entries = [];
    for (const part of v.split(';')) {
      if (part.trim() === '') continue;
      const eq = part.indexOf('=');
      if (eq < 0) throw new UserError(`${label}: expected ${form} (one assignment per primitive variable, separated by ';'), got ${show(part.trim())}`);
      const name = part.slice(0, eq).trim();
      const text = part.slice(eq + 1).trim();
      const num = Number(text);
      entries.push([name, text !== '' && Number.isFinite(num) ? num : text]);
    }
  } else if (typeof v === 'object' && v !== null && !Array.isArray(v)) {
    entries = Object.entries(v as Record<string, unknown>);
  } else {
    throw new UserError(`${label}: expected a state name or ${form}, got ${show(v)}`);
  }
  const out: PrimitiveExpressions = {};
  for (const [name, text] of entries) {
    if (!names.includes(name)) throw new UserError(`${label}: unknown variable '${name}' (expected ${names.join(', ')} in ${d}D)`);
    if (name in out) throw new UserError(`${label}: '${name}' is given twice`);
    if (!(typeof text === 'number' && Number.isFinite(text)) && !(typeof text === 'string' && text.trim() !== '')) {
      throw new UserError(`${label}: ${name}: expected a number or an expression in x, y, z, t, got ${show(text)}`);
    }
    compileScalarField(text as string | number, `${label}: ${name}`, extent);
    out[name] = text as string | number;
  }
  const missing = names.filter((n) => !(n in out));
  if (missing.length > 0) throw new UserError(`${label}: missing ${missing.join(', ')} (expected ${form})`);
  // the normalized object in the canonical order
  const ordered: PrimitiveExpressions = {};
  for (const n of names) ordered[n] = out[n]!;
  return ordered;
}

/** A compiled primitive-expression state. */
export interface PrimitiveState {
  /**
   * ρ and p at X (velocity written to vel). Throws a one-line UserError when ρ ≤ 0 or p ≤ 0,
   * naming the point, and the element when given.
   */
  at(X: Float64Array, xo: number, vel: Float64Array, element?: number): { rho: number; p: number };
  /** The velocity when every component is a constant, else null. */
  constantVelocity: number[] | null;
  fields: ScalarField[];
}

export function compilePrimitiveState(
  exprs: PrimitiveExpressions, d: number, label: string, extent: readonly number[], role: string,
): PrimitiveState {
  const names = primitiveNames(d);
  const fields = names.map((n) => compileScalarField(exprs[n]!, `${label}: ${n}`, extent));
  const rho = fields[0]!, p = fields[d + 1]!;
  const vel = fields.slice(1, d + 1);
  const fmt = (v: number): string => (Number.isInteger(v) ? String(v) : v.toPrecision(4));
  const coords = d === 1 ? 'x, t' : d === 2 ? 'x, y, t' : 'x, y, z, t';
  return {
    fields,
    constantVelocity: vel.every((f) => f.constant) ? vel.map((f) => f.value) : null,
    at(X, xo, out, element) {
      const x = X[xo]!, y = d > 1 ? X[xo + 1]! : 0, z = d > 2 ? X[xo + 2]! : 0, t = X[xo + d]!;
      const r = rho.evaluate(x, y, z, t);
      const pr = p.evaluate(x, y, z, t);
      for (let k = 0; k < d; k++) out[k] = vel[k]!.evaluate(x, y, z, t);
      if (!(r > 0) || !(pr > 0)) {
        const point = [x, y, z].slice(0, d).concat([t]).map(fmt).join(', ');
        const where = element !== undefined ? `, a quadrature point of element ${element}` : '';
        const what = !(r > 0) ? `density ${fmt(r)}` : `pressure ${fmt(pr)}`;
        throw new UserError(`${label}: ${what} ≤ 0 at (${coords}) = (${point})${where} (${role}); density and pressure must be > 0`);
      }
      return { rho: r, p: pr };
    },
  };
}

/** Visit the lattice points of sampleField over Ω×[0, T] (5 per space axis, 3 times). */
function forLattice(d: number, extent: readonly number[], finalTime: number, times: number, visit: (X: Float64Array) => void): void {
  const n = 5;
  const X = new Float64Array(d + 1);
  const per = [n, d > 1 ? n : 1, d > 2 ? n : 1];
  for (let it = 0; it < times; it++) {
    X[d] = times > 1 ? (finalTime * it) / (times - 1) : 0;
    for (let iz = 0; iz < per[2]!; iz++) for (let iy = 0; iy < per[1]!; iy++) for (let ix = 0; ix < per[0]!; ix++) {
      X[0] = (extent[0]! * ix) / (n - 1);
      if (d > 1) X[1] = (extent[1]! * iy) / (n - 1);
      if (d > 2) X[2] = (extent[2]! * iz) / (n - 1);
      visit(X);
    }
  }
}

/** The largest |u| + c on the lattice at t = 0: the CFL wave-speed bound (sampled, as for Burgers' expressions). */
export function sampledWaveSpeed(state: PrimitiveState, d: number, extent: readonly number[], gamma: number): number {
  const vel = new Float64Array(d);
  let maxSpeed = 0;
  forLattice(d, extent, 0, 1, (X) => {
    const s = state.at(X, 0, vel);
    let q2 = 0;
    for (let k = 0; k < d; k++) q2 += vel[k]! * vel[k]!;
    maxSpeed = Math.max(maxSpeed, Math.sqrt(q2) + Math.sqrt((gamma * s.p) / s.rho));
  });
  return maxSpeed;
}

/**
 * Evaluate a compiled state on the lattice over Ω×[0, T], so an expression that is non-finite, or a
 * density or pressure ≤ 0, at an obvious point is refused before any work.
 */
export function checkPrimitiveState(state: PrimitiveState, d: number, extent: readonly number[], finalTime: number): void {
  for (const f of state.fields) sampleField(f, extent, finalTime);
  const vel = new Float64Array(d);
  forLattice(d, extent, finalTime, 3, (X) => { state.at(X, 0, vel); });
}
