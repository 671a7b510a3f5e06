import type SQLite from 'better-sqlite3'
import type { Kysely, Selectable } from 'kysely'
import { AppError } from '../errors.ts'
import type { FieldOverrides } from '../field-csv.ts'
import {
  planJson,
  type FarmSnapshot,
  type PlanBody,
  type PlanFieldSnapshot,
  type PlanInputs,
  type PlanJson,
  type PlanLabResult,
  type PlanStorageSnapshot,
} from '../plan.ts'
import type { Database } from './schema.ts'

/**
 * Plans in the database: loading what plans are computed from with a few set-based queries (one
 * per table, whatever the number of farms), writing each farm's new plan version with prepared
 * statements in one transaction, and reading stored plans back.
 */

export interface LoadedFarm {
  farmId: number
  snapshot: FarmSnapshot
  fieldIds: Map<string, number>
  storageIds: Map<string, number>
}

export interface PlanSelection {
  /** farm codes; null for every farm (of `organization` when given) */
  farms: readonly string[] | null
  organization?: string
}

function daysBefore(date: string, days: number): string {
  const t = Date.parse(`${date}T00:00:00Z`) - days * 86_400_000
  return new Date(t).toISOString().slice(0, 10)
}

function parseOverrides(text: string | null): FieldOverrides {
  if (!text) return {}
  try {
    const v = JSON.parse(text) as unknown
    return v && typeof v === 'object' && !Array.isArray(v) ? (v as FieldOverrides) : {}
  } catch {
    return {}
  }
}

/**
 * Everything the plans of `season` as of `asOf` are computed from, one snapshot per farm, ordered
 * by farm code: storages with their current lab results (the latest sampling round as of asOf,
 * and every result since a year before the earliest application that can leave residual N),
 * fields with their crop season, latest soil test, overrides and the applications of the two
 * seasons before and of the season itself. Throws AppError('not_found') for unknown farm codes
 * or organization, naming the known ones.
 */
