/**
 * Parameter grids in suite files: a recipe whose top-level field holds a list, e.g.
 * `{ "krylov": "gmres", "preconditioner": "block-ilu0", "restart": [10, 30, 60] }`, stands for
 * one recipe per value (the Cartesian product when several fields hold lists). Each expansion is
 * named `BASE.FIELD-VALUE…` after the listed fields, in the order they appear, where BASE is the
 * recipe's name (or the recipe parser's default name when it has none). Lists inside an `inner`
 * recipe are not expanded (a list there is refused by the recipe parser).
 */
import { UserError } from '../util/errors.js';

/** Largest number of recipes one grid may expand to (checked before expanding). */
export const MAX_GRID_RECIPES = 1000;

export interface GridPoint {
  /** The recipe object with every list replaced by one of its values. */
  raw: Record<string, unknown>;
  /** Listed fields and the value this point takes, in the order they appear. */
  values: [string, string | number | boolean][];
}

/** Expand one raw recipe object; `at` names it in messages (e.g. "suite.json: recipes[2]"). */
export function expandRecipeGrid(raw: Record<string, unknown>, at: string): GridPoint[] {
  const listed: [string, unknown[]][] = [];
  for (const [key, value] of Object.entries(raw)) {
    if (!Array.isArray(value)) continue;
    if (key === 'name') throw new UserError(`${at}.name: expected a string, got a list (a grid lists values of recipe fields, not names)`);
    if (value.length === 0) throw new UserError(`${at}.${key}: expected a value or a non-empty list of values, got []`);
    const seen = new Set<string>();
    value.forEach((v, j) => {
      if (v === null || (typeof v !== 'number' && typeof v !== 'string' && typeof v !== 'boolean')) {
        throw new UserError(`${at}.${key}[${j}]: expected a number, string or boolean in a grid list, got ${JSON.stringify(v)}`);
      }
      const k = JSON.stringify(v);
      if (seen.has(k)) throw new UserError(`${at}.${key}[${j}]: ${k} is listed twice`);
      seen.add(k);
    });
    listed.push([key, value]);
  }
  if (listed.length === 0) return [{ raw, values: [] }];
  const total = listed.reduce((n, [, v]) => n * v.length, 1);
  if (total > MAX_GRID_RECIPES) {
    throw new UserError(`${at}: the grid over ${listed.map(([k, v]) => `${k} (${v.length})`).join(' × ')} expands to ${total} recipes, more than ${MAX_GRID_RECIPES}`);
  }
  const points: GridPoint[] = [];
  const idx = new Array<number>(listed.length).fill(0);
  for (let p = 0; p < total; p++) {
    const obj: Record<string, unknown> = { ...raw };
    const values: GridPoint['values'] = [];
    listed.forEach(([key, vals], d) => {
      const v = vals[idx[d]!] as string | number | boolean;
      obj[key] = v;
      values.push([key, v]);
    });
    points.push({ raw: obj, values });
    // odometer, last listed field fastest
    for (let d = listed.length - 1; d >= 0; d--) {
      idx[d]!++;
      if (idx[d]! < listed[d]![1].length) break;
      idx[d] = 0;
    }
  }
  return points;
}

/** `BASE.FIELD-VALUE…` for a grid point (BASE alone for a recipe without lists). */
export function gridRecipeName(base: string, values: GridPoint['values']): string {
  return [base, ...values.map(([k, v]) => `${k}-${String(v)}`)].join('.');
}
