import type { Command } from 'commander';
import { UserError } from '../util/errors.js';

// PLACEHOLDER: replaced by the owner of this command.
export function registerConvert(program: Command): void {
  program
    .command('convert')
    .description('(not built yet)')
    .action(() => {
      throw new UserError('convert is not built yet');
    });
}