export function findPlanSnapshots(sqlite: SQLite.Database, selection: PlanSelection, season: number, asOf: string): LoadedFarm[] {
  let farms: { id: number; code: string; name: string }[]
  const params: unknown[] = []
  let where = ''
  if (selection.organization) {
    const org = sqlite.prepare('select id from organizations where code = ?').get(selection.organization) as { id: number } | undefined
    if (!org) {
      const known = (sqlite.prepare('select code from organizations order by code').all() as { code: string }[]).map((o) => o.code)
      throw new AppError('not_found', `organization "${selection.organization}" not found (known: ${known.join(', ') || 'none'})`)
    }
    where = 'where organization_id = ?'
    params.push(org.id)
  }
  farms = sqlite.prepare(`select id, code, name from farms ${where} order by code`).all(...params) as typeof farms
  if (selection.farms) {
    const wanted = new Set(selection.farms.map((c) => c.toLowerCase()))
    const found = farms.filter((f) => wanted.has(f.code.toLowerCase()))
    const missing = selection.farms.filter((c) => !found.some((f) => f.code.toLowerCase() === c.toLowerCase()))
    if (missing.length > 0) {
      const known = farms.map((f) => f.code)
      throw new AppError('not_found', `farm ${missing.map((m) => `"${m}"`).join(', ')} not found (known farms: ${known.slice(0, 30).join(', ') || 'none'}${known.length > 30 ? ', …' : ''})`)
    }
    farms = found
  }
  if (farms.length === 0) return []

  // a filter on farm ids only when a few farms are asked for; every farm is a plain scan
  const all = !selection.farms && !selection.organization
  const ids = farms.map((f) => f.id)
  const farmFilter = (column: string) => (all ? '' : `${column} in (${ids.map(() => '?').join(',')})`)
  const and = (column: string) => (all ? '' : ` and ${farmFilter(column)}`)
  const whereFarm = (column: string) => (all ? '' : ` where ${farmFilter(column)}`)
  const p = all ? [] : ids

  const loaded = new Map<number, LoadedFarm>()
  for (const f of farms) {
    loaded.set(f.id, { farmId: f.id, snapshot: { farm: { code: f.code, name: f.name }, storages: [], fields: [] }, fieldIds: new Map(), storageIds: new Map() })
  }

  const storagesById = new Map<number, PlanStorageSnapshot>()
  for (const s of sqlite.prepare(`select * from storages${whereFarm('farm_id')} order by farm_id, code`).all(...p) as Selectable<Database['storages']>[]) {
    const farm = loaded.get(s.farm_id)
    if (!farm) continue
    const snap: PlanStorageSnapshot = {
      code: s.code,
      name: s.name,
      kind: s.kind,
      species: s.species,
      form: s.form,
      shape: s.shape,
      lengthFt: s.length_ft,
      widthFt: s.width_ft,
      diameterFt: s.diameter_ft,
      depthFt: s.depth_ft,
      sideSlope: s.side_slope,
      freeboardFt: s.freeboard_ft,
      capacity: s.capacity,
      capacityUnit: s.capacity_unit,
      currentAmount: s.current_amount,
      currentAmountOn: s.current_amount_on,
      currentDepthFt: s.current_depth_ft,
      results: [],
    }
    farm.snapshot.storages.push(snap)
    farm.storageIds.set(s.code, s.id)
    storagesById.set(s.id, snap)
  }

  // lab results: the latest round as of asOf, plus everything since the residual window opened
  const since = daysBefore(`${season - 3}-07-01`, 365)
  const columns = 'r.id, r.storage_id, r.sample_code, (select report_number from lab_reports p where p.id = r.lab_report_id) as report_number, r.sampled_on, r.dry_matter_pct, r.total_n, r.ammonium_n, r.p2o5, r.k2o'
  const join = all ? '' : ` join storages s on s.id = r.storage_id and ${farmFilter('s.farm_id')}`
  const latest = sqlite
    .prepare(
      `with latest as (
         select r.storage_id, max(r.sampled_on) as d from lab_results r${join}
         where r.superseded_by is null and r.sampled_on <= ? group by r.storage_id)
       select ${columns} from lab_results r join latest l on l.storage_id = r.storage_id
       where r.superseded_by is null and r.sampled_on <= l.d and r.sampled_on >= date(l.d, '-45 days')`,
    )
    .all(...p, asOf) as Record<string, any>[]
  const recent = sqlite
    .prepare(`select ${columns} from lab_results r${join} where r.superseded_by is null and r.sampled_on >= ? and r.sampled_on <= ?`)
    .all(...p, since, asOf) as Record<string, any>[]
  const seen = new Set<number>()
  for (const r of [...latest, ...recent]) {
    if (seen.has(r.id)) continue
    seen.add(r.id)
    const s = storagesById.get(r.storage_id)
    if (!s) continue
    const result: PlanLabResult = {
      sampleCode: r.sample_code,
      reportNumber: r.report_number,
      sampledOn: r.sampled_on,
      dryMatterPct: r.dry_matter_pct,
      totalN: r.total_n,
      ammoniumN: r.ammonium_n,
      p2o5: r.p2o5,
      k2o: r.k2o,
    }
    s.results.push(result)
  }
  for (const s of storagesById.values()) s.results.sort((a, b) => (a.sampledOn < b.sampledOn ? -1 : a.sampledOn > b.sampledOn ? 1 : a.sampleCode < b.sampleCode ? -1 : 1))

  const fieldsById = new Map<number, PlanFieldSnapshot>()
  const storageCode = new Map<number, string>()
  for (const [id, s] of storagesById) storageCode.set(id, s.code)
  for (const f of sqlite.prepare(`select * from fields${whereFarm('farm_id')} order by farm_id, code`).all(...p) as Selectable<Database['fields']>[]) {
    const farm = loaded.get(f.farm_id)
    if (!farm) continue
    const snap: PlanFieldSnapshot = {
      code: f.code,
      name: f.name,
      acres: f.acres,
      storage: f.storage_id === null ? null : (storageCode.get(f.storage_id) ?? null),
      method: f.method,
      incorporatedWithinHours: f.incorporated_within_hours,
      overrides: parseOverrides(f.overrides),
      cropSeason: null,
      soilTest: null,
      applications: [],
    }
    farm.snapshot.fields.push(snap)
    farm.fieldIds.set(f.code, f.id)
    fieldsById.set(f.id, snap)
  }

  const fieldJoin = all ? '' : ` join fields f on f.id = x.field_id and ${farmFilter('f.farm_id')}`
  for (const c of sqlite.prepare(`select x.field_id, x.season, x.crop, x.yield_goal, x.previous_crop from crop_seasons x${fieldJoin} where x.season = ?`).all(...p, season) as Record<string, any>[]) {
    const f = fieldsById.get(c.field_id)
    if (f) f.cropSeason = { season: c.season, crop: c.crop, yieldGoal: c.yield_goal, previousCrop: c.previous_crop }
  }
  // the latest soil test per field: latest date, undated ones oldest, then the latest row
  for (const t of sqlite.prepare(`select x.id, x.field_id, x.sampled_on, x.p_ppm, x.p_method, x.k_ppm from soil_tests x${fieldJoin} order by x.field_id, coalesce(x.sampled_on, ''), x.id`).all(...p) as Record<string, any>[]) {
    const f = fieldsById.get(t.field_id)
    if (f) f.soilTest = { sampledOn: t.sampled_on, pPpm: t.p_ppm, pMethod: t.p_method, kPpm: t.k_ppm }
  }
  for (const a of sqlite
    .prepare(
      `select x.field_id, x.applied_on, x.storage_id, x.amount, x.amount_unit, x.method, x.incorporated_within_hours
       from applications x${fieldJoin} where x.applied_on >= ? and x.applied_on <= ? order by x.field_id, x.applied_on, x.id`,
    )
    .all(...p, `${season - 3}-07-01`, `${season}-06-30`) as Record<string, any>[]) {
    const f = fieldsById.get(a.field_id)
    if (!f) continue
    f.applications.push({
      appliedOn: a.applied_on,
      storage: a.storage_id === null ? null : (storageCode.get(a.storage_id) ?? null),
      amount: a.amount,
      amountUnit: a.amount_unit,
      method: a.method,
      incorporatedWithinHours: a.incorporated_within_hours,
    })
  }
  return [...loaded.values()]
}

