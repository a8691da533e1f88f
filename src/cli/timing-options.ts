/** Option parsers of the timing protocol, shared by `sweep` and `solve` (kept apart so `solve` does not load the sweep). */
import { optionError } from '../util/errors.js';
import { MAX_REPEATS } from '../run/suite.js';

/** --repeats: an integer from 1 to MAX_REPEATS. */
export function parseRepeats(v: string): number {
  const n = Number(v);
  if (!/^\s*\d+\s*$/.test(v) || !Number.isInteger(n) || n < 1 || n > MAX_REPEATS) throw optionError('--repeats', `expected an integer from 1 to ${MAX_REPEATS}, got "${v}"`);
  return n;
}
