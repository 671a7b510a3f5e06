import type { Kysely, Selectable } from 'kysely'
import { applicationWindow, implausibleRatePerAcre, type ApplicationRow } from '../application-csv.ts'
import type { Problem } from '../errors.ts'
import type { ApplicationMethod } from '../field-csv.ts'
import type { AmountUnit } from '../storage-csv.ts'
import { diffValues, statusOf, type ImportItem, type PreparedImport } from './record-import.ts'
import { chunks, runSync } from './run-sync.ts'
import type { Database } from './schema.ts'
import { findStoragesOfFarms, resolveFarms } from './storages.ts'

export type ApplicationRecord = Selectable<Database['applications']>

export interface Application {
  id: number
  farmCode: string
  fieldCode: string
  storageCode: string | null
  appliedOn: string
  amount: number
  amountUnit: AmountUnit
  method: ApplicationMethod | null
  incorporatedWithinHours: number | null
  loads: number | null
  applicator: string | null
  notes: string | null
}

export function toApplication(row: ApplicationRecord, context: { farmCode: string; fieldCode: string; storageCode: string | null }): Application {
  return {
    id: row.id,
    ...context,
    appliedOn: row.applied_on,
    amount: row.amount,
    amountUnit: row.amount_unit as AmountUnit,
    method: row.method as ApplicationMethod | null,
    incorporatedWithinHours: row.incorporated_within_hours,
    loads: row.loads,
    applicator: row.applicator,
    notes: row.notes,
  }
}

/** Applications on a farm's fields between two dates (inclusive), by date. */
export async function listApplications(db: Kysely<Database>, options: { farmId: number; from?: string; to?: string }): Promise<Application[]> {
  let query = db
    .selectFrom('applications')
    .innerJoin('fields', 'fields.id', 'applications.field_id')
    .innerJoin('farms', 'farms.id', 'fields.farm_id')
    .leftJoin('storages', 'storages.id', 'applications.storage_id')
    .selectAll('applications')
    .select(['farms.code as farm_code', 'fields.code as field_code', 'storages.code as storage_code'])
    .where('fields.farm_id', '=', options.farmId)
    .orderBy('applications.applied_on')
    .orderBy('fields.code')
  if (options.from) query = query.where('applications.applied_on', '>=', options.from)
  if (options.to) query = query.where('applications.applied_on', '<=', options.to)
  return (await query.execute()).map((r) => toApplication(r, { farmCode: r.farm_code, fieldCode: r.field_code, storageCode: r.storage_code }))
}

/**
 * Compares an applications file with the stored applications, keyed by field, day and storage.
 * The unit must fit the storage: gal for liquid manure, ton for solid.
 */
