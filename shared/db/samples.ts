import type { Kysely, Selectable } from 'kysely'
import type { Problem } from '../errors.ts'
import { accessPointLabels } from '../storage-csv.ts'
import type { SampleRow, SamplerKind } from '../sample-csv.ts'
import { diffValues, statusOf, type ImportItem, type PreparedImport } from './record-import.ts'
import { chunks, runSync } from './run-sync.ts'
import type { Database } from './schema.ts'
import { findStoragesOfFarms, resolveFarms } from './storages.ts'

export type SamplingEventRecord = Selectable<Database['sampling_events']>

export interface SamplingEvent {
  id: number
  sampleCode: string
  farmCode: string
  storageCode: string
  sampledOn: string
  agitated: boolean | null
  samplerKind: SamplerKind | null
  cores: number | null
  accessPoints: string[]
  sampledBy: string | null
  notes: string | null
  /** Lab results recorded for this sample (not superseded). */
  labResults: number
}

export function toSamplingEvent(
  row: SamplingEventRecord,
  context: { farmCode: string; storageCode: string; labResults: number },
): SamplingEvent {
  return {
    id: row.id,
    sampleCode: row.sample_code,
    farmCode: context.farmCode,
    storageCode: context.storageCode,
    sampledOn: row.sampled_on,
    agitated: row.agitated === null ? null : row.agitated !== 0,
    samplerKind: row.sampler_kind as SamplerKind | null,
    cores: row.cores,
    accessPoints: row.access_points_sampled ? row.access_points_sampled.split(',') : [],
    sampledBy: row.sampled_by,
    notes: row.notes,
    labResults: context.labResults,
  }
}

/** Sampling events of a farm (optionally one storage and a date range), oldest first. */
export async function listSamplingEvents(
  db: Kysely<Database>,
  options: { farmId?: number; storageId?: number; from?: string; to?: string },
): Promise<SamplingEvent[]> {
  let query = db
    .selectFrom('sampling_events')
    .innerJoin('storages', 'storages.id', 'sampling_events.storage_id')
    .innerJoin('farms', 'farms.id', 'storages.farm_id')
    .selectAll('sampling_events')
    .select((eb) => [
      'farms.code as farm_code',
      'storages.code as storage_code',
      eb
        .selectFrom('lab_results')
        .whereRef('lab_results.sampling_event_id', '=', 'sampling_events.id')
        .where('lab_results.superseded_by', 'is', null)
        .select(eb.fn.countAll<number>().as('n'))
        .as('lab_results'),
    ])
    .orderBy('sampling_events.sampled_on')
    .orderBy('farms.code')
    .orderBy('storages.code')
    .orderBy('sampling_events.sample_code')
  if (options.farmId !== undefined) query = query.where('storages.farm_id', '=', options.farmId)
  if (options.storageId !== undefined) query = query.where('sampling_events.storage_id', '=', options.storageId)
  if (options.from) query = query.where('sampling_events.sampled_on', '>=', options.from)
  if (options.to) query = query.where('sampling_events.sampled_on', '<=', options.to)
  return (await query.execute()).map((r) =>
    toSamplingEvent(r, { farmCode: r.farm_code, storageCode: r.storage_code, labResults: Number(r.lab_results ?? 0) }),
  )
}

/**
 * Compares sampling events with the stored ones, keyed by sample id (unique across the database).
 * A sample id already recorded for another storage is an error.
 */