export interface NewPlan {
  farm: LoadedFarm
  body: PlanBody
  inputs: PlanInputs
  createdBy: string
  /** ISO instant */
  createdAt: string
}

/** Prepared statements for writing plans; create once per run. */
export function planWriter(sqlite: SQLite.Database) {
  const nextVersion = sqlite.prepare('select coalesce(max(version), 0) + 1 as v from plans where farm_id = ? and season = ?').pluck()
  const insertPlan = sqlite.prepare(
    `insert into plans (farm_id, season, version, reference_set, reference_set_version, basis, as_of, inputs, result, created_by, created_at)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  )
  const insertField = sqlite.prepare(
    `insert into plan_fields (plan_id, field_id, field_code, acres, crop, storage_id, method, rate, rate_unit, limited_by,
       need_n, need_p2o5, need_k2o, applied_n, applied_p2o5, applied_k2o, supplied_n, supplied_p2o5, supplied_k2o,
       supplemental_n, supplemental_p2o5, supplemental_k2o, total_manure, loads, detail, warnings)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  )
  /**
   * Writes one farm's plan as a new version (the highest for its farm and season plus one) with
   * its field rows, in the caller's transaction. Returns the plan JSON with its id. Plans are never updated.
   */
  const writeOne = (p: NewPlan): PlanJson => {
    const version = nextVersion.get(p.farm.farmId, p.body.season) as number
    const stored = planJson(p.body, { version, createdAt: p.createdAt })
    // each field is serialized once: for its plan_fields row and, spliced in, for plans.result
    const details = p.body.fields.map((f) => JSON.stringify(f))
    const { skipped, totals, warnings, sources, fields: _fields, ...head } = stored
    const result = `${JSON.stringify(head).slice(0, -1)},"fields":[${details.join(',')}],${JSON.stringify({ skipped, totals, warnings, sources }).slice(1)}`
    const id = Number(
      insertPlan.run(p.farm.farmId, p.body.season, version, p.body.reference_set, p.body.reference_set_version, p.body.basis, p.body.as_of, JSON.stringify(p.inputs), result, p.createdBy, p.createdAt)
        .lastInsertRowid,
    )
    p.body.fields.forEach((f, i) => {
      insertField.run(
        id,
        p.farm.fieldIds.get(f.field)!,
        f.field,
        f.acres,
        f.crop,
        p.farm.storageIds.get(f.storage) ?? null,
        f.method,
        f.rate,
        f.rate_unit,
        f.limited_by,
        f.need.n,
        f.need.p2o5,
        f.need.k2o,
        f.applied.n,
        f.applied.p2o5,
        f.applied.k2o,
        f.supplied.n,
        f.supplied.p2o5,
        f.supplied.k2o,
        f.supplemental.n,
        f.supplemental.p2o5,
        f.supplemental.k2o,
        f.total_manure,
        f.loads?.field ?? null,
        details[i],
        f.warnings.length > 0 ? JSON.stringify(f.warnings) : null,
      )
    })
    return { id, ...stored }
  }
  const one = sqlite.transaction(writeOne)
  const many = sqlite.transaction((ps: readonly NewPlan[]) => ps.map(writeOne))
  return {
    /** One farm's plan in a transaction of its own. */
    write: (p: NewPlan) => one.immediate(p),
    /**
     * Several farms' plans in one transaction, all or none (without a savepoint per plan, which
     * would copy every page a plan changes to a temporary file first).
     */
    writeAll: (ps: readonly NewPlan[]) => many.immediate(ps),
  }
}

