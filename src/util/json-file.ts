import { readFileSync } from 'node:fs';
import { UserError } from './errors.js';

/** Read and parse a JSON file; one-line UserError naming the file when it is missing or not JSON. */
export function readJsonFile(path: string, what: string): unknown {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UserError(`${path}: ${code === 'ENOENT' ? `no such ${what}` : `cannot read ${what} (${code ?? String(e)})`}`);
  }
  try {
    return JSON.parse(text);
  } catch (e) {
    throw new UserError(`${path}: not valid JSON (${(e as Error).message})`);
  }
}
