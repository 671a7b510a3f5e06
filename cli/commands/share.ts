import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const load = () => import('../actions/share.ts')

export function register(program: Command): void {
  const share = program
    .command('share')
    .description('e-mail a read-only link to one plan; list and revoke links')
    .argument('[plan-id]', 'the plan to share (see `pitside plans list`)')
    .option('--to <email>', 'who receives the link')
    .option('--expires <duration>', 'how long the link works: 90m, 12h, 30d, 8w (at most 365d)', '30d')
    .option('--by <name>', 'who is sharing, as the e-mail names them (default: PITSIDE_USER, else the farm\'s advisory firm)')
    .action(lazyAction(async () => ({ run: (await load()).runCreate })))

  share
    .command('list')
    .description('list share links with their state (active, expired, revoked)')
    .option('--plan <id>', 'only the links to this plan')
    .action(lazyAction(async () => ({ run: (await load()).runList })))

  share
    .command('revoke')
    .description('stop a share link from working')
    .argument('<id>', 'the link id (from `pitside share list` or `--json`)')
    .action(lazyAction(async () => ({ run: (await load()).runRevoke })))
}
