import { openReader } from '../../shared/db/open-database.ts'
import { runCli } from './cli.ts'
import { makeTempDatabase, type TempDir } from './temp-db.ts'
import { seedViewerDatabase } from './viewer-seed.ts'

export interface ViewerDemo {
  dbFile: string
  /** 'cli' when built by `pitside init && pitside demo`, 'seed' when by the viewer's own test seed. */
  builtBy: 'cli' | 'seed'
  password: string
  advisor: string
  advisorFarms: string[]
  client: string
  clientFarm: string
  farmName: string
  otherFarm: string
  /** The client's farm's latest plan, and another farm's. */
  planId: number
  otherPlanId: number
}

/**
 * A database for the browser tests: built by the real CLI (`pitside init` then `pitside demo`)
 * when the CLI has the demo command, else filled by the viewer's seed. Needs `npm run build:node`.
 */
export async function buildViewerDemoDatabase(tmp: TempDir): Promise<ViewerDemo> {
  const help = await runCli(['--help'])
  let dbFile = ''
  let builtBy: ViewerDemo['builtBy'] = 'seed'
  // the demo computes plans only once the CLI has `pitside plan`
  if (/^\s+demo\b/m.test(String(help.stdout)) && /^\s+plan\b/m.test(String(help.stdout))) {
    dbFile = tmp.path('demo.db')
    for (const args of [['init'], ['demo']]) {
      const r = await runCli(['--db', dbFile, '--quiet', ...args])
      if (r.exitCode !== 0) throw new Error(`pitside ${args.join(' ')} failed (${r.exitCode}): ${String(r.stderr)}`)
    }
    builtBy = 'cli'
    // a demo that does not compute plans yet (no `pitside plan` in this build) cannot show a plan page
    const reader = openReader(dbFile)
    const plans = await reader.db.selectFrom('plans').select((eb) => eb.fn.countAll<number>().as('n')).executeTakeFirstOrThrow()
    await reader.close()
    if (Number(plans.n) === 0) builtBy = 'seed'
  }
  if (builtBy === 'seed') {
    const temp = await makeTempDatabase()
    await seedViewerDatabase(temp.db)
    await temp.close()
    dbFile = temp.tmp.path('test.db')
    builtBy = 'seed'
  }
  const reader = openReader(dbFile)
  try {
    const farms = await reader.db
      .selectFrom('farms')
      .innerJoin('organizations', 'organizations.id', 'farms.organization_id')
      .select(['farms.code', 'farms.name'])
      .where('organizations.code', '=', 'loamridge')
      .orderBy('farms.code')
      .execute()
    const latestPlan = async (code: string) =>
      (
        await reader.db
          .selectFrom('plans')
          .innerJoin('farms', 'farms.id', 'plans.farm_id')
          .select('plans.id')
          .where('farms.code', '=', code)
          .orderBy('plans.season', 'desc')
          .orderBy('plans.version', 'desc')
          .executeTakeFirstOrThrow()
      ).id
    return {
      dbFile,
      builtBy,
      password: 'pitside-demo',
      advisor: 'maren@loamridge.example',
      advisorFarms: farms.map((f) => f.code),
      client: 'qbf@farm.example',
      clientFarm: 'QBF',
      farmName: farms.find((f) => f.code === 'QBF')!.name,
      otherFarm: 'FCD',
      planId: await latestPlan('QBF'),
      otherPlanId: await latestPlan('FCD'),
    }
  } finally {
    await reader.close()
  }
}
