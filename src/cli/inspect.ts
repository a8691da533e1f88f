import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerInspect(program: Command): void {
  program
    .command('inspect')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('inspect is not built yet');
    });
}
