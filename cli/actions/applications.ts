import { parseApplicationCsv } from '../../shared/application-csv.ts'
import { findPlannedVsActual, prepareApplicationImport, type PlannedVsActualReport } from '../../shared/db/applications.ts'
import { requireFarm } from '../../shared/db/farms.ts'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'
import {
  localToday,
  printImportReport,
  runRecordImport,
  withDatabase,
  type ImportDeps,
  type ImportOptions,
  type ImportReport,
  type ImportSource,
} from './record-import.ts'

/** The core of `pitside applications import`, callable in-process. */
export async function importApplications(deps: ImportDeps, files: readonly ImportSource[], options: ImportOptions = {}): Promise<ImportReport> {
  const today = options.today ?? localToday()
  return runRecordImport(deps, 'applications', files, options, async (text) => {
    const parsed = parseApplicationCsv(text, { today })
    const prepared = await prepareApplicationImport(deps.db, parsed.rows)
    return { ...prepared, problems: [...parsed.problems, ...prepared.problems] }
  })
}

export const runImport: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const report = await withDatabase(g.db, (deps) => importApplications(deps, args[0] as string[], { dryRun: options.dryRun }))
  printImportReport(g, report)
}

/** The core of `pitside applications list`: planned against actual per field for one farm and season. */
export async function findApplicationsReport(deps: ImportDeps, farmCode: string, season: number): Promise<PlannedVsActualReport & { farm: string }> {
  const farm = await requireFarm(deps.db, farmCode)
  return { farm: farm.code, ...(await findPlannedVsActual(deps.db, farm.id, season)) }
}

const round = (v: number | null, digits = 0) => (v === null ? null : Number(v.toFixed(digits)))

export function applicationsReportJson(r: PlannedVsActualReport & { farm: string }) {
  return {
    farm: r.farm,
    season: r.season,
    window: r.window,
    plan: r.plan && { id: r.plan.id, version: r.plan.version, as_of: r.plan.asOf, created_at: r.plan.createdAt },
    fields: r.fields.map((f) => ({
      field: f.fieldCode,
      acres: f.acres,
      crop: f.crop,
      storage: f.storageCode,
      method: f.method,
      planned_rate: f.plannedRate,
      rate_unit: f.rateUnit,
      planned_total: f.plannedTotal,
      actual_total: f.actualTotal,
      actual_rate: f.actualRate,
      amount_unit: f.amountUnit,
      applications: f.applications,
      dates: f.dates,
      difference_pct: round(f.differencePct, 1),
    })),
  }
}

export const runList: ActionModule['run'] = async ({ options, globals: g }) => {
  const season = Number(options.season)
  if (!Number.isInteger(season) || season < 1990 || season > 2100) {
    throw new AppError('usage', `--season: expected a year such as 2027, found "${options.season}"`)
  }
  const report = await withDatabase(g.db, (deps) => findApplicationsReport(deps, options.farm, season))
  if (g.json) return printJson(applicationsReportJson(report))
  note(
    g,
    `${report.farm} season ${season}: spreading from ${report.window.from} to ${report.window.to}; ` +
      (report.plan ? `plan version ${report.plan.version} (as of ${report.plan.asOf})` : 'no plan for this season yet (`pitside plan`)'),
  )
  if (!report.fields.length) return note(g, 'no planned or recorded applications for this season')
  const fmt = (v: number | null) => (v === null ? '' : Math.round(v).toLocaleString('en-US'))
  printTable(report.fields, [
    { header: 'field', value: (f) => f.fieldCode },
    { header: 'acres', value: (f) => f.acres, align: 'right' },
    { header: 'crop', value: (f) => f.crop },
    { header: 'storage', value: (f) => f.storageCode },
    { header: 'planned rate', value: (f) => (f.plannedRate === null ? '' : `${fmt(f.plannedRate)} ${f.rateUnit ?? ''}`.trim()), align: 'right' },
    { header: 'actual rate', value: (f) => (f.applications ? `${fmt(f.actualRate)} ${f.amountUnit}/ac` : ''), align: 'right' },
    { header: 'planned total', value: (f) => (f.plannedTotal === null ? '' : `${fmt(f.plannedTotal)} ${f.amountUnit ?? ''}`), align: 'right' },
    { header: 'actual total', value: (f) => `${fmt(f.actualTotal)} ${f.amountUnit ?? ''}`, align: 'right' },
    { header: 'difference', value: (f) => (f.differencePct === null ? '' : `${f.differencePct >= 0 ? '+' : ''}${f.differencePct.toFixed(0)} %`), align: 'right' },
    { header: 'spread on', value: (f) => (f.dates.length ? f.dates.join(' ') : 'not yet') },
  ])
}
