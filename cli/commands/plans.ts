import type { Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const load = () => import('../actions/plans.ts')

export function register(program: Command): void {
  const plans = program.command('plans').description('stored plans: list, show and compare versions')

  plans
    .command('list')
    .description('list stored plans, newest version first within each farm and season')
    .option('--farm <code>', 'only this farm')
    .option('--season <year>', 'only this season')
    .option('--latest', 'only the latest version of each farm and season', false)
    .action(lazyAction(async () => ({ run: (await load()).runList })))

  plans
    .command('show')
    .description('print one stored plan (table, or the plan JSON with --json)')
    .argument('<plan>', 'plan id (see `pitside plans list`)')
    .option('--inputs', 'with --json: also the inputs the plan was computed from', false)
    .action(lazyAction(async () => ({ run: (await load()).runShow })))

  plans
    .command('diff')
    .description('what changed between two plans: per field rate, limiting nutrient and fertilizer still needed; the inputs that differ')
    .argument('<a>', 'the earlier plan id')
    .argument('<b>', 'the later plan id')
    .addHelpText('after', '\nExit codes: 0 compared (also when they differ), 64 a plan id is not a number, 66 a plan does not exist.')
    .action(lazyAction(async () => ({ run: (await load()).runDiff })))
}
