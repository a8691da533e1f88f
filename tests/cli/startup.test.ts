import { readFileSync, existsSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';

const SRC = fileURLToPath(new URL('../../src/', import.meta.url));
const ROOT = fileURLToPath(new URL('../../', import.meta.url));

/** Value imports (not `import type`, not `export type`) of one source file, as written. */
function valueImports(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  const out: string[] = [];
  const re = /^\s*(import|export)\s+(type\s+)?([^'";]*?)\s*from\s*'([^']+)'/gms;
  for (const m of text.matchAll(re)) {
    if (m[2]) continue; // import type / export type
    const names = m[3];
    // `import { type A, type B } from` imports nothing at run time
    if (/^\{[^}]*\}$/.test(names.trim()) && names.replace(/[{}\s]/g, '').split(',').filter(Boolean).every((n) => n.startsWith('type'))) continue;
    out.push(m[4]);
  }
  for (const m of text.matchAll(/^\s*import\s+'([^']+)'/gm)) out.push(m[1]);
  return out;
}

/** Every package reached through static value imports from a source file. */
function reachablePackages(entry: string): Set<string> {
  const seen = new Set<string>();
  const packages = new Set<string>();
  const stack = [entry];
  while (stack.length > 0) {
    const file = stack.pop()!;
    if (seen.has(file)) continue;
    seen.add(file);
    for (const spec of valueImports(file)) {
      if (spec.startsWith('.')) {
        const ts = resolve(dirname(file), spec.replace(/\.js$/, '.ts'));
        if (existsSync(ts)) stack.push(ts);
      } else if (!spec.startsWith('node:')) {
        packages.add(spec.startsWith('@') ? spec.split('/').slice(0, 2).join('/') : spec.split('/')[0]);
      }
    }
  }
  return packages;
}

describe('start-up: the expression library is loaded only when an expression is parsed', () => {
  it('no static value import chain leads from the CLI entry or the command list to mathjs', () => {
    const pkgs = reachablePackages(join(SRC, 'cli/main.ts'));
    // the walk itself works: commander is imported by main.ts
    expect(pkgs.has('commander')).toBe(true);
    expect(pkgs.has('mathjs')).toBe(false);
    // every command (what --help and each command load): d3 and ml-matrix are reached, mathjs is not
    const all = reachablePackages(join(SRC, 'cli/commands.ts'));
    expect(all.has('d3-scale')).toBe(true);
    expect(all.has('ml-matrix')).toBe(true);
    expect(all.has('mathjs')).toBe(false);
  });

  it('--version answers without loading the commands', async () => {
    const { runCli } = await import('./cli-helpers.js');
    const { VERSION } = await import('../../src/version.js');
    const r = await runCli(['--version']);
    expect(r).toEqual({ code: 0, stdout: `${VERSION}\n`, stderr: '' });
    expect(reachablePackages(join(SRC, 'cli/main.ts')).has('d3-scale')).toBe(false);
  });

  it('the import walk does see a static import when there is one (physics → expressions → types only)', () => {
    // expressions.ts imports mathjs for types only; a value import would show up here.
    const pkgs = reachablePackages(join(SRC, 'dg/expressions.ts'));
    expect(pkgs.has('mathjs')).toBe(false);
    expect(valueImports(join(SRC, 'dg/physics/advection.ts'))).toContain('../expressions.js');
  });

  it('in a fresh process, loading the CLI leaves mathjs unloaded; compiling an expression loads it', () => {
    const script = `
      const { createRequire } = await import('node:module');
      const req = createRequire(${JSON.stringify(join(ROOT, 'package.json'))});
      const loaded = () => Object.keys(req.cache).some((k) => k.includes('/node_modules/mathjs/'));
      await import(${JSON.stringify(join(SRC, 'cli/main.ts'))});
      await import(${JSON.stringify(join(SRC, 'cli/commands.ts'))});
      const before = loaded();
      const { compileScalarField } = await import(${JSON.stringify(join(SRC, 'dg/expressions.ts'))});
      const numeric = compileScalarField(2, 'f', [1]);
      const afterNumber = loaded();
      const f = compileScalarField('sin(pi*x)', 'f', [1]);
      console.log(JSON.stringify({ before, afterNumber, after: loaded(), v: f.evaluate(0.5, 0, 0, 0), n: numeric.value }));
    `;
    const r = spawnSync(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', script], { cwd: ROOT, encoding: 'utf8' });
    expect(r.stderr).toBe('');
    const out = JSON.parse(r.stdout.trim());
    expect(out).toEqual({ before: false, afterNumber: false, after: true, v: 1, n: 2 });
  }, 30_000);
});