export async function prepareApplicationImport(db: Kysely<Database>, rows: readonly ApplicationRow[]): Promise<PreparedImport> {
  const problems: Problem[] = []
  const farms = await resolveFarms(db, rows, problems)
  const farmIds = [...farms.values()].map((f) => f.id)
  const storages = await findStoragesOfFarms(db, farmIds)
  const storageByKey = new Map(storages.map((s) => [`${s.farm_id}\u0000${s.code}`, s]))
  const fields: Selectable<Database['fields']>[] = []
  for (const part of chunks(farmIds)) {
    if (part.length) fields.push(...(await db.selectFrom('fields').selectAll().where('farm_id', 'in', part).execute()))
  }
  const fieldByKey = new Map(fields.map((f) => [`${f.farm_id}\u0000${f.code}`, f]))
  const stored: ApplicationRecord[] = []
  for (const part of chunks(fields.map((f) => f.id))) {
    if (part.length) stored.push(...(await db.selectFrom('applications').selectAll().where('field_id', 'in', part).execute()))
  }
  const storedByKey = new Map(stored.map((a) => [`${a.field_id}\u0000${a.applied_on}\u0000${a.storage_id}`, a]))

  const items: ImportItem[] = []
  const writes: { row: ApplicationRow; fieldId: number; storageId: number; existingId?: number }[] = []
  for (const row of rows) {
    const farm = farms.get(row.farmCode)
    if (!farm) continue
    const field = fieldByKey.get(`${farm.id}\u0000${row.fieldCode}`)
    if (!field) {
      problems.push({ code: 'unknown_field', line: row.line, column: 'field', message: `field ${row.fieldCode} is not a field of farm ${farm.code} (import it with \`pitside fields import\`)` })
      continue
    }
    const storage = storageByKey.get(`${farm.id}\u0000${row.storageCode}`)
    if (!storage) {
      const known = storages.filter((s) => s.farm_id === farm.id).map((s) => s.code).sort()
      problems.push({ code: 'unknown_storage', line: row.line, column: 'storage', message: `storage ${row.storageCode} is not a storage of farm ${farm.code} (known: ${known.join(', ') || 'none'})` })
      continue
    }
    const expectedUnit: AmountUnit = (storage.capacity_unit as AmountUnit | null) ?? (storage.form === 'liquid' ? 'gal' : 'ton')
    if (row.amountUnit !== expectedUnit) {
      problems.push({ code: 'unit_mismatch', line: row.line, column: 'amount_unit', message: `storage ${storage.code} holds ${storage.form} manure measured in ${expectedUnit}; found ${row.amountUnit}` })
      continue
    }
    if (storage.form === 'solid' && (row.method === 'injected' || row.method === 'irrigated')) {
      problems.push({ code: 'method_not_possible', line: row.line, column: 'method', message: `storage ${storage.code} holds solid manure, which cannot be ${row.method}` })
      continue
    }
    const perAcre = row.amount / field.acres
    if (perAcre > implausibleRatePerAcre[row.amountUnit]) {
      problems.push({
        code: 'implausible_rate',
        severity: 'warning',
        line: row.line,
        column: 'amount',
        message: `${row.amount} ${row.amountUnit} on ${field.acres} ac is ${Math.round(perAcre)} ${row.amountUnit}/ac; amount is the total over the field`,
      })
    }
    const existing = storedByKey.get(`${field.id}\u0000${row.appliedOn}\u0000${storage.id}`)
    const changes = diffValues(columnsOf(row).map(([column, to]) => [column, existing?.[column], to]))
    items.push({
      line: row.line,
      key: `${row.farmCode}/${row.fieldCode} ${row.appliedOn} ${row.storageCode}`,
      status: statusOf(!existing, changes),
      changes: existing ? changes : [],
    })
    if (!existing || changes.length) writes.push({ row, fieldId: field.id, storageId: storage.id, existingId: existing?.id })
  }
  return {
    problems,
    items,
    write({ sqlite, importRunId }) {
      for (const { row, fieldId, storageId, existingId } of writes) {
        const values = Object.fromEntries(columnsOf(row).filter(([, v]) => v !== undefined)) as Partial<ApplicationRecord>
        if (existingId !== undefined) runSync(sqlite, db.updateTable('applications').set(values).where('id', '=', existingId))
        else {
          runSync(
            sqlite,
            db.insertInto('applications').values({
              amount: row.amount,
              amount_unit: row.amountUnit,
              ...values,
              field_id: fieldId,
              storage_id: storageId,
              applied_on: row.appliedOn,
              import_run_id: importRunId || null,
            }),
          )
        }
      }
    },
  }
}

function columnsOf(row: ApplicationRow): [keyof ApplicationRecord & string, unknown][] {
  return [
    ['amount', row.amount],
    ['amount_unit', row.amountUnit],
    ['method', row.method],
    ['incorporated_within_hours', row.incorporatedWithinHours],
    ['loads', row.loads],
    ['applicator', row.applicator],
    ['notes', row.notes],
  ]
}

/** A plan's rate unit as an amount unit and the factor to it: "gal/ac" → gal × 1, "kgal/ac" → gal × 1000. */
export function amountUnitOfRate(rateUnit: string | null): { unit: AmountUnit; factor: number } | null {
  if (!rateUnit) return null
  const u = rateUnit.toLowerCase().replace(/\s+/g, '')
  if (/^(kgal|1000gal|1,000gal)/.test(u)) return { unit: 'gal', factor: 1000 }
  if (/^gal/.test(u)) return { unit: 'gal', factor: 1 }
  if (/^(ton|t\/|tn)/.test(u)) return { unit: 'ton', factor: 1 }
  return null
}

