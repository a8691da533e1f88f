import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerGenerate(program: Command): void {
  program
    .command('generate')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('generate is not built yet');
    });
}
