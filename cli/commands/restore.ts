import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  program
    .command('restore')
    .description('replace the database with a checked backup; the old file is kept as <db>.before-restore')
    .argument('<file>', 'a file made by `pitside backup`')
    .addHelpText('after', '\nStop the viewer and every other pitside command first: restore refuses while the database is open elsewhere.')
    .action(lazyAction(() => import('../actions/restore.ts')))
}
