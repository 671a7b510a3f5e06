import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  program
    .command('init')
    .description('create the database or upgrade it to the latest schema (safe to run again)')
    .action(lazyAction(() => import('../actions/init.ts')))
}
