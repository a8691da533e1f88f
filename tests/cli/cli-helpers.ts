import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { main } from '../../src/cli/main.js';

/**
 * Run the CLI in this process, capturing stdout and stderr. process.exitCode is cleared before and
 * restored after, so an exit code set by one command cannot leak into the next run or the worker.
 */
export async function runCli(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '';
  let stderr = '';
  const out = process.stdout.write.bind(process.stdout);
  const err = process.stderr.write.bind(process.stderr);
  process.stdout.write = ((chunk: string | Uint8Array) => { stdout += String(chunk); return true; }) as typeof process.stdout.write;
  process.stderr.write = ((chunk: string | Uint8Array) => { stderr += String(chunk); return true; }) as typeof process.stderr.write;
  const savedExitCode = process.exitCode;
  process.exitCode = undefined;
  try {
    const code = await main(args);
    return { code, stdout, stderr };
  } finally {
    process.stdout.write = out;
    process.stderr.write = err;
    process.exitCode = savedExitCode;
  }
}

/** runCli with the shorter field names some test files use: { code, out, err }. */
export async function runCliShort(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const { code, stdout, stderr } = await runCli(args);
  return { code, out: stdout, err: stderr };
}

const CI_DIR = fileURLToPath(new URL('../../matrices/ci/', import.meta.url));

/** A suite over the committed CI matrices (absolute paths), with the given recipes. */
export function ciSuite(dir: string, name: string, recipes: object[], matrices = ['ci-duct', 'ci-corridor']): string {
  const p = join(dir, name);
  writeFileSync(p, JSON.stringify({
    schema: 'slabbench-suite/1',
    description: 'test suite over the committed CI matrices',
    matrices: matrices.map((m) => ({ name: m, file: join(CI_DIR, `${m}.mtx.gz`), rhs: join(CI_DIR, `${m}.rhs.mtx`) })),
    recipes,
  }));
  return p;
}
