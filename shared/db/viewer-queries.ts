import { sql, type Kysely } from 'kysely'
import type {
  AnalyteKey,
  FarmDetail,
  FarmSummary,
  FieldView,
  PlanResult,
  PlanSummary,
  PlanView,
  SampleResult,
  SeasonTrend,
  Spread,
  StorageView,
} from '../api-types.ts'
import { analyteKeys } from '../api-types.ts'
import type { Database } from './schema.ts'

/** Who is asking: an advisor sees every farm of the organization, a client only the granted farms. */
export interface Viewer {
  userId: number
  organizationId: number
  role: 'advisor' | 'client'
  /** Granted farm ids (clients only). */
  farmIds: ReadonlySet<number>
}

/** True when the viewer may see this farm. The single rule every route goes through. */
export function canSeeFarm(viewer: Viewer, farm: { id: number; organizationId: number }): boolean {
  if (farm.organizationId !== viewer.organizationId) return false
  return viewer.role === 'advisor' || viewer.farmIds.has(farm.id)
}

/** Samples within this many days of a storage's latest sample form its latest sampling round. */
export const samplingRoundDays = 45

function visibleFarms(db: Kysely<Database>, viewer: Viewer) {
  let q = db.selectFrom('farms').where('farms.organization_id', '=', viewer.organizationId)
  if (viewer.role !== 'advisor') q = q.where('farms.id', 'in', viewer.farmIds.size ? [...viewer.farmIds] : [-1])
  return q
}

async function planSummaries(db: Kysely<Database>, farmIds: number[]): Promise<(PlanSummary & { farm_id: number })[]> {
  if (farmIds.length === 0) return []
  const rows = await db
    .selectFrom('plans')
    .leftJoin('plan_fields', 'plan_fields.plan_id', 'plans.id')
    .select([
      'plans.id',
      'plans.farm_id',
      'plans.season',
      'plans.version',
      'plans.reference_set',
      'plans.basis',
      'plans.as_of',
      'plans.created_by',
      'plans.created_at',
      sql<number>`count(plan_fields.id)`.as('fields'),
      sql<number>`coalesce(sum(plan_fields.acres), 0)`.as('acres'),
    ])
    .where('plans.farm_id', 'in', farmIds)
    .groupBy('plans.id')
    .orderBy('plans.season', 'desc')
    .orderBy('plans.version', 'desc')
    .execute()
  return rows.map((r) => ({ ...r, fields: Number(r.fields), acres: Number(r.acres) }))
}

function withoutFarmId({ farm_id: _, ...rest }: PlanSummary & { farm_id: number }): PlanSummary {
  return rest
}

/** The farms the viewer may see, each with its counts and latest plan, by code. */
export async function findVisibleFarms(db: Kysely<Database>, viewer: Viewer): Promise<FarmSummary[]> {
  const farms = await visibleFarms(db, viewer)
    .select(['farms.id', 'farms.code', 'farms.name', 'farms.operator_name', 'farms.region'])
    .orderBy('farms.code')
    .execute()
  const ids = farms.map((f) => f.id)
  if (ids.length === 0) return []
  const [storages, fields, plans] = await Promise.all([
    db.selectFrom('storages').select(['farm_id', sql<number>`count(*)`.as('n')]).where('farm_id', 'in', ids).groupBy('farm_id').execute(),
    db
      .selectFrom('fields')
      .select(['farm_id', sql<number>`count(*)`.as('n'), sql<number>`coalesce(sum(acres), 0)`.as('acres')])
      .where('farm_id', 'in', ids)
      .groupBy('farm_id')
      .execute(),
    planSummaries(db, ids),
  ])
  const storageCount = new Map(storages.map((r) => [r.farm_id, Number(r.n)]))
  const fieldRows = new Map(fields.map((r) => [r.farm_id, r]))
  const latestPlan = new Map<number, PlanSummary & { farm_id: number }>()
  for (const p of plans) if (!latestPlan.has(p.farm_id)) latestPlan.set(p.farm_id, p) // newest first
  return farms.map((f) => {
    const fieldRow = fieldRows.get(f.id)
    const latest = latestPlan.get(f.id)
    return {
      code: f.code,
      name: f.name,
      operator_name: f.operator_name,
      region: f.region,
      storages: storageCount.get(f.id) ?? 0,
      fields: Number(fieldRow?.n ?? 0),
      acres: Number(fieldRow?.acres ?? 0),
      latest_plan: latest ? withoutFarmId(latest) : null,
    }
  })
}

