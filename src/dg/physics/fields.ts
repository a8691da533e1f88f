import { UserError } from '../../util/errors.js';

/** Validation helpers for physics parameter fields; every error is one line naming the field. */

export function readNumber(
  raw: Record<string, unknown>, key: string, label: (f: string) => string, dflt: number,
  check?: { min?: number; minExclusive?: boolean; max?: number },
): number {
  const v = raw[key];
  if (v === undefined) return dflt;
  if (typeof v !== 'number' || !Number.isFinite(v)) throw new UserError(`${label(key)}: expected a finite number, got ${show(v)}`);
  if (check?.min !== undefined) {
    if (check.minExclusive ? v <= check.min : v < check.min) {
      throw new UserError(`${label(key)}: expected a number ${check.minExclusive ? '>' : '≥'} ${check.min}, got ${v}`);
    }
  }
  if (check?.max !== undefined && v > check.max) throw new UserError(`${label(key)}: expected a number ≤ ${check.max}, got ${v}`);
  return v;
}

export function readBoolean(raw: Record<string, unknown>, key: string, label: (f: string) => string, dflt: boolean): boolean {
  const v = raw[key];
  if (v === undefined) return dflt;
  if (typeof v !== 'boolean') throw new UserError(`${label(key)}: expected true or false, got ${show(v)}`);
  return v;
}

/** A vector of `n` finite numbers. */
export function readVector(
  raw: Record<string, unknown>, key: string, label: (f: string) => string, n: number, dflt: number[],
): number[] {
  const v = raw[key];
  if (v === undefined) return dflt.slice(0, n);
  if (!Array.isArray(v) || v.length !== n || !v.every((c) => typeof c === 'number' && Number.isFinite(c))) {
    throw new UserError(`${label(key)}: expected ${n} finite number${n > 1 ? 's' : ''} (one per space axis), got ${show(v)}`);
  }
  return v as number[];
}

/** A number or an expression text. */
export function readExpression(
  raw: Record<string, unknown>, key: string, label: (f: string) => string, dflt: string | number,
): string | number {
  const v = raw[key];
  if (v === undefined) return dflt;
  if (typeof v === 'number' && Number.isFinite(v)) return v;
  if (typeof v === 'string' && v.trim() !== '') return v;
  throw new UserError(`${label(key)}: expected a number or an expression in x, y, z, t, got ${show(v)}`);
}

/** n entries, each a number or an expression text. */
export function readExpressionVector(
  raw: Record<string, unknown>, key: string, label: (f: string) => string, n: number, dflt: (string | number)[],
): (string | number)[] {
  const v = raw[key];
  if (v === undefined) return dflt.slice(0, n);
  if (!Array.isArray(v) || v.length !== n) {
    throw new UserError(`${label(key)}: expected ${n} entr${n > 1 ? 'ies' : 'y'} (one per space axis, numbers or expressions), got ${show(v)}`);
  }
  return v.map((c, i) => readExpression({ [`${key}[${i}]`]: c }, `${key}[${i}]`, label, 0));
}

export function show(v: unknown): string {
  const s = JSON.stringify(v);
  if (s === undefined) return String(v);
  return s.length > 60 ? `${s.slice(0, 57)}...` : s;
}

/** Periodic wrap into [0, L). */
export function wrap(v: number, length: number): number {
  return v - length * Math.floor(v / length);
}

/** Product of sines Π sin(2π x_k / L_k): the default smooth periodic initial condition. */
export function defaultSineProduct(dim: number): string {
  const names = ['x', 'y', 'z'];
  const lengths = ['Lx', 'Ly', 'Lz'];
  const parts: string[] = [];
  for (let k = 0; k < dim; k++) parts.push(`sin(2*pi*${names[k]}/${lengths[k]})`);
  return parts.join(' * ');
}
