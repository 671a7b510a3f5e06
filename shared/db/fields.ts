import type { Kysely, Selectable } from 'kysely'
import type { Problem } from '../errors.ts'
import {
  mergeOverrides,
  type ApplicationMethod,
  type CropCode,
  type FieldOverrides,
  type FieldRow,
  type PreviousCropCode,
  type SoilTestPMethod,
} from '../field-csv.ts'
import { diffValues, statusOf, type Change, type ImportItem, type PreparedImport } from './record-import.ts'
import { chunks, runSync } from './run-sync.ts'
import type { Database } from './schema.ts'
import { findStoragesOfFarms, resolveFarms, type StorageRecord } from './storages.ts'

export type FieldRecord = Selectable<Database['fields']>
type SoilTestRecord = Selectable<Database['soil_tests']>
type CropSeasonRecord = Selectable<Database['crop_seasons']>

export interface SoilTest {
  sampledOn: string | null
  pPpm: number | null
  pMethod: SoilTestPMethod | null
  kPpm: number | null
  organicMatterPct: number | null
  ph: number | null
}

export interface CropSeason {
  season: number
  crop: CropCode
  yieldGoal: number | null
  previousCrop: PreviousCropCode | null
}

export interface Field {
  id: number
  farmId: number
  farmCode: string
  code: string
  name: string | null
  acres: number
  storageId: number | null
  storageCode: string | null
  method: ApplicationMethod | null
  incorporatedWithinHours: number | null
  overrides: FieldOverrides
  notes: string | null
  /** The most recent soil test (latest date; undated ones count as oldest). */
  soilTest: SoilTest | null
  /** The crop season asked for, or the latest one. */
  cropSeason: CropSeason | null
}

export function parseOverrides(text: string | null): FieldOverrides {
  if (!text) return {}
  try {
    const value = JSON.parse(text) as unknown
    return value && typeof value === 'object' && !Array.isArray(value) ? (value as FieldOverrides) : {}
  } catch {
    return {}
  }
}

export function toSoilTest(row: SoilTestRecord): SoilTest {
  return {
    sampledOn: row.sampled_on,
    pPpm: row.p_ppm,
    pMethod: row.p_method as SoilTestPMethod | null,
    kPpm: row.k_ppm,
    organicMatterPct: row.organic_matter_pct,
    ph: row.ph,
  }
}

export function toCropSeason(row: CropSeasonRecord): CropSeason {
  return { season: row.season, crop: row.crop as CropCode, yieldGoal: row.yield_goal, previousCrop: row.previous_crop as PreviousCropCode | null }
}

export function toField(
  row: FieldRecord,
  context: { farmCode: string; storageCode: string | null; soilTest: SoilTestRecord | null; cropSeason: CropSeasonRecord | null },
): Field {
  return {
    id: row.id,
    farmId: row.farm_id,
    farmCode: context.farmCode,
    code: row.code,
    name: row.name,
    acres: row.acres,
    storageId: row.storage_id,
    storageCode: context.storageCode,
    method: row.method as ApplicationMethod | null,
    incorporatedWithinHours: row.incorporated_within_hours,
    overrides: parseOverrides(row.overrides),
    notes: row.notes,
    soilTest: context.soilTest ? toSoilTest(context.soilTest) : null,
    cropSeason: context.cropSeason ? toCropSeason(context.cropSeason) : null,
  }
}

function latestSoilTest(tests: readonly SoilTestRecord[]): SoilTestRecord | null {
  let best: SoilTestRecord | null = null
  for (const t of tests) {
    if (!best || (t.sampled_on ?? '') > (best.sampled_on ?? '') || ((t.sampled_on ?? '') === (best.sampled_on ?? '') && t.id > best.id)) best = t
  }
  return best
}

/**
 * The fields of a farm with their latest soil test and the crop season of `season` (or, without
 * a season, the latest one), ordered by code.
 */