export async function prepareSampleImport(db: Kysely<Database>, rows: readonly SampleRow[]): Promise<PreparedImport> {
  const problems: Problem[] = []
  const farms = await resolveFarms(db, rows, problems)
  const storages = await findStoragesOfFarms(db, [...farms.values()].map((f) => f.id))
  const storageByKey = new Map(storages.map((s) => [`${s.farm_id}\u0000${s.code}`, s]))
  const stored: (SamplingEventRecord & { farm_code: string; storage_code: string })[] = []
  for (const part of chunks(rows.map((r) => r.sampleCode))) {
    if (!part.length) continue
    stored.push(
      ...(await db
        .selectFrom('sampling_events')
        .innerJoin('storages', 'storages.id', 'sampling_events.storage_id')
        .innerJoin('farms', 'farms.id', 'storages.farm_id')
        .selectAll('sampling_events')
        .select(['farms.code as farm_code', 'storages.code as storage_code'])
        .where('sample_code', 'in', part)
        .execute()),
    )
  }
  const byCode = new Map(stored.map((s) => [s.sample_code, s]))
  const items: ImportItem[] = []
  const writes: { storageId: number; row: SampleRow; existingId?: number }[] = []
  for (const row of rows) {
    const farm = farms.get(row.farmCode)
    if (!farm) continue
    const storage = storageByKey.get(`${farm.id}\u0000${row.storageCode}`)
    if (!storage) {
      const known = storages.filter((s) => s.farm_id === farm.id).map((s) => s.code).sort()
      problems.push({
        code: 'unknown_storage',
        line: row.line,
        column: 'storage',
        message: `storage ${row.storageCode} is not a storage of farm ${farm.code} (${known.length ? `known: ${known.join(', ')}` : 'it has none yet'})`,
      })
      continue
    }
    const existing = byCode.get(row.sampleCode)
    if (existing && existing.storage_id !== storage.id) {
      problems.push({
        code: 'sample_of_other_storage',
        line: row.line,
        column: 'sample_id',
        message: `sample ${row.sampleCode} is recorded for storage ${existing.farm_code}/${existing.storage_code}; a sample id belongs to one storage`,
      })
      continue
    }
    if (row.accessPoints && storage.access_points) {
      const labels = accessPointLabels(storage.access_points)
      const unknown = row.accessPoints.filter((p) => /^[A-Z]$/.test(p) && !labels.includes(p))
      if (unknown.length) {
        problems.push({
          code: 'unknown_access_point',
          severity: 'warning',
          line: row.line,
          column: 'access_points',
          message: `storage ${storage.code} has access points ${labels.join(', ')}; ${unknown.join(', ')} is not one of them`,
        })
      }
    }
    const changes = diffValues(columnsOf(row).map(([column, to]) => [fileColumn[column] ?? column, existing?.[column], to]))
    items.push({ line: row.line, key: row.sampleCode, status: statusOf(!existing, changes), changes: existing ? changes : [] })
    if (!existing || changes.length) writes.push({ storageId: storage.id, row, existingId: existing?.id })
  }
  return {
    problems,
    items,
    write({ sqlite, importRunId }) {
      for (const { storageId, row, existingId } of writes) {
        const values = Object.fromEntries(columnsOf(row).filter(([, v]) => v !== undefined)) as Partial<SamplingEventRecord>
        if (existingId !== undefined) runSync(sqlite, db.updateTable('sampling_events').set(values).where('id', '=', existingId))
        else {
          runSync(
            sqlite,
            db.insertInto('sampling_events').values({
              ...values,
              storage_id: storageId,
              sample_code: row.sampleCode,
              sampled_on: row.sampledOn,
              import_run_id: importRunId || null,
            }),
          )
        }
      }
    },
  }
}

const fileColumn: Record<string, string> = { access_points_sampled: 'access_points' }

function columnsOf(row: SampleRow): [keyof SamplingEventRecord & string, unknown][] {
  return [
    ['sampled_on', row.sampledOn],
    ['agitated', row.agitated === undefined ? undefined : row.agitated === null ? null : row.agitated ? 1 : 0],
    ['sampler_kind', row.samplerKind],
    ['cores', row.cores],
    ['access_points_sampled', row.accessPoints === undefined ? undefined : row.accessPoints === null || !row.accessPoints.length ? null : row.accessPoints.join(',')],
    ['sampled_by', row.sampledBy],
    ['notes', row.notes],
  ]
}
