import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  program
    .command('backup')
    .description('copy the database to a file while others keep using it (checked before it is kept)')
    .argument('<file>', 'the backup file to write')
    .option('--force', 'replace the backup file if it exists', false)
    .action(lazyAction(() => import('../actions/backup.ts')))
}
