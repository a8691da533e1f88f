import { UserError } from '../util/errors.js';
import { parseGeneratorParams, type GeneratorParams } from './generate.js';
import { readJsonFile } from '../util/json-file.js';

/** A generator case of a suite file (`matrices[i].generate`), validated. */
export interface SuiteCase {
  name: string;
  note?: string;
  index: number;
  params: GeneratorParams;
}

/**
 * Read the generator cases of a suite file (schema slabbench-suite/1). Only the `matrices`
 * entries with a `generate` object are read here (file entries and recipes belong to the sweep);
 * entries that are sequences (`"sequence"` beside `generate`) are left to the sweep, which builds
 * them into its cache (`generate --sequence` writes one as files). Every case is validated before any is built.
 */
export function readSuiteCases(path: string): SuiteCase[] {
  const obj = readJsonFile(path, 'suite file');
  if (typeof obj !== 'object' || obj === null || Array.isArray(obj)) throw new UserError(`${path}: expected a JSON object`);
  const top = obj as Record<string, unknown>;
  if (top.schema !== 'slabbench-suite/1') throw new UserError(`${path}: schema: expected "slabbench-suite/1", got ${JSON.stringify(top.schema)}`);
  if (!Array.isArray(top.matrices)) throw new UserError(`${path}: matrices: expected an array`);
  const cases: SuiteCase[] = [];
  (top.matrices as unknown[]).forEach((m, i) => {
    if (typeof m !== 'object' || m === null || !('generate' in m) || 'sequence' in m) return;
    const entry = m as Record<string, unknown>;
    if (typeof entry.name !== 'string') throw new UserError(`${path}: matrices[${i}].name: expected a string`);
    const params = parseGeneratorParams(entry.generate, `${path}: matrices[${i}].generate`);
    const c: SuiteCase = { name: entry.name, index: i, params };
    if (typeof entry.note === 'string') c.note = entry.note;
    cases.push(c);
  });
  return cases;
}