// ── reading stored plans ─────────────────────────────────────────────────────────────────────

export interface StoredPlan {
  id: number
  farm: string
  farmName: string
  season: number
  version: number
  referenceSet: string
  referenceSetVersion: string
  basis: string
  asOf: string
  createdBy: string
  createdAt: string
  /** the plan JSON as stored (plans.result) */
  result: PlanJson
  /** what it was computed from (plans.inputs) */
  inputs: PlanInputs
}

export interface PlanSummary {
  id: number
  farm: string
  season: number
  version: number
  referenceSet: string
  basis: string
  asOf: string
  createdBy: string
  createdAt: string
  fields: number
  acres: number
}

/** One stored plan with its JSON, or null. */
export async function findPlan(db: Kysely<Database>, id: number): Promise<StoredPlan | null> {
  const r = await db
    .selectFrom('plans')
    .innerJoin('farms', 'farms.id', 'plans.farm_id')
    .selectAll('plans')
    .select(['farms.code as farm_code', 'farms.name as farm_name'])
    .where('plans.id', '=', id)
    .executeTakeFirst()
  if (!r) return null
  return {
    id: r.id,
    farm: r.farm_code,
    farmName: r.farm_name,
    season: r.season,
    version: r.version,
    referenceSet: r.reference_set,
    referenceSetVersion: r.reference_set_version,
    basis: r.basis,
    asOf: r.as_of,
    createdBy: r.created_by,
    createdAt: r.created_at,
    result: { id: r.id, ...(JSON.parse(r.result) as PlanJson) },
    inputs: JSON.parse(r.inputs) as PlanInputs,
  }
}

/** Stored plans, newest first within each farm and season, with their number of fields and acres. */
export async function listPlans(db: Kysely<Database>, filter: { farm?: string; season?: number; latestOnly?: boolean } = {}): Promise<PlanSummary[]> {
  let q = db
    .selectFrom('plans')
    .innerJoin('farms', 'farms.id', 'plans.farm_id')
    .select((eb) => [
      'plans.id',
      'farms.code as farm',
      'plans.season',
      'plans.version',
      'plans.reference_set',
      'plans.basis',
      'plans.as_of',
      'plans.created_by',
      'plans.created_at',
      eb.selectFrom('plan_fields').whereRef('plan_fields.plan_id', '=', 'plans.id').select((e) => e.fn.countAll<number>().as('n')).as('fields'),
      eb.selectFrom('plan_fields').whereRef('plan_fields.plan_id', '=', 'plans.id').select((e) => e.fn.sum<number>('plan_fields.acres').as('a')).as('acres'),
    ])
  if (filter.farm) q = q.where('farms.code', '=', filter.farm)
  if (filter.season !== undefined) q = q.where('plans.season', '=', filter.season)
  const rows = await q.orderBy('farms.code').orderBy('plans.season').orderBy('plans.version', 'desc').execute()
  const out = rows.map((r) => ({
    id: r.id,
    farm: r.farm,
    season: r.season,
    version: r.version,
    referenceSet: r.reference_set,
    basis: r.basis,
    asOf: r.as_of,
    createdBy: r.created_by,
    createdAt: r.created_at,
    fields: Number(r.fields ?? 0),
    acres: Math.round(Number(r.acres ?? 0) * 100) / 100,
  }))
  if (!filter.latestOnly) return out
  const seen = new Set<string>()
  return out.filter((p) => {
    const key = `${p.farm}|${p.season}`
    if (seen.has(key)) return false
    seen.add(key)
    return true
  })
}

/** The farm's id by code, or AppError('not_found') naming the known farms. */
export async function findFarmId(db: Kysely<Database>, code: string): Promise<{ id: number; code: string; name: string }> {
  const f = await db.selectFrom('farms').select(['id', 'code', 'name']).where('code', '=', code).executeTakeFirst()
  if (f) return f
  const known = (await db.selectFrom('farms').select('code').orderBy('code').execute()).map((x) => x.code)
  throw new AppError('not_found', `farm "${code}" not found (known farms: ${known.slice(0, 30).join(', ') || 'none'}${known.length > 30 ? ', …' : ''})`)
}
