import { Command, CommanderError } from 'commander';
import { UserError, EXIT } from '../util/errors.js';
import { VERSION } from '../version.js';

type Register = (program: Command) => void;

export function buildProgram(commands: ReadonlyArray<Register>): Command {
  const program = new Command();
  program
    .name('slabbench')
    .description('Measure preconditioners and Krylov solvers on block-sparse space-time DG Jacobians.')
    .version(VERSION)
    .showHelpAfterError('(run with --help for usage)')
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  for (const register of commands) register(program);
  program.commands.forEach((c) => c.exitOverride());
  return program;
}

/** Run the CLI; every user error becomes one line on stderr and an exit code, never a stack trace. */
export async function main(argv: string[]): Promise<number> {
  // `--version` needs no command: answer before loading them (every command file and its imports)
  if (argv.length === 1 && (argv[0] === '--version' || argv[0] === '-V')) {
    process.stdout.write(`${VERSION}\n`);
    return EXIT.ok;
  }
  try {
    const { commands } = await import('./commands.js');
    const program = buildProgram(commands);
    await program.parseAsync(argv, { from: 'user' });
    return typeof process.exitCode === 'number' ? process.exitCode : EXIT.ok;
  } catch (e) {
    if (e instanceof CommanderError) {
      if (e.code === 'commander.helpDisplayed' || e.code === 'commander.version' || e.code === 'commander.help') return EXIT.ok;
      return EXIT.badInput; // commander already printed its one-line message
    }
    if (e instanceof UserError) {
      process.stderr.write(`slabbench: ${e.message}\n`);
      return e.exitCode;
    }
    const err = e as NodeJS.ErrnoException;
    if (err && typeof err.code === 'string' && typeof err.path === 'string') {
      process.stderr.write(`slabbench: ${err.path}: ${err.code === 'ENOENT' ? 'no such file' : err.message}\n`);
      return EXIT.badInput;
    }
    process.stderr.write(`slabbench: internal error: ${err?.message ?? String(e)}\n`);
    if (process.env.SLABBENCH_DEBUG) process.stderr.write(`${err?.stack ?? ''}\n`);
    return EXIT.internal;
  }
}
