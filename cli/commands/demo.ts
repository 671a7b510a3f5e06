import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

export function register(program: Command): void {
  program
    .command('demo')
    .description('load the invented demo (farms, accounts, storages, fields, samples, lab results, applications) through the import commands and plan it; safe to run again')
    .addHelpText('after', '\nThe demo is invented: Tamarack Valley, its farms, people and lab. Every demo account signs in with the password pitside-demo (demo only).')
    .action(lazyAction(() => import('../actions/demo.ts')))
}
