import { readFileSync } from 'node:fs';

/** Package version, read once from package.json (works from src/ and dist/). */
export const VERSION: string = (() => {
  for (const rel of ['../package.json', '../../package.json']) {
    try {
      const pkg = JSON.parse(readFileSync(new URL(rel, import.meta.url), 'utf8')) as { name?: string; version?: string };
      if (pkg.name === 'slabbench' && pkg.version) return pkg.version;
    } catch { /* try the next */ }
  }
  return '0.0.0';
})();