export async function listFields(db: Kysely<Database>, options: { farmId: number; season?: number }): Promise<Field[]> {
  const rows = await db
    .selectFrom('fields')
    .innerJoin('farms', 'farms.id', 'fields.farm_id')
    .leftJoin('storages', 'storages.id', 'fields.storage_id')
    .selectAll('fields')
    .select(['farms.code as farm_code', 'storages.code as storage_code'])
    .where('fields.farm_id', '=', options.farmId)
    .orderBy('fields.code')
    .execute()
  const ids = rows.map((r) => r.id)
  const tests = new Map<number, SoilTestRecord[]>()
  const seasons = new Map<number, CropSeasonRecord[]>()
  for (const part of chunks(ids)) {
    if (!part.length) continue
    for (const t of await db.selectFrom('soil_tests').selectAll().where('field_id', 'in', part).execute()) {
      tests.set(t.field_id, [...(tests.get(t.field_id) ?? []), t])
    }
    let q = db.selectFrom('crop_seasons').selectAll().where('field_id', 'in', part)
    if (options.season !== undefined) q = q.where('season', '=', options.season)
    for (const s of await q.execute()) seasons.set(s.field_id, [...(seasons.get(s.field_id) ?? []), s])
  }
  return rows.map((r) => {
    const own = seasons.get(r.id) ?? []
    const cropSeason = own.reduce<CropSeasonRecord | null>((a, s) => (!a || s.season > a.season ? s : a), null)
    return toField(r, { farmCode: r.farm_code, storageCode: r.storage_code, soilTest: latestSoilTest(tests.get(r.id) ?? []), cropSeason })
  })
}

interface FieldWrite {
  key: string
  farmId: number
  code: string
  existingId?: number
  values?: Partial<FieldRecord>
}

/**
 * Compares a fields file with the stored fields, soil tests and crop seasons of its farms. A row
 * upserts its field (keyed by farm and code), the soil test of its date (an undated one when the
 * file has no date) and the crop season of its season.
 */
