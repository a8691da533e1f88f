// Runs one command's register function in a fresh commander program, the way src/cli/main.ts
// does (user errors become one line and an exit code), capturing stdout and stderr.
import { Command, CommanderError } from 'commander';
import { UserError, EXIT } from '../../src/util/errors.js';

export async function runCommand(register: (p: Command) => void, argv: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '', stderr = '';
  const program = new Command().name('slabbench').exitOverride()
    .configureOutput({ writeOut: (s) => { stdout += s; }, writeErr: (s) => { stderr += s; } });
  register(program);
  program.commands.forEach((c) => c.exitOverride().configureOutput({ writeOut: (s) => { stdout += s; }, writeErr: (s) => { stderr += s; } }));
  const origOut = process.stdout.write.bind(process.stdout);
  const origErr = process.stderr.write.bind(process.stderr);
  (process.stdout as { write: unknown }).write = (s: string | Uint8Array): boolean => { stdout += String(s); return true; };
  (process.stderr as { write: unknown }).write = (s: string | Uint8Array): boolean => { stderr += String(s); return true; };
  let code: number = EXIT.ok;
  try {
    await program.parseAsync(argv, { from: 'user' });
  } catch (e) {
    if (e instanceof CommanderError) code = e.code === 'commander.helpDisplayed' || e.code === 'commander.help' ? EXIT.ok : EXIT.badInput;
    else if (e instanceof UserError) { stderr += `slabbench: ${e.message}\n`; code = e.exitCode; } else throw e;
  } finally {
    process.stdout.write = origOut;
    process.stderr.write = origErr;
  }
  return { code, stdout, stderr };
}
