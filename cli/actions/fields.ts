import { listFarms, requireFarm } from '../../shared/db/farms.ts'
import { listFields, prepareFieldImport, type Field } from '../../shared/db/fields.ts'
import { parseFieldCsv, yieldGoalUnits } from '../../shared/field-csv.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'
import {
  printImportReport,
  runRecordImport,
  withDatabase,
  type ImportDeps,
  type ImportOptions,
  type ImportReport,
  type ImportSource,
} from './record-import.ts'

/** The core of `pitside fields import`, callable in-process. */
export async function importFields(deps: ImportDeps, files: readonly ImportSource[], options: ImportOptions = {}): Promise<ImportReport> {
  return runRecordImport(deps, 'fields', files, options, async (text) => {
    const parsed = parseFieldCsv(text)
    const prepared = await prepareFieldImport(deps.db, parsed.rows)
    return { ...prepared, problems: [...parsed.problems, ...prepared.problems] }
  })
}

export const runImport: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const report = await withDatabase(g.db, (deps) => importFields(deps, args[0] as string[], { dryRun: options.dryRun }))
  printImportReport(g, report)
}

export function fieldJson(f: Field) {
  return {
    farm: f.farmCode,
    field: f.code,
    name: f.name,
    acres: f.acres,
    storage: f.storageCode,
    method: f.method,
    incorporated_within_hours: f.incorporatedWithinHours,
    overrides: f.overrides,
    notes: f.notes,
    soil_test: f.soilTest && {
      sampled_on: f.soilTest.sampledOn,
      p_ppm: f.soilTest.pPpm,
      p_method: f.soilTest.pMethod,
      k_ppm: f.soilTest.kPpm,
      organic_matter_pct: f.soilTest.organicMatterPct,
      ph: f.soilTest.ph,
    },
    crop_season: f.cropSeason && {
      season: f.cropSeason.season,
      crop: f.cropSeason.crop,
      yield_goal: f.cropSeason.yieldGoal,
      yield_goal_unit: `${yieldGoalUnits[f.cropSeason.crop] ?? ''}/ac`,
      previous_crop: f.cropSeason.previousCrop,
    },
  }
}

export const runList: ActionModule['run'] = async ({ options, globals: g }) => {
  const season = options.season === undefined ? undefined : Number(options.season)
  const fields = await withDatabase(g.db, async ({ db }) => {
    const farms = options.farm ? [await requireFarm(db, options.farm)] : await listFarms(db)
    const out: Field[] = []
    for (const farm of farms) out.push(...(await listFields(db, { farmId: farm.id, season })))
    return out
  })
  if (g.json) return printJson({ season: season ?? null, fields: fields.map(fieldJson) })
  if (!fields.length) return note(g, 'no fields yet; add them with `pitside fields import fields.csv`')
  printTable(fields, [
    { header: 'farm', value: (f) => f.farmCode },
    { header: 'field', value: (f) => f.code },
    { header: 'acres', value: (f) => f.acres, align: 'right' },
    { header: 'season', value: (f) => f.cropSeason?.season },
    { header: 'crop', value: (f) => f.cropSeason?.crop },
    { header: 'yield goal', value: (f) => (f.cropSeason?.yieldGoal != null ? `${f.cropSeason.yieldGoal} ${yieldGoalUnits[f.cropSeason.crop]}/ac` : ''), align: 'right' },
    { header: 'after', value: (f) => f.cropSeason?.previousCrop },
    { header: 'soil P ppm', value: (f) => (f.soilTest?.pPpm != null ? `${f.soilTest.pPpm} ${f.soilTest.pMethod ?? ''}`.trim() : ''), align: 'right' },
    { header: 'soil K ppm', value: (f) => f.soilTest?.kPpm, align: 'right' },
    { header: 'storage', value: (f) => f.storageCode },
    { header: 'method', value: (f) => (f.method === 'broadcast_incorporated' ? `${f.method} ≤${f.incorporatedWithinHours} h` : f.method) },
  ])
}