export interface PlannedVsActual {
  fieldCode: string
  acres: number
  crop: string | null
  storageCode: string | null
  method: string | null
  plannedRate: number | null
  rateUnit: string | null
  /** Planned total over the field, in amountUnit. */
  plannedTotal: number | null
  /** Applied total over the field, in amountUnit. */
  actualTotal: number
  /** Applied per acre, in amountUnit per acre. */
  actualRate: number | null
  amountUnit: AmountUnit | null
  applications: number
  dates: string[]
  /** (actual − planned) / planned × 100, when both are in one unit and something was spread. */
  differencePct: number | null
}

export interface PlannedVsActualReport {
  season: number
  window: { from: string; to: string }
  plan: { id: number; version: number; asOf: string; createdAt: string } | null
  fields: PlannedVsActual[]
}

/**
 * For one farm and season: the latest plan's rate per field beside what was actually spread in
 * that season's window (see `applicationWindow`), per field.
 */
export async function findPlannedVsActual(db: Kysely<Database>, farmId: number, season: number): Promise<PlannedVsActualReport> {
  const window = applicationWindow(season)
  const plan = await db
    .selectFrom('plans')
    .select(['id', 'version', 'as_of', 'created_at'])
    .where('farm_id', '=', farmId)
    .where('season', '=', season)
    .orderBy('version', 'desc')
    .limit(1)
    .executeTakeFirst()
  const planned = plan
    ? await db
        .selectFrom('plan_fields')
        .leftJoin('storages', 'storages.id', 'plan_fields.storage_id')
        .selectAll('plan_fields')
        .select('storages.code as storage_code')
        .where('plan_id', '=', plan.id)
        .execute()
    : []
  const applied = await listApplications(db, { farmId, ...window })
  const fields = await db.selectFrom('fields').select(['id', 'code', 'acres']).where('farm_id', '=', farmId).orderBy('code').execute()
  const crops = new Map(
    (await db.selectFrom('crop_seasons').innerJoin('fields', 'fields.id', 'crop_seasons.field_id').select(['fields.code', 'crop_seasons.crop']).where('fields.farm_id', '=', farmId).where('crop_seasons.season', '=', season).execute()).map((c) => [c.code, c.crop]),
  )
  const out: PlannedVsActual[] = []
  for (const field of fields) {
    const p = planned.find((x) => x.field_id === field.id)
    const mine = applied.filter((a) => a.fieldCode === field.code)
    if (!p && !mine.length) continue
    const rateUnit = amountUnitOfRate(p?.rate_unit ?? null)
    const acres = p?.acres ?? field.acres
    const unit: AmountUnit | null = rateUnit?.unit ?? mine[0]?.amountUnit ?? null
    const plannedTotal =
      p && rateUnit && p.rate !== null ? (p.total_manure !== null ? p.total_manure * rateUnit.factor : p.rate * rateUnit.factor * acres) : null
    const inUnit = mine.filter((a) => a.amountUnit === unit)
    const actualTotal = inUnit.reduce((s, a) => s + a.amount, 0)
    out.push({
      fieldCode: field.code,
      acres,
      crop: p?.crop ?? crops.get(field.code) ?? null,
      storageCode: p?.storage_code ?? mine[0]?.storageCode ?? null,
      method: p?.method ?? mine[0]?.method ?? null,
      plannedRate: p?.rate ?? null,
      rateUnit: p?.rate_unit ?? null,
      plannedTotal,
      actualTotal,
      actualRate: acres > 0 ? actualTotal / acres : null,
      amountUnit: unit,
      applications: mine.length,
      dates: mine.map((a) => a.appliedOn),
      // nothing spread yet is not a difference from the plan, only work still to do
      differencePct: plannedTotal && mine.length ? ((actualTotal - plannedTotal) / plannedTotal) * 100 : null,
    })
  }
  return {
    season,
    window,
    plan: plan ? { id: plan.id, version: plan.version, asOf: plan.as_of, createdAt: plan.created_at } : null,
    fields: out,
  }
}
