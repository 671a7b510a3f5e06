import { sql, type Kysely, type Selectable } from 'kysely'
import { AppError, type Problem } from '../errors.ts'
import type { FarmRow } from '../farm-csv.ts'
import { diffValues, statusOf, unknownCodeMessage, type ImportItem, type PreparedImport } from './record-import.ts'
import { chunks, runSync } from './run-sync.ts'
import type { Database } from './schema.ts'

export interface Farm {
  id: number
  organizationId: number
  code: string
  name: string
  operatorName: string | null
  contactEmail: string | null
  contactPhone: string | null
  address: string | null
  region: string | null
  notes: string | null
  createdAt: string
  updatedAt: string
}

export type FarmRecord = Selectable<Database['farms']>

export function toFarm(row: FarmRecord): Farm {
  return {
    id: row.id,
    organizationId: row.organization_id,
    code: row.code,
    name: row.name,
    operatorName: row.operator_name,
    contactEmail: row.contact_email,
    contactPhone: row.contact_phone,
    address: row.address,
    region: row.region,
    notes: row.notes,
    createdAt: row.created_at,
    updatedAt: row.updated_at,
  }
}

/** Farms by code, compared without case so that a near miss can be named. */
export async function findFarmsByCodes(db: Kysely<Database>, codes: readonly string[]): Promise<FarmRecord[]> {
  const lower = [...new Set(codes.map((c) => c.toLowerCase()))]
  const out: FarmRecord[] = []
  for (const part of chunks(lower)) {
    out.push(...(await db.selectFrom('farms').selectAll().where(sql<string>`lower(code)`, 'in', part).execute()))
  }
  return out
}

/** The farm with this code; throws `not_found` naming the farms that exist. */
export async function requireFarm(db: Kysely<Database>, code: string): Promise<Farm> {
  const rows = await findFarmsByCodes(db, [code])
  const exact = rows.find((r) => r.code === code)
  if (exact) return toFarm(exact)
  const known = (await db.selectFrom('farms').select('code').orderBy('code').limit(20).execute()).map((r) => r.code)
  throw new AppError(
    'not_found',
    unknownCodeMessage('farm', code, rows.map((r) => r.code), known.length ? `known: ${known.join(', ')}` : 'no farms yet; see `pitside farms import`'),
  )
}

export interface FarmSummary extends Farm {
  organizationCode: string
  storages: number
  fields: number
  samples: number
}

/** Every farm (of one organization when given), with counts of its storages, fields and samples. */
export async function listFarms(db: Kysely<Database>, options: { organizationCode?: string } = {}): Promise<FarmSummary[]> {
  let query = db
    .selectFrom('farms')
    .innerJoin('organizations', 'organizations.id', 'farms.organization_id')
    .selectAll('farms')
    .select((eb) => [
      'organizations.code as organization_code',
      eb.selectFrom('storages').whereRef('storages.farm_id', '=', 'farms.id').select(eb.fn.countAll<number>().as('n')).as('storages'),
      eb.selectFrom('fields').whereRef('fields.farm_id', '=', 'farms.id').select(eb.fn.countAll<number>().as('n')).as('fields'),
      eb
        .selectFrom('sampling_events')
        .innerJoin('storages', 'storages.id', 'sampling_events.storage_id')
        .whereRef('storages.farm_id', '=', 'farms.id')
        .select(eb.fn.countAll<number>().as('n'))
        .as('samples'),
    ])
    .orderBy('farms.code')
  if (options.organizationCode) query = query.where('organizations.code', '=', options.organizationCode)
  const rows = await query.execute()
  return rows.map((r) => ({
    ...toFarm(r),
    organizationCode: r.organization_code,
    storages: Number(r.storages ?? 0),
    fields: Number(r.fields ?? 0),
    samples: Number(r.samples ?? 0),
  }))
}

/**
 * Compares a farms file with the stored farms of `organizationId`. A farm code that belongs to
 * another organization is an error (codes are unique across the database).
 */
export async function prepareFarmImport(
  db: Kysely<Database>,
  rows: readonly FarmRow[],
  organization: { id: number; code: string },
): Promise<PreparedImport> {
  const problems: Problem[] = []
  const stored = await findFarmsByCodes(db, rows.map((r) => r.code))
  const byCode = new Map(stored.map((f) => [f.code, f]))
  const orgCodes = new Map(
    (await db.selectFrom('organizations').select(['id', 'code']).execute()).map((o) => [o.id, o.code]),
  )
  const items: ImportItem[] = []
  const writes: { row: FarmRow; existing?: FarmRecord; changes: ReturnType<typeof diffValues> }[] = []
  for (const row of rows) {
    const existing = byCode.get(row.code)
    if (!existing) {
      const near = stored.find((f) => f.code.toLowerCase() === row.code.toLowerCase())
      if (near) {
        problems.push({
          code: 'code_case',
          line: row.line,
          column: 'farm',
          message: `farm ${near.code} exists; codes are case-sensitive, write ${near.code} (or use a different code)`,
        })
        continue
      }
    } else if (existing.organization_id !== organization.id) {
      problems.push({
        code: 'other_organization',
        line: row.line,
        column: 'farm',
        message: `farm ${row.code} belongs to organization ${orgCodes.get(existing.organization_id) ?? existing.organization_id}, not ${organization.code}`,
      })
      continue
    }
    const changes = diffValues([
      ['name', existing?.name, row.name],
      ['operator_name', existing?.operator_name, row.operatorName],
      ['contact_email', existing?.contact_email, row.contactEmail],
      ['contact_phone', existing?.contact_phone, row.contactPhone],
      ['address', existing?.address, row.address],
      ['region', existing?.region, row.region],
      ['notes', existing?.notes, row.notes],
    ])
    items.push({ line: row.line, key: row.code, status: statusOf(!existing, changes), changes: existing ? changes : [] })
    if (!existing || changes.length) writes.push({ row, existing, changes })
  }
  return {
    problems,
    items,
    write({ sqlite, now }) {
      for (const { row, existing } of writes) {
        const values = {
          name: row.name,
          ...(row.operatorName !== undefined ? { operator_name: row.operatorName } : {}),
          ...(row.contactEmail !== undefined ? { contact_email: row.contactEmail } : {}),
          ...(row.contactPhone !== undefined ? { contact_phone: row.contactPhone } : {}),
          ...(row.address !== undefined ? { address: row.address } : {}),
          ...(row.region !== undefined ? { region: row.region } : {}),
          ...(row.notes !== undefined ? { notes: row.notes } : {}),
        }
        if (existing) {
          runSync(sqlite, db.updateTable('farms').set({ ...values, updated_at: now }).where('id', '=', existing.id))
        } else {
          runSync(
            sqlite,
            db.insertInto('farms').values({ ...values, organization_id: organization.id, code: row.code, created_at: now, updated_at: now }),
          )
        }
      }
    },
  }
}
