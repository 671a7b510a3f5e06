import { createHash } from 'node:crypto'
import { mkdir } from 'node:fs/promises'
import { join } from 'node:path'
import { applicationWindow } from '../../shared/application-csv.ts'
import { writeCsv, type CsvValue } from '../../shared/csv-write.ts'
import { findPlannedVsActual } from '../../shared/db/applications.ts'
import { findFarmId, findPlan, listPlans } from '../../shared/db/plans.ts'
import { findAnalysisRecords, findApplicationRecords } from '../../shared/db/records.ts'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { formatTable, note, printJson } from '../output.ts'
import { withAdvisorDb } from './advisor-db.ts'
import { cautions } from './calc-format.ts'
import { writeFileAtomic } from './export.ts'
import { plansCsv } from './plan.ts'

function table<T extends object>(rows: readonly T[], columns: readonly (keyof T & string)[]): string {
  const out: CsvValue[][] = [columns as unknown as string[]]
  for (const r of rows) out.push(columns.map((c) => r[c] as CsvValue))
  return writeCsv(out)
}

/**
 * The core of `pitside records export`: for one farm and season, the lab analyses, the latest plan
 * (CSV and JSON), the applications actually made with the nutrients they carried, and planned
 * against actual per field; a records.json lists the files with their sha256. Returns the files.
 */
export async function exportRecords(deps: Parameters<Parameters<typeof withAdvisorDb>[2]>[0], options: { farm: string; season: number; outDir: string }) {
  const { db, sqlite } = deps
  const farm = await findFarmId(db, options.farm)
  const analyses = findAnalysisRecords(sqlite, farm.id, options.season)
  const applications = findApplicationRecords(sqlite, farm.id, options.season)
  const [latest] = await listPlans(db, { farm: farm.code, season: options.season, latestOnly: true })
  const plan = latest ? await findPlan(db, latest.id) : null
  const versus = await findPlannedVsActual(db, farm.id, options.season)

  const files: { file: string; rows: number; text: string; what: string }[] = [
    {
      file: 'analyses.csv',
      rows: analyses.length,
      what: 'lab results of the farm’s storages, as-is per 1000 gal or per ton (superseded ones marked)',
      text: table(analyses, ['storage', 'sample_id', 'report_id', 'lab', 'sampled_on', 'form', 'species', 'per_unit', 'dry_matter_pct', 'total_n', 'ammonium_n', 'organic_n', 'p2o5', 'k2o', 'reported_basis', 'reported_units', 'qualifiers', 'superseded', 'warnings', 'source_file']),
    },
    {
      file: 'applications.csv',
      rows: applications.length,
      what: 'manure actually applied in the season’s spreading window, with nutrients per acre from the storage’s sampling round',
      text: table(applications, ['field', 'acres', 'applied_on', 'storage', 'amount', 'amount_unit', 'rate', 'method', 'incorporated_within_hours', 'loads', 'applicator', 'analysis_sampled_on', 'total_n_lb_per_acre', 'p2o5_lb_per_acre', 'k2o_lb_per_acre', 'notes']),
    },
    {
      file: 'planned-vs-actual.csv',
      rows: versus.fields.length,
      what: 'the latest plan’s rate per field against what was applied',
      text: table(
        versus.fields.map((f) => ({
          field: f.fieldCode, acres: f.acres, crop: f.crop, storage: f.storageCode, method: f.method, planned_rate: f.plannedRate, rate_unit: f.rateUnit,
          planned_total: f.plannedTotal, actual_total: f.actualTotal, actual_rate: f.actualRate === null ? null : Math.round(f.actualRate * 100) / 100,
          amount_unit: f.amountUnit, applications: f.applications, dates: f.dates.join(' '), difference_pct: f.differencePct === null ? null : Math.round(f.differencePct * 10) / 10,
        })),
        ['field', 'acres', 'crop', 'storage', 'method', 'planned_rate', 'rate_unit', 'planned_total', 'actual_total', 'actual_rate', 'amount_unit', 'applications', 'dates', 'difference_pct'],
      ),
    },
  ]
  if (plan) {
    files.push({ file: 'plan.csv', rows: plan.result.fields.length, what: `plan ${plan.id}, version ${plan.version}, one row per field`, text: plansCsv([plan.result]) })
    files.push({ file: 'plan.json', rows: 1, what: `plan ${plan.id} with the inputs it was computed from`, text: JSON.stringify({ plan: plan.result, inputs: plan.inputs }, null, 2) + '\n' })
  }
  try {
    await mkdir(options.outDir, { recursive: true })
  } catch (error) {
    throw new AppError('io', `${options.outDir}: cannot create the folder (${(error as NodeJS.ErrnoException).code ?? (error as Error).message})`)
  }
  const manifest = {
    farm: farm.code,
    farm_name: farm.name,
    season: options.season,
    spreading_window: applicationWindow(options.season),
    plan: plan ? { id: plan.id, version: plan.version, as_of: plan.asOf, created_at: plan.createdAt, created_by: plan.createdBy, reference_set: plan.referenceSet } : null,
    files: files.map((f) => ({ file: f.file, rows: f.rows, what: f.what, sha256: createHash('sha256').update(f.text).digest('hex') })),
    cautions,
  }
  for (const f of files) await writeFileAtomic(join(options.outDir, f.file), f.text)
  await writeFileAtomic(join(options.outDir, 'records.json'), JSON.stringify(manifest, null, 2) + '\n')
  return manifest
}

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  const season = Number(options.season)
  if (!Number.isInteger(season)) throw new AppError('usage', `--season: expected a year such as 2027, found "${options.season}"`)
  const outDir = (options.outDir as string | undefined) ?? `records-${options.farm}-${season}`
  const manifest = await withAdvisorDb(g.db, 'read', (deps) => exportRecords(deps, { farm: options.farm, season, outDir }))
  if (g.json) printJson({ out_dir: outDir, ...manifest })
  else {
    process.stdout.write(
      formatTable(manifest.files, [
        { header: 'file', value: (f) => join(outDir, f.file) },
        { header: 'rows', value: (f) => f.rows, align: 'right' },
        { header: 'what', value: (f) => f.what },
      ]) + '\n',
    )
    if (!manifest.plan) note(g, `no plan for ${manifest.farm} ${season} yet: run \`pitside plan --farm ${manifest.farm} --season ${season}\``)
    note(g, `wrote ${manifest.files.length + 1} files to ${outDir} (records.json lists them with their sha256)`)
  }
}
