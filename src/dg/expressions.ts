import { createRequire } from 'node:module';
import type { MathNode, EvalFunction } from 'mathjs';
import { UserError } from '../util/errors.js';

/**
 * mathjs takes 0.7–0.9 s to load, longer than most commands need for everything else, so it is
 * loaded on the first expression that is not a plain number (a synchronous `require` of its
 * CommonJS build keeps `compileScalarField` synchronous). Only types are imported statically.
 */
let mathParse: ((text: string) => MathNode) | undefined;
function parseExpression(text: string): MathNode {
  if (mathParse === undefined) {
    const mathjs = createRequire(import.meta.url)('mathjs') as typeof import('mathjs');
    mathParse = mathjs.parse;
  }
  return mathParse(text);
}

/**
 * A scalar field f(x, y, z, t) given by the user as a mathjs expression (or a number).
 * Variables: x, y, z, t and the domain lengths Lx, Ly, Lz; mathjs constants (pi, e) and
 * functions (sin, exp, tanh, …) are available.
 */
export interface ScalarField {
  /** The text as given (numbers are kept as their decimal text). */
  readonly source: string;
  /** True when the expression uses none of x, y, z, t: `value` holds it. */
  readonly constant: boolean;
  /** Which of x, y, z, t the expression uses. */
  readonly variables: ReadonlySet<string>;
  readonly value: number;
  /** Evaluate at a space-time point (x, y, z padded with 0 below 3D). Throws UserError on a non-finite result. */
  evaluate(x: number, y: number, z: number, t: number): number;
}

const VARIABLES = new Set(['x', 'y', 'z', 't']);
const DOMAIN_NAMES = ['Lx', 'Ly', 'Lz'];

/**
 * Compile an expression once; `label` names the option or field in every error message.
 * `extent` supplies Lx, Ly, Lz (missing axes get 1).
 */
export function compileScalarField(text: string | number, label: string, extent: readonly number[]): ScalarField {
  if (typeof text === 'number') {
    if (!Number.isFinite(text)) throw new UserError(`${label}: expected a finite number, got ${text}`);
    return constantField(text, String(text));
  }
  if (typeof text !== 'string' || text.trim() === '') {
    throw new UserError(`${label}: expected a number or an expression in x, y, z, t`);
  }
  let node: MathNode;
  try {
    node = parseExpression(text);
  } catch (e) {
    throw new UserError(`${label}: expression '${text}' does not parse: ${(e as Error).message}`);
  }
  const unknown: string[] = [];
  const used = new Set<string>();
  node.traverse((n: MathNode, _path: string, parent: MathNode | null) => {
    if ((n as { isSymbolNode?: boolean }).isSymbolNode) {
      const name = (n as unknown as { name: string }).name;
      // A symbol that is the callee of a function call is checked by mathjs itself on evaluation.
      const isCallee = parent !== null && (parent as { isFunctionNode?: boolean }).isFunctionNode
        && (parent as unknown as { fn: MathNode }).fn === n;
      if (VARIABLES.has(name)) used.add(name);
      else if (!isCallee && !DOMAIN_NAMES.includes(name) && !isMathConstant(name)) unknown.push(name);
    }
  });
  if (unknown.length > 0) {
    throw new UserError(`${label}: expression '${text}' uses unknown name '${unknown[0]}' (allowed: x, y, z, t, Lx, Ly, Lz, pi, e)`);
  }
  let code: EvalFunction;
  try {
    code = node.compile();
  } catch (e) {
    throw new UserError(`${label}: expression '${text}' does not compile: ${(e as Error).message}`);
  }
  const scope: Record<string, number> = {
    x: 0, y: 0, z: 0, t: 0,
    Lx: extent[0] ?? 1, Ly: extent[1] ?? 1, Lz: extent[2] ?? 1,
  };
  const evaluate = (x: number, y: number, z: number, t: number): number => {
    scope.x = x; scope.y = y; scope.z = z; scope.t = t;
    let v: unknown;
    try {
      v = code.evaluate(scope);
    } catch (e) {
      throw new UserError(`${label}: expression '${text}' fails to evaluate: ${(e as Error).message}`);
    }
    if (typeof v !== 'number' || !Number.isFinite(v)) {
      const shown = typeof v === 'number' ? String(v) : typeof v === 'object' && v !== null ? 'a non-real value' : String(v);
      throw new UserError(`${label}: expression '${text}' evaluates to ${shown} at (x, y, z, t) = (${fmt(x)}, ${fmt(y)}, ${fmt(z)}, ${fmt(t)})`);
    }
    return v;
  };
  if (used.size === 0) {
    const value = evaluate(0, 0, 0, 0);
    return constantField(value, text);
  }
  return { source: text, constant: false, variables: used, value: NaN, evaluate };
}

function constantField(value: number, source: string): ScalarField {
  return { source, constant: true, variables: new Set<string>(), value, evaluate: () => value };
}

function isMathConstant(name: string): boolean {
  return ['pi', 'e', 'PI', 'E', 'tau', 'phi', 'LN2', 'LN10', 'LOG2E', 'LOG10E', 'SQRT2', 'SQRT1_2'].includes(name);
}

function fmt(v: number): string {
  return Number.isInteger(v) ? String(v) : v.toPrecision(4);
}

/**
 * Evaluate a field on a small grid of sample points over the space-time box (corners, centre and
 * a 5-point lattice per axis), so that an expression that is NaN, infinite or complex somewhere
 * obvious is rejected before any work. Returns the largest |value| seen.
 */
export function sampleField(field: ScalarField, extent: readonly number[], finalTime: number): number {
  if (field.constant) return Math.abs(field.value);
  const d = extent.length;
  const n = 5;
  const nPerAxis = [n, d > 1 ? n : 1, d > 2 ? n : 1, 3];
  let maxAbs = 0;
  for (let it = 0; it < nPerAxis[3]; it++) {
    const t = (finalTime * it) / (nPerAxis[3] - 1);
    for (let iz = 0; iz < nPerAxis[2]; iz++) {
      const z = d > 2 ? (extent[2] * iz) / (n - 1) : 0;
      for (let iy = 0; iy < nPerAxis[1]; iy++) {
        const y = d > 1 ? (extent[1] * iy) / (n - 1) : 0;
        for (let ix = 0; ix < nPerAxis[0]; ix++) {
          const x = (extent[0] * ix) / (n - 1);
          maxAbs = Math.max(maxAbs, Math.abs(field.evaluate(x, y, z, t)));
        }
      }
    }
  }
  return maxAbs;
}
