import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/**
 * The sweep's default matrix cache is a per-user folder (src/run/cache-dir.ts); tests point it at
 * a fresh temporary folder instead (SLABBENCH_CACHE_DIR, inherited by the test processes) and
 * remove it at the end.
 */
export default function setup(): () => void {
  const dir = mkdtempSync(join(tmpdir(), 'slabbench-test-cache-'));
  process.env.SLABBENCH_CACHE_DIR = dir;
  return () => rmSync(dir, { recursive: true, force: true });
}
