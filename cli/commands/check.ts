import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  program
    .command('check')
    .description('check the database: integrity, broken references and schema version (read-only)')
    .action(lazyAction(() => import('../actions/check.ts')))
}
