/**
 * Forecast files: what `slabbench scale --json FILE` writes (schema slabbench-scale/1), read back
 * for the report. Convention: `report` shows every `*.scale.json` in the folder holding the
 * results document (README "Scaling forecast").
 */
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { readJsonFile } from '../util/json-file.js';
import { fileError } from '../util/errors.js';
import type { ScaleReport } from './scale.js';

export const SCALE_FILE_SUFFIX = '.scale.json';

/** The forecast files of a folder, by name. */
export function scaleFilesIn(dir: string): string[] {
  let names: string[];
  try { names = readdirSync(dir); } catch { return []; }
  return names.filter((n) => n.endsWith(SCALE_FILE_SUFFIX)).sort().map((n) => join(dir, n));
}

function shown(x: unknown): string {
  return x === undefined ? 'nothing' : JSON.stringify(x)?.slice(0, 40) ?? String(x);
}

/**
 * Read a forecast file and check what the report draws: schema, recipe, machine, partition and,
 * per row, parts (increasing positive integers), iterations, converged and the modelled seconds.
 * One-line errors name the file and the field.
 */
export function readScaleReport(path: string): ScaleReport {
  const doc = readJsonFile(path, 'forecast file');
  const bad = (field: string, what: string, found: unknown): never => {
    throw fileError(path, undefined, `${field}: expected ${what}, found ${shown(found)}`);
  };
  if (typeof doc !== 'object' || doc === null || Array.isArray(doc)) bad('(top level)', 'an object written by slabbench scale --json', doc);
  const o = doc as Record<string, unknown>;
  if (o.schema !== 'slabbench-scale/1') bad('schema', '"slabbench-scale/1"', o.schema);
  if (typeof o.recipe !== 'string') bad('recipe', 'the recipe name (a string)', o.recipe);
  if (o.matrix !== undefined && typeof o.matrix !== 'string') bad('matrix', 'a file name', o.matrix);
  const m = o.machine as Record<string, unknown> | undefined;
  for (const k of ['bandwidth', 'latency', 'networkBandwidth']) {
    const v = m?.[k];
    if (!(typeof v === 'number' && v > 0)) bad(`machine.${k}`, 'a number > 0', v);
  }
  const p = o.partition as Record<string, unknown> | undefined;
  if (typeof p?.method !== 'string' || typeof p.slabs !== 'string') bad('partition', '{ "method", "slabs" }', o.partition);
  if (!Array.isArray(o.rows)) bad('rows', 'an array (one row per P)', o.rows);
  const rows = o.rows as Record<string, unknown>[];
  rows.forEach((r, i) => {
    const at = `rows[${i}]`;
    if (typeof r !== 'object' || r === null) bad(at, 'an object', r);
    const P = r.parts;
    if (!(typeof P === 'number' && Number.isInteger(P) && P >= 1)) bad(`${at}.parts`, 'a positive integer', P);
    if (i > 0 && (P as number) <= (rows[i - 1].parts as number)) bad(`${at}.parts`, `more than rows[${i - 1}].parts = ${String(rows[i - 1].parts)}`, P);
    if (!(typeof r.iterations === 'number' && Number.isInteger(r.iterations) && r.iterations >= 0)) bad(`${at}.iterations`, 'a non-negative integer', r.iterations);
    if (typeof r.converged !== 'boolean') bad(`${at}.converged`, 'true or false', r.converged);
    const t = r.modelled as Record<string, unknown> | undefined;
    for (const k of ['compute', 'perIteration']) {
      const v = t?.[k];
      if (!(typeof v === 'number' && v >= 0)) bad(`${at}.modelled.${k}`, 'seconds ≥ 0', v);
    }
  });
  return o as unknown as ScaleReport;
}
