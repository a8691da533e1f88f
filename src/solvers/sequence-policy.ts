/**
 * What a recipe does across the systems of a sequence (suite matrices that are sequences, see
 * src/run/sequence.ts): when it rebuilds its preconditioner and which initial guess it takes.
 *
 *   "reuse": "rebuild"                               set up a new preconditioner for every system (default)
 *   "reuse": "fixed",     "reuseSystems": k          one set-up serves k consecutive systems (lagged preconditioner)
 *   "reuse": "on-growth", "refreshFactor": f         keep it until a solve needs more than f × the iterations of
 *                                                    the first solve after the last rebuild; rebuild for the next system
 *   "initialGuess": "zero" | "previous"              x₀ = 0 (default) or the previous system's computed solution
 *
 * Lagging the preconditioner of a Newton sequence and refreshing it when the iteration count grows
 * is common practice (e.g. Knoll & Keyes, J. Comput. Phys. 193, 2004, §3.1, on lagged
 * preconditioners in Jacobian-free Newton–Krylov); the growth factor rule here is ours.
 */
import { UserError } from '../util/errors.js';

export type ReusePolicy = 'rebuild' | 'fixed' | 'on-growth';
export const REUSE_POLICIES: readonly ReusePolicy[] = ['rebuild', 'fixed', 'on-growth'];
export type InitialGuess = 'zero' | 'previous';
export const INITIAL_GUESSES: readonly InitialGuess[] = ['zero', 'previous'];

/** Recipe fields of the sequence policy (top-level in a suite recipe). */
export const SEQUENCE_FIELDS = ['reuse', 'reuseSystems', 'refreshFactor', 'initialGuess'] as const;
export type SequenceField = (typeof SEQUENCE_FIELDS)[number];

export interface SequencePolicy {
  reuse: ReusePolicy;
  /** fixed: systems one set-up serves (≥ 1; 1 = rebuild every system). */
  reuseSystems?: number;
  /** on-growth: rebuild after a solve that took more than refreshFactor × the iterations right after the last rebuild (> 1). */
  refreshFactor?: number;
  initialGuess: InitialGuess;
}

export const DEFAULT_SEQUENCE_POLICY: Readonly<SequencePolicy> = Object.freeze({ reuse: 'rebuild', initialGuess: 'zero' });

/**
 * Read the sequence fields of a raw recipe object (`where` names it, e.g. "suite.json: recipes[2]").
 * Returns undefined when none is given. A field that has no effect is refused: reuseSystems
 * without reuse "fixed", refreshFactor without "on-growth", and any reuse other than rebuild
 * with preconditioner none (nothing is set up, so nothing can be reused).
 */
export function parseSequencePolicy(src: Record<string, unknown>, where: string, preconditioner: string): Partial<SequencePolicy> | undefined {
  const given = SEQUENCE_FIELDS.filter((k) => src[k] !== undefined);
  if (given.length === 0) return undefined;
  const out: Partial<SequencePolicy> = {};
  const shown = (v: unknown): string => (typeof v === 'string' ? JSON.stringify(v) : String(v));
  if (src.reuse !== undefined) {
    if (typeof src.reuse !== 'string' || !(REUSE_POLICIES as readonly string[]).includes(src.reuse)) {
      throw new UserError(`${where}.reuse: expected one of ${REUSE_POLICIES.join(', ')}, got ${shown(src.reuse)}`);
    }
    out.reuse = src.reuse as ReusePolicy;
  }
  const reuse = out.reuse ?? 'rebuild';
  if (src.reuseSystems !== undefined) {
    const k = src.reuseSystems;
    if (typeof k !== 'number' || !Number.isInteger(k) || k < 1 || k > 1e6) throw new UserError(`${where}.reuseSystems: expected an integer from 1 to 1000000, got ${shown(k)}`);
    if (reuse !== 'fixed') throw new UserError(`${where}.reuseSystems: has no effect with reuse ${reuse} (read only with reuse "fixed"); remove it`);
    out.reuseSystems = k;
  } else if (reuse === 'fixed') {
    throw new UserError(`${where}.reuseSystems: missing; reuse "fixed" needs the number of systems one set-up serves, e.g. "reuseSystems": 3`);
  }
  if (src.refreshFactor !== undefined) {
    const f = src.refreshFactor;
    if (typeof f !== 'number' || !Number.isFinite(f) || !(f > 1)) throw new UserError(`${where}.refreshFactor: expected a finite number > 1, got ${shown(f)}`);
    if (reuse !== 'on-growth') throw new UserError(`${where}.refreshFactor: has no effect with reuse ${reuse} (read only with reuse "on-growth"); remove it`);
    out.refreshFactor = f;
  } else if (reuse === 'on-growth') {
    throw new UserError(`${where}.refreshFactor: missing; reuse "on-growth" needs the growth factor that triggers a rebuild, e.g. "refreshFactor": 1.5`);
  }
  if (reuse !== 'rebuild' && preconditioner === 'none') {
    throw new UserError(`${where}.reuse: has no effect with preconditioner none (nothing is set up to reuse); remove it`);
  }
  if (src.initialGuess !== undefined) {
    if (typeof src.initialGuess !== 'string' || !(INITIAL_GUESSES as readonly string[]).includes(src.initialGuess)) {
      throw new UserError(`${where}.initialGuess: expected one of ${INITIAL_GUESSES.join(', ')}, got ${shown(src.initialGuess)}`);
    }
    out.initialGuess = src.initialGuess as InitialGuess;
  }
  return out;
}

/** The full policy of a recipe (its flat fields, defaults filled in). */
export function sequencePolicyOf(r: Partial<SequencePolicy>): SequencePolicy {
  const out: SequencePolicy = { reuse: r.reuse ?? 'rebuild', initialGuess: r.initialGuess ?? 'zero' };
  if (r.reuseSystems !== undefined) out.reuseSystems = r.reuseSystems;
  if (r.refreshFactor !== undefined) out.refreshFactor = r.refreshFactor;
  return out;
}

/**
 * The rebuild decision, one system at a time. `start()` before the first system; `needsRebuild()`
 * before each system; `solved(iterations, rebuilt)` after it.
 */
export interface RebuildSchedule {
  needsRebuild(): boolean;
  solved(iterations: number, rebuilt: boolean): void;
}

export function rebuildSchedule(policy: SequencePolicy): RebuildSchedule {
  let sinceBuild = Infinity; // systems solved with the current set-up (none yet)
  let baseIterations = 0; // iterations of the first solve after the last rebuild
  let grown = false;
  return {
    needsRebuild() {
      if (sinceBuild === Infinity) return true;
      if (policy.reuse === 'rebuild') return true;
      if (policy.reuse === 'fixed') return sinceBuild >= (policy.reuseSystems ?? 1);
      return grown;
    },
    solved(iterations, rebuilt) {
      if (rebuilt) {
        sinceBuild = 0;
        baseIterations = iterations;
        grown = false;
      } else if (policy.reuse === 'on-growth') {
        grown = iterations > (policy.refreshFactor ?? Infinity) * baseIterations;
      }
      sinceBuild++;
    },
  };
}