export async function prepareFieldImport(db: Kysely<Database>, rows: readonly FieldRow[]): Promise<PreparedImport> {
  const problems: Problem[] = []
  const farms = await resolveFarms(db, rows, problems)
  const farmIds = [...farms.values()].map((f) => f.id)
  const storages = await findStoragesOfFarms(db, farmIds)
  const storageByKey = new Map(storages.map((s) => [`${s.farm_id}\u0000${s.code}`, s]))
  const storageCodeById = new Map(storages.map((s) => [s.id, s.code]))
  const stored: FieldRecord[] = []
  for (const part of chunks(farmIds)) {
    if (part.length) stored.push(...(await db.selectFrom('fields').selectAll().where('farm_id', 'in', part).execute()))
  }
  const fieldByKey = new Map(stored.map((f) => [`${f.farm_id}\u0000${f.code}`, f]))
  const testsByField = new Map<number, SoilTestRecord[]>()
  const seasonsByField = new Map<number, CropSeasonRecord[]>()
  for (const part of chunks(stored.map((f) => f.id))) {
    if (!part.length) continue
    for (const t of await db.selectFrom('soil_tests').selectAll().where('field_id', 'in', part).execute()) {
      testsByField.set(t.field_id, [...(testsByField.get(t.field_id) ?? []), t])
    }
    for (const s of await db.selectFrom('crop_seasons').selectAll().where('field_id', 'in', part).execute()) {
      seasonsByField.set(s.field_id, [...(seasonsByField.get(s.field_id) ?? []), s])
    }
  }

  const items: ImportItem[] = []
  const fieldWrites = new Map<string, FieldWrite>()
  const soilWrites: { fieldKey: string; existingId?: number; values: Partial<SoilTestRecord> }[] = []
  const seasonWrites: { fieldKey: string; existingId?: number; values: Partial<CropSeasonRecord> & { season: number } }[] = []
  const seen = new Set<string>()

  for (const row of rows) {
    const farm = farms.get(row.farmCode)
    if (!farm) continue
    let storage: StorageRecord | undefined
    if (row.storageCode) {
      storage = storageByKey.get(`${farm.id}\u0000${row.storageCode}`)
      if (!storage) {
        const known = storages.filter((s) => s.farm_id === farm.id).map((s) => s.code).sort()
        problems.push({
          code: 'unknown_storage',
          line: row.line,
          column: 'storage',
          message: `storage ${row.storageCode} is not a storage of farm ${farm.code} (${known.length ? `known: ${known.join(', ')}` : 'it has none yet; import storages first'})`,
        })
        continue
      }
      if (storage.form === 'solid' && (row.method === 'injected' || row.method === 'irrigated')) {
        problems.push({
          code: 'method_not_possible',
          line: row.line,
          column: 'method',
          message: `storage ${storage.code} holds solid manure, which cannot be ${row.method}; expected broadcast or broadcast_incorporated`,
        })
        continue
      }
    }
    const fieldKey = `${farm.id}\u0000${row.code}`
    const existing = fieldByKey.get(fieldKey)
    const changes: Change[] = []
    const firstRowOfField = !seen.has(fieldKey)
    seen.add(fieldKey)
    if (firstRowOfField) {
      const overrides = mergeOverrides(existing ? parseOverrides(existing.overrides) : {}, row.overrides)
      const overridesText = Object.keys(overrides).length ? JSON.stringify(overrides) : null
      const fieldChanges = diffValues([
        ['acres', existing?.acres, row.acres],
        ['storage', existing ? (existing.storage_id === null ? null : (storageCodeById.get(existing.storage_id) ?? null)) : undefined, row.storageCode],
        ['method', existing?.method, row.method],
        ['incorporated_within_hours', existing?.incorporated_within_hours, row.incorporatedWithinHours],
        ['overrides', existing?.overrides, overridesText],
        ['name', existing?.name, row.name],
        ['notes', existing?.notes, row.notes],
      ])
      if (existing) changes.push(...fieldChanges)
      if (!existing || fieldChanges.length) {
        fieldWrites.set(fieldKey, {
          key: fieldKey,
          farmId: farm.id,
          code: row.code,
          existingId: existing?.id,
          values: {
            acres: row.acres,
            storage_id: storage?.id ?? null,
            method: row.method,
            incorporated_within_hours: row.incorporatedWithinHours,
            overrides: overridesText,
            ...(row.name !== undefined ? { name: row.name } : {}),
            ...(row.notes !== undefined ? { notes: row.notes } : {}),
          },
        })
      }
      if (row.soilTest) {
        const t = row.soilTest
        const current = (testsByField.get(existing?.id ?? -1) ?? []).find((s) => (s.sampled_on ?? null) === t.sampledOn)
        const soilChanges = diffValues([
          ['soil_test_p_ppm', current?.p_ppm, t.pPpm],
          ['soil_test_p_method', current?.p_method, t.pMethod],
          ['soil_test_k_ppm', current?.k_ppm, t.kPpm],
          ['soil_test_om_pct', current?.organic_matter_pct, t.organicMatterPct],
          ['soil_test_ph', current?.ph, t.ph],
        ])
        if (current) changes.push(...soilChanges)
        else if (existing) changes.push({ column: 'soil_test_date', from: null, to: t.sampledOn ?? '(undated)' })
        if (!current || soilChanges.length) {
          soilWrites.push({
            fieldKey,
            existingId: current?.id,
            values: {
              sampled_on: t.sampledOn,
              p_ppm: t.pPpm,
              p_method: t.pMethod,
              k_ppm: t.kPpm,
              ...(t.organicMatterPct !== undefined ? { organic_matter_pct: t.organicMatterPct } : {}),
              ...(t.ph !== undefined ? { ph: t.ph } : {}),
            },
          })
        }
      }
    }
    const season = (seasonsByField.get(existing?.id ?? -1) ?? []).find((s) => s.season === row.season)
    const seasonChanges = diffValues([
      ['crop', season?.crop, row.crop],
      ['yield_goal', season?.yield_goal, row.yieldGoal],
      ['previous_crop', season?.previous_crop, row.previousCrop],
    ])
    if (season) changes.push(...seasonChanges)
    if (!season || seasonChanges.length) {
      seasonWrites.push({
        fieldKey,
        existingId: season?.id,
        values: { season: row.season, crop: row.crop, yield_goal: row.yieldGoal, previous_crop: row.previousCrop },
      })
    }
    const isNew = !existing || !season
    items.push({
      line: row.line,
      key: `${row.farmCode}/${row.code} ${row.season}`,
      status: statusOf(isNew, changes),
      changes: isNew && !existing ? [] : changes,
    })
  }

  return {
    problems,
    items,
    write({ sqlite, now }) {
      const idOf = new Map<string, number>()
      for (const f of stored) idOf.set(`${f.farm_id}\u0000${f.code}`, f.id)
      for (const w of fieldWrites.values()) {
        if (w.existingId !== undefined) {
          runSync(sqlite, db.updateTable('fields').set({ ...w.values, updated_at: now }).where('id', '=', w.existingId))
        } else {
          const { lastInsertRowid } = runSync(
            sqlite,
            db.insertInto('fields').values({
              acres: 0,
              ...w.values,
              farm_id: w.farmId,
              code: w.code,
              created_at: now,
              updated_at: now,
            }),
          )
          idOf.set(w.key, lastInsertRowid)
        }
      }
      for (const w of soilWrites) {
        if (w.existingId !== undefined) runSync(sqlite, db.updateTable('soil_tests').set(w.values).where('id', '=', w.existingId))
        else runSync(sqlite, db.insertInto('soil_tests').values({ ...w.values, field_id: idOf.get(w.fieldKey)!, created_at: now }))
      }
      for (const w of seasonWrites) {
        if (w.existingId !== undefined) runSync(sqlite, db.updateTable('crop_seasons').set(w.values).where('id', '=', w.existingId))
        else {
          runSync(
            sqlite,
            db.insertInto('crop_seasons').values({ crop: '', ...w.values, field_id: idOf.get(w.fieldKey)!, created_at: now }),
          )
        }
      }
    },
  }
}
