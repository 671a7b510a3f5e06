import type { Kysely, Selectable } from 'kysely'
import type { Problem } from '../errors.ts'
import type { AmountUnit, ManureSpecies, StorageForm, StorageKind, StorageRow, StorageShape } from '../storage-csv.ts'
import { findFarmsByCodes, type FarmRecord } from './farms.ts'
import { diffValues, statusOf, unknownCodeMessage, type ImportItem, type PreparedImport } from './record-import.ts'
import { chunks, runSync } from './run-sync.ts'
import type { Database } from './schema.ts'

export type StorageRecord = Selectable<Database['storages']>

export interface Storage {
  id: number
  farmId: number
  farmCode: string
  code: string
  name: string | null
  kind: StorageKind
  species: ManureSpecies
  form: StorageForm
  shape: StorageShape | null
  lengthFt: number | null
  widthFt: number | null
  diameterFt: number | null
  depthFt: number | null
  sideSlope: number | null
  freeboardFt: number | null
  capacity: number | null
  capacityUnit: AmountUnit | null
  currentAmount: number | null
  currentAmountOn: string | null
  currentDepthFt: number | null
  accessPoints: number | null
  notes: string | null
}

export function toStorage(row: StorageRecord, farmCode: string): Storage {
  return {
    id: row.id,
    farmId: row.farm_id,
    farmCode,
    code: row.code,
    name: row.name,
    kind: row.kind,
    species: row.species as ManureSpecies,
    form: row.form,
    shape: row.shape as StorageShape | null,
    lengthFt: row.length_ft,
    widthFt: row.width_ft,
    diameterFt: row.diameter_ft,
    depthFt: row.depth_ft,
    sideSlope: row.side_slope,
    freeboardFt: row.freeboard_ft,
    capacity: row.capacity,
    capacityUnit: row.capacity_unit as AmountUnit | null,
    currentAmount: row.current_amount,
    currentAmountOn: row.current_amount_on,
    currentDepthFt: row.current_depth_ft,
    accessPoints: row.access_points,
    notes: row.notes,
  }
}

/** Every storage of the given farms. */
export async function findStoragesOfFarms(db: Kysely<Database>, farmIds: readonly number[]): Promise<StorageRecord[]> {
  const out: StorageRecord[] = []
  for (const part of chunks([...new Set(farmIds)])) {
    if (part.length) out.push(...(await db.selectFrom('storages').selectAll().where('farm_id', 'in', part).execute()))
  }
  return out
}

/** The storages of one farm (or of all farms), ordered by farm and code. */
export async function listStorages(db: Kysely<Database>, options: { farmId?: number } = {}): Promise<Storage[]> {
  let query = db
    .selectFrom('storages')
    .innerJoin('farms', 'farms.id', 'storages.farm_id')
    .selectAll('storages')
    .select('farms.code as farm_code')
    .orderBy('farms.code')
    .orderBy('storages.code')
  if (options.farmId !== undefined) query = query.where('storages.farm_id', '=', options.farmId)
  return (await query.execute()).map((r) => toStorage(r, r.farm_code))
}

/** Looks up farms by code for the rows of a file, reporting unknown farms as problems. */
export async function resolveFarms(
  db: Kysely<Database>,
  rows: readonly { line: number; farmCode: string }[],
  problems: Problem[],
): Promise<Map<string, FarmRecord>> {
  const farms = await findFarmsByCodes(db, rows.map((r) => r.farmCode))
  const wanted = new Set(rows.map((r) => r.farmCode))
  const byCode = new Map(farms.filter((f) => wanted.has(f.code)).map((f) => [f.code, f]))
  const known = farms.map((f) => f.code)
  for (const row of rows) {
    if (!byCode.has(row.farmCode)) {
      problems.push({
        code: 'unknown_farm',
        line: row.line,
        column: 'farm',
        message: unknownCodeMessage('farm', row.farmCode, known, 'import it first with `pitside farms import`'),
      })
    }
  }
  return byCode
}

/** Compares a storages file with the stored storages of its farms. */
export async function prepareStorageImport(db: Kysely<Database>, rows: readonly StorageRow[]): Promise<PreparedImport> {
  const problems: Problem[] = []
  const farms = await resolveFarms(db, rows, problems)
  const stored = await findStoragesOfFarms(db, [...farms.values()].map((f) => f.id))
  const byKey = new Map(stored.map((s) => [`${s.farm_id}\u0000${s.code}`, s]))
  const items: ImportItem[] = []
  const writes: { row: StorageRow; farmId: number; existing?: StorageRecord }[] = []
  for (const row of rows) {
    const farm = farms.get(row.farmCode)
    if (!farm) continue
    const existing = byKey.get(`${farm.id}\u0000${row.code}`)
    if (!existing) {
      const near = stored.find((s) => s.farm_id === farm.id && s.code.toLowerCase() === row.code.toLowerCase())
      if (near) {
        problems.push({ code: 'code_case', line: row.line, column: 'storage', message: `storage ${near.code} exists on farm ${farm.code}; codes are case-sensitive, write ${near.code}` })
        continue
      }
    }
    const changes = diffValues(columnsOf(row).map(([column, to]) => [column, existing?.[column], to]))
    items.push({ line: row.line, key: `${row.farmCode}/${row.code}`, status: statusOf(!existing, changes), changes: existing ? changes : [] })
    if (!existing || changes.length) writes.push({ row, farmId: farm.id, existing })
  }
  return {
    problems,
    items,
    write({ sqlite, now }) {
      for (const { row, farmId, existing } of writes) {
        const values = Object.fromEntries(columnsOf(row).filter(([, v]) => v !== undefined)) as Partial<StorageRecord>
        if (existing) {
          runSync(sqlite, db.updateTable('storages').set({ ...values, updated_at: now }).where('id', '=', existing.id))
        } else {
          runSync(
            sqlite,
            db.insertInto('storages').values({
              ...values,
              farm_id: farmId,
              code: row.code,
              kind: row.kind,
              species: row.species,
              form: row.form,
              created_at: now,
              updated_at: now,
            }),
          )
        }
      }
    },
  }
}

/** A row's stored columns (undefined: the file lacks the column). */
function columnsOf(row: StorageRow): [keyof StorageRecord & string, unknown][] {
  return [
    ['kind', row.kind],
    ['species', row.species],
    ['form', row.form],
    ['name', row.name],
    ['shape', row.shape],
    ['length_ft', row.lengthFt],
    ['width_ft', row.widthFt],
    ['diameter_ft', row.diameterFt],
    ['depth_ft', row.depthFt],
    ['side_slope', row.sideSlope],
    ['freeboard_ft', row.freeboardFt],
    ['capacity', row.capacity],
    ['capacity_unit', row.capacityUnit],
    ['current_amount', row.currentAmount],
    ['current_amount_on', row.currentAmountOn],
    ['current_depth_ft', row.currentDepthFt],
    ['access_points', row.accessPoints],
    ['notes', row.notes],
  ]
}
