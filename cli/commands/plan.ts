import { Option, type Command } from 'commander'
import { lazyAction } from '../lazy.ts'

const collect = (value: string, previous: string[]) => [...previous, value]

export function register(program: Command): void {
  program
    .command('plan')
    .description('compute a new plan version per farm for a season: per storage its latest sampling round, per field its rate from the engine')
    .option('--farm <code>', 'farm to plan (repeat for several)', collect, [])
    .option('--all', 'plan every farm', false)
    .option('--org <code>', 'with --all: only the farms of this organization')
    .requiredOption('--season <year>', 'the crop season to plan, e.g. 2027')
    .option('--as-of <date>', 'use the lab results and applications known on this date (YYYY-MM-DD; default today)')
    .option('--reference <set>', 'reference set of published factors (see `pitside calc sets`)')
    .addOption(new Option('--basis <basis>', 'nutrient the rate is based on, unless a field overrides it (default n)').choices(['n', 'p2o5', 'k2o', 'lowest']))
    .option('--by <name>', 'who makes the plan (stored with it; default the user name)')
    .option('--csv', 'one CSV row per field on stdout instead of the table')
    .addHelpText(
      'after',
      `
Every run stores a new version; stored plans are never changed (see \`pitside plans\`).
A field's numbers are exactly those of \`pitside calc rate\` for its case, stored in the plan's inputs.

Exit codes: 0 planned, 64 bad options, 66 unknown farm or reference set, 69 database missing or locked.`,
    )
    .action(lazyAction(() => import('../actions/plan.ts')))
}