function spreadOf(values: (number | null)[]): Spread {
  const xs = values.filter((v): v is number => typeof v === 'number' && Number.isFinite(v))
  const n = xs.length
  if (n === 0) return { n, mean: null, sd: null, cv_pct: null, min: null, max: null }
  const mean = xs.reduce((a, b) => a + b, 0) / n
  // sample standard deviation (n − 1), as for a handful of samples of one storage
  const sd = n > 1 ? Math.sqrt(xs.reduce((a, x) => a + (x - mean) ** 2, 0) / (n - 1)) : null
  return { n, mean, sd, cv_pct: sd !== null && mean !== 0 ? (sd / mean) * 100 : null, min: Math.min(...xs), max: Math.max(...xs) }
}

function spreads(samples: SampleResult[]): Record<AnalyteKey, Spread> {
  return Object.fromEntries(analyteKeys.map((k) => [k, spreadOf(samples.map((s) => s[k]))])) as Record<AnalyteKey, Spread>
}

function daysBetween(a: string, b: string): number {
  return Math.abs(Date.parse(a) - Date.parse(b)) / 86_400_000
}

/** One farm with its storages (latest round, spread, trend by season), fields and plans; undefined when not visible. */
export async function findFarmDetail(db: Kysely<Database>, viewer: Viewer, code: string): Promise<FarmDetail | undefined> {
  const farm = await visibleFarms(db, viewer)
    .select(['farms.id', 'farms.code', 'farms.name', 'farms.operator_name', 'farms.region'])
    .where('farms.code', '=', code)
    .executeTakeFirst()
  if (!farm) return undefined

  const [storageRows, resultRows, fieldRows, plans] = await Promise.all([
    db.selectFrom('storages').selectAll().where('farm_id', '=', farm.id).orderBy('code').execute(),
    db
      .selectFrom('lab_results')
      .innerJoin('storages', 'storages.id', 'lab_results.storage_id')
      .innerJoin('lab_reports', 'lab_reports.id', 'lab_results.lab_report_id')
      .select([
        'lab_results.storage_id',
        'lab_results.sample_code',
        'lab_reports.report_number',
        'lab_reports.lab',
        'lab_results.sampled_on',
        'lab_results.dry_matter_pct',
        'lab_results.total_n',
        'lab_results.ammonium_n',
        'lab_results.p2o5',
        'lab_results.k2o',
      ])
      .where('storages.farm_id', '=', farm.id)
      .where('lab_results.superseded_by', 'is', null)
      .orderBy('lab_results.sampled_on')
      .orderBy('lab_results.sample_code')
      .execute(),
    db
      .selectFrom('fields')
      .leftJoin('storages', 'storages.id', 'fields.storage_id')
      .select(['fields.id', 'fields.code', 'fields.name', 'fields.acres', 'fields.method', 'storages.code as storage_code'])
      .where('fields.farm_id', '=', farm.id)
      .orderBy('fields.code')
      .execute(),
    planSummaries(db, [farm.id]),
  ])
  const fieldIds = fieldRows.map((f) => f.id)
  const [seasons, soil] = fieldIds.length
    ? await Promise.all([
        db.selectFrom('crop_seasons').selectAll().where('field_id', 'in', fieldIds).orderBy('season', 'desc').execute(),
        db
          .selectFrom('soil_tests')
          .selectAll()
          .where('field_id', 'in', fieldIds)
          .orderBy('sampled_on', 'desc')
          .orderBy('id', 'desc')
          .execute(),
      ])
    : [[], []]

  const storages: StorageView[] = storageRows.map((s) => {
    const samples: SampleResult[] = resultRows
      .filter((r) => r.storage_id === s.id)
      .map(({ storage_id: _, ...r }) => r)
    const latestOn = samples.length ? samples[samples.length - 1]!.sampled_on : null
    const round = latestOn ? samples.filter((r) => daysBetween(r.sampled_on, latestOn) <= samplingRoundDays) : []
    const bySeason = new Map<number, SampleResult[]>()
    for (const r of samples) {
      const season = Number(r.sampled_on.slice(0, 4))
      const list = bySeason.get(season) // appended in place: copying the list for each sample was quadratic
      if (list) list.push(r)
      else bySeason.set(season, [r])
    }
    const trend: SeasonTrend[] = [...bySeason.entries()]
      .sort(([a], [b]) => a - b)
      .map(([season, rs]) => ({ season, samples: rs.length, values: spreads(rs) }))
    return {
      code: s.code,
      name: s.name,
      kind: s.kind,
      species: s.species,
      form: s.form,
      capacity: s.capacity,
      capacity_unit: s.capacity_unit,
      current_amount: s.current_amount,
      current_amount_on: s.current_amount_on,
      analysis_unit: s.form === 'liquid' ? 'lb/1000 gal' : 'lb/ton',
      latest_round: round.length
        ? { from: round[0]!.sampled_on, to: round[round.length - 1]!.sampled_on, samples: round, values: spreads(round) }
        : null,
      seasons: trend,
      results: samples.length,
    }
  })

  const fields: FieldView[] = fieldRows.map((f) => {
    const season = seasons.find((c) => c.field_id === f.id)
    const test = soil.find((t) => t.field_id === f.id)
    return {
      code: f.code,
      name: f.name,
      acres: f.acres,
      storage: f.storage_code ?? null,
      method: f.method,
      season: season?.season ?? null,
      crop: season?.crop ?? null,
      yield_goal: season?.yield_goal ?? null,
      soil_test: test ? { sampled_on: test.sampled_on, p_ppm: test.p_ppm, p_method: test.p_method, k_ppm: test.k_ppm } : null,
    }
  })

  return {
    code: farm.code,
    name: farm.name,
    operator_name: farm.operator_name,
    region: farm.region,
    storages,
    fields,
    plans: plans.map(withoutFarmId),
  }
}

