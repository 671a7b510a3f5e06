import { existsSync, readdirSync, readFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { migrateToLatest } from '../../shared/db/migrations.ts'
import { openWriter } from '../../shared/db/open-database.ts'
import { findOrganizationByCode, findUserByEmail, resolveOrganization, type Role } from '../../shared/db/users.ts'
import { AppError } from '../../shared/errors.ts'
import { parseFarmCsv } from '../../shared/farm-csv.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'
import { importApplications } from './applications.ts'
import { importFarms } from './farms.ts'
import { importFields } from './fields.ts'
import { importLabFiles } from './labs-import.ts'
import { runPlans } from './plan.ts'
import type { ImportDeps, ImportReport } from './record-import.ts'
import { importSamples } from './samples.ts'
import { importStorages } from './storages.ts'
import { addUser } from './users.ts'

/** The invented demo scenario: who, where, and when it is computed. */
export const demoScenario = {
  organization: { code: 'loamridge', name: 'Loamridge Nutrient Advisors' },
  /** Every demo account's password (demo only; printed by `pitside demo`). */
  password: 'pitside-demo',
  season: 2027,
  asOf: '2026-11-15',
  advisors: [
    { email: 'maren@loamridge.example', name: 'Maren Castellano' },
    { email: 'teodor@loamridge.example', name: 'Teodor Brandvik' },
  ],
} as const

export interface DemoAccount {
  email: string
  name: string
  role: Role
  farmCodes: string[]
}

/** One line of the demo's summary: what a step did. */
export interface DemoStep {
  step: string
  detail: string
  new: number
  changed: number
  unchanged: number
}

export interface DemoReport {
  organization: string
  season: number
  asOf: string
  steps: DemoStep[]
  accounts: DemoAccount[]
  password: string
  /** Whether this run wrote anything. */
  changed: boolean
  durationMs: number
}

/** The folder of the demo's example files, found from this module's place in the package. */
export function findDemoDir(): string {
  let dir = dirname(fileURLToPath(import.meta.url))
  for (let i = 0; i < 6; i++) {
    const pkg = join(dir, 'package.json')
    if (existsSync(pkg) && (JSON.parse(readFileSync(pkg, 'utf8')) as { name?: string }).name === 'pitside') {
      return join(dir, 'examples', 'demo')
    }
    dir = dirname(dir)
  }
  throw new AppError('not_found', 'cannot find the examples/demo folder of the Pitside package')
}

/** The demo accounts: the two advisors, and one client per farm of the farms file (its contact e-mail and operator). */
export function demoAccounts(farmsCsv: string): DemoAccount[] {
  const clients = parseFarmCsv(farmsCsv)
    .rows.filter((f) => f.contactEmail)
    .map((f) => ({ email: f.contactEmail!, name: f.operatorName ?? f.name, role: 'client' as const, farmCodes: [f.code] }))
  return [...demoScenario.advisors.map((a) => ({ ...a, role: 'advisor' as const, farmCodes: [] })), ...clients]
}

function stepOf(step: string, detail: string, r: ImportReport): DemoStep {
  const sum = (k: 'new' | 'changed' | 'unchanged') => r.files.reduce((n, f) => n + f[k], 0)
  return { step, detail, new: sum('new'), changed: sum('changed'), unchanged: sum('unchanged') }
}

/**
 * The core of `pitside demo`: loads the invented demo scenario through the same import cores as the
 * commands (farms, accounts, storages, fields, samples, lab results, applications) and computes
 * its plans. Idempotent: a second run writes nothing and reports every step unchanged.
 */
export async function loadDemo(deps: ImportDeps, options: { demoDir?: string } = {}): Promise<DemoReport> {
  const started = Date.now()
  const dir = options.demoDir ?? findDemoDir()
  const file = (name: string) => join(dir, name)
  const today = demoScenario.asOf
  const steps: DemoStep[] = []

  const org = demoScenario.organization
  const existed = await findOrganizationByCode(deps.db, org.code)
  await resolveOrganization(deps.db, { code: org.code, createName: org.name })
  steps.push({ step: 'organization', detail: `${org.code} (${org.name})`, new: existed ? 0 : 1, changed: 0, unchanged: existed ? 1 : 0 })

  steps.push(stepOf('farms', 'farms.csv', await importFarms(deps, [file('farms.csv')], { org: org.code, today })))

  const accounts = demoAccounts(readFileSync(file('farms.csv'), 'utf8'))
  const accountStep: DemoStep = { step: 'accounts', detail: `${accounts.length} sign-ins`, new: 0, changed: 0, unchanged: 0 }
  const missing: DemoAccount[] = []
  for (const a of accounts) {
    if (await findUserByEmail(deps.db, a.email)) accountStep.unchanged++
    else missing.push(a)
  }
  // two at a time: each password hash takes a core and 128 MiB for a moment
  for (let i = 0; i < missing.length; i += 2) {
    await Promise.all(
      missing.slice(i, i + 2).map((a) =>
        addUser(deps, { email: a.email, name: a.name, role: a.role, password: demoScenario.password, farmCodes: a.farmCodes, organizationCode: org.code }),
      ),
    )
    accountStep.new += missing.slice(i, i + 2).length
  }
  steps.push(accountStep)

  steps.push(stepOf('storages', 'storages.csv', await importStorages(deps, [file('storages.csv')], { today })))
  steps.push(stepOf('fields', 'fields.csv (fields, soil tests, crop seasons)', await importFields(deps, [file('fields.csv')], { today })))
  const samples = readdirSync(dir).filter((f) => /^samples-.*\.csv$/.test(f)).sort()
  steps.push(stepOf('samples', samples.join(', '), await importSamples(deps, samples.map(file), { today })))

  const labDir = join(dir, 'labs')
  const labFiles = readdirSync(labDir).filter((f) => f.endsWith('.csv')).sort().map((f) => join(labDir, f))
  const summary = await importLabFiles(deps, labFiles, { today })
  if (summary.totals.refused > 0) {
    const refused = summary.files.filter((f) => f.outcome === 'refused')
    throw new AppError('invalid_input', `the demo's lab files were refused: ${refused.map((f) => `${f.file}: ${f.reason ?? ''}`).join('; ')}`)
  }
  steps.push({
    step: 'lab results',
    detail: `${labFiles.length} lab files (labs import)`,
    new: summary.totals.new,
    changed: summary.totals.replaced,
    unchanged: summary.totals.unchanged,
  })

  const applications = readdirSync(dir).filter((f) => /^applications-.*\.csv$/.test(f)).sort()
  steps.push(stepOf('applications', applications.join(', '), await importApplications(deps, applications.map(file), { today })))

  const changedSoFar = steps.some((s) => s.new + s.changed > 0)
  steps.push(await planStep(deps, changedSoFar))

  return {
    organization: org.code,
    season: demoScenario.season,
    asOf: demoScenario.asOf,
    steps,
    accounts,
    password: demoScenario.password,
    changed: steps.some((s) => s.new + s.changed > 0),
    durationMs: Date.now() - started,
  }
}

/**
 * Computes the demo's plans for the season, as of the scenario's date: when the data changed in
 * this run, or when a demo farm has no plan for the season yet. Otherwise nothing is computed.
 */
async function planStep(deps: ImportDeps, dataChanged: boolean): Promise<DemoStep> {
  const { season, asOf, organization } = demoScenario
  const detail = `season ${season} as of ${asOf}`
  const farms = await deps.db
    .selectFrom('farms')
    .innerJoin('organizations', 'organizations.id', 'farms.organization_id')
    .select((eb) => [
      'farms.code',
      eb.selectFrom('plans').whereRef('plans.farm_id', '=', 'farms.id').where('plans.season', '=', season).select(eb.fn.countAll<number>().as('n')).as('plans'),
    ])
    .where('organizations.code', '=', organization.code)
    .orderBy('farms.code')
    .execute()
  const unplanned = farms.filter((f) => Number(f.plans ?? 0) === 0)
  if (!dataChanged && unplanned.length === 0) return { step: 'plans', detail, new: 0, changed: 0, unchanged: farms.length }
  const { plans } = await runPlans(deps, { all: true, organization: organization.code, season, asOf, createdBy: 'pitside demo' })
  return { step: 'plans', detail, new: plans.length, changed: 0, unchanged: 0 }
}

export function demoJson(r: DemoReport, database: string) {
  return {
    database,
    organization: r.organization,
    season: r.season,
    as_of: r.asOf,
    changed: r.changed,
    duration_ms: r.durationMs,
    steps: r.steps,
    password: r.password,
    accounts: r.accounts.map((a) => ({ email: a.email, name: a.name, role: a.role, farms: a.farmCodes })),
  }
}

export const run: ActionModule['run'] = async ({ globals: g }) => {
  const opened = openWriter(g.db)
  let report: DemoReport
  try {
    await migrateToLatest(opened.db)
    report = await loadDemo({ db: opened.db, sqlite: opened.sqlite })
  } finally {
    await opened.close()
  }
  if (g.json) return printJson(demoJson(report, g.db))
  printTable(report.steps, [
    { header: 'step', value: (s) => s.step },
    { header: 'new', value: (s) => s.new, align: 'right' },
    { header: 'changed', value: (s) => s.changed, align: 'right' },
    { header: 'unchanged', value: (s) => s.unchanged, align: 'right' },
    { header: 'from', value: (s) => s.detail },
  ])
  printTable(report.accounts, [
    { header: 'sign in as', value: (a) => a.email },
    { header: 'name', value: (a) => a.name },
    { header: 'role', value: (a) => a.role },
    { header: 'sees', value: (a) => (a.role === 'advisor' ? 'every farm' : a.farmCodes.join(', ')) },
  ])
  process.stdout.write(`password for every demo account: ${report.password} (demo only)\n`)
  note(
    g,
    report.changed
      ? `loaded the invented demo into ${g.db} in ${(report.durationMs / 1000).toFixed(1)} s (organization ${report.organization}, plans for ${report.season} as of ${report.asOf})`
      : `nothing changed: the demo was already loaded in ${g.db}`,
  )
}