/** Where a plan belongs, for the access check. */
export interface PlanOwner {
  planId: number
  farmId: number
  organizationId: number
}

export async function findPlanOwner(db: Kysely<Database>, planId: number): Promise<PlanOwner | undefined> {
  const row = await db
    .selectFrom('plans')
    .innerJoin('farms', 'farms.id', 'plans.farm_id')
    .select(['plans.id', 'plans.farm_id', 'farms.organization_id'])
    .where('plans.id', '=', planId)
    .executeTakeFirst()
  return row && { planId: row.id, farmId: row.farm_id, organizationId: row.organization_id }
}

function parseResult(text: string): PlanResult {
  try {
    const value = JSON.parse(text) as unknown
    return value && typeof value === 'object' && !Array.isArray(value) ? (value as PlanResult) : {}
  } catch {
    return {}
  }
}

/** The calculator case of each planned field from the stored inputs (`inputs.fields[].case`), by field code. */
function casesOf(inputs: string): Record<string, unknown> {
  const out: Record<string, unknown> = {}
  try {
    const value = JSON.parse(inputs) as { fields?: { code?: unknown; case?: unknown }[] }
    for (const f of Array.isArray(value?.fields) ? value.fields : []) {
      if (typeof f?.code === 'string' && f.case && typeof f.case === 'object') out[f.code] = f.case
    }
  } catch {
    // inputs that are not JSON simply give the panel nothing to start from
  }
  return out
}

/** A plan as the viewer shows it (never checks access: callers do, with findPlanOwner and canSeeFarm). */
export async function findPlanView(db: Kysely<Database>, planId: number): Promise<(PlanView & { owner: PlanOwner }) | undefined> {
  const row = await db
    .selectFrom('plans')
    .innerJoin('farms', 'farms.id', 'plans.farm_id')
    .selectAll('plans')
    .select(['farms.code as farm_code', 'farms.name as farm_name', 'farms.operator_name', 'farms.organization_id'])
    .where('plans.id', '=', planId)
    .executeTakeFirst()
  if (!row) return undefined
  const [storages, fields] = await Promise.all([
    db
      .selectFrom('storages')
      .select(['code', 'name', 'kind', 'species', 'form'])
      .where('farm_id', '=', row.farm_id)
      .orderBy('code')
      .execute(),
    db.selectFrom('fields').select(['code', 'name']).where('farm_id', '=', row.farm_id).orderBy('code').execute(),
  ])
  return {
    owner: { planId: row.id, farmId: row.farm_id, organizationId: row.organization_id },
    id: row.id,
    farm: { code: row.farm_code, name: row.farm_name, operator_name: row.operator_name },
    season: row.season,
    version: row.version,
    reference_set: row.reference_set,
    reference_set_version: row.reference_set_version,
    basis: row.basis,
    as_of: row.as_of,
    created_by: row.created_by,
    created_at: row.created_at,
    result: parseResult(row.result),
    storages,
    fields,
    cases: casesOf(row.inputs),
  }
}

/** Every plan of the plan's farm (all seasons and versions), newest first. */
export async function findPlanVersions(db: Kysely<Database>, owner: PlanOwner): Promise<PlanSummary[]> {
  return (await planSummaries(db, [owner.farmId])).map(withoutFarmId)
}
