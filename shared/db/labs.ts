import type SQLite from 'better-sqlite3'
import type { LabHistory, LabStorage } from '../lab-results.ts'

/**
 * Lab-result queries for the import's hot path: look-ups loaded once per batch or once per
 * storage/report (never per row). Writing a file's results: shared/db/lab-writer.ts.
 */

/** Every farm and storage, keyed by lower-case codes, for resolving the codes in lab files. */
export function findLabStorages(sqlite: SQLite.Database): {
  storages: Map<string, LabStorage>
  farms: Map<string, { code: string; storages: string[] }>
} {
  const farms = new Map<string, { code: string; storages: string[] }>()
  for (const f of sqlite.prepare('select code from farms order by code').all() as { code: string }[]) {
    farms.set(f.code.toLowerCase(), { code: f.code, storages: [] })
  }
  const storages = new Map<string, LabStorage>()
  const rows = sqlite
    .prepare(
      `select s.id, f.code as farm_code, s.code, s.kind, s.species, s.form
       from storages s join farms f on f.id = s.farm_id order by f.code, s.code`,
    )
    .all() as { id: number; farm_code: string; code: string; kind: string; species: string; form: 'liquid' | 'solid' }[]
  for (const r of rows) {
    storages.set(r.farm_code.toLowerCase() + '\u0000' + r.code.toLowerCase(), {
      id: r.id,
      farmCode: r.farm_code,
      code: r.code,
      kind: r.kind,
      species: r.species,
      form: r.form,
    })
    farms.get(r.farm_code.toLowerCase())?.storages.push(r.code)
  }
  return { storages, farms }
}

const historyColumns = ['total_n', 'ammonium_n', 'p2o5', 'k2o', 'dry_matter_pct'] as const

/**
 * A reader of each storage's current (not superseded) results: count, mean and sample standard
 * deviation per analysis column. One indexed query per storage, the first time it is asked for.
 */
export function labHistoryReader(sqlite: SQLite.Database, importRunId: number | null = null): (storageId: number) => LabHistory | undefined {
  const select = historyColumns.map((c) => `count(${c}) as ${c}_n, avg(${c}) as ${c}_mean, avg(${c} * ${c}) as ${c}_sq`).join(', ')
  // results of the import run being written are not history (whichever connection writes them)
  const query = sqlite.prepare(`select ${select} from lab_results where storage_id = ? and superseded_by is null and import_run_id is not ?`)
  const cache = new Map<number, LabHistory | undefined>()
  return (storageId) => {
    if (cache.has(storageId)) return cache.get(storageId)
    const r = query.get(storageId, importRunId) as Record<string, number>
    let h: LabHistory | undefined
    for (const c of historyColumns) {
      const n = r[`${c}_n`]!
      if (!n) continue
      const mean = r[`${c}_mean`]!
      const variance = n > 1 ? Math.max(0, ((r[`${c}_sq`]! - mean * mean) * n) / (n - 1)) : 0
      ;(h ??= {})[c] = { n, mean, sd: Math.sqrt(variance) }
    }
    cache.set(storageId, h)
    return h
  }
}

/** Every recorded sampling event by sample code (one small row per storage visit). */
export function findSamplingEvents(sqlite: SQLite.Database): Map<string, { id: number; storageId: number }> {
  const out = new Map<string, { id: number; storageId: number }>()
  const rows = sqlite.prepare(`select id, storage_id, sample_code from sampling_events`).all() as { id: number; storage_id: number; sample_code: string }[]
  for (const r of rows) out.set(r.sample_code, { id: r.id, storageId: r.storage_id })
  return out
}

/** The earlier import of a lab file with this sha256, or null. */
export function findLabImportBySha(sqlite: SQLite.Database, sha256: string): { id: number; fileName: string; rows: number; createdAt: string } | null {
  const r = sqlite
    .prepare(`select id, file_name, rows, created_at from import_runs where kind = 'labs' and sha256 = ? and outcome in ('imported', 'replaced') order by id limit 1`)
    .get(sha256) as { id: number; file_name: string; rows: number; created_at: string } | undefined
  return r ? { id: r.id, fileName: r.file_name, rows: r.rows, createdAt: r.created_at } : null
}

/** A stored current result, reduced to what decides whether a re-imported row changed. */
export interface StoredLabResult {
  id: number
  signature: string
}

/** What makes two results of one report and sample the same result. */
export function labResultSignature(r: {
  storageId: number
  sampledOn: string
  basis: string
  units: string
  dryMatterPct: number | null
  totalN: number
  ammoniumN: number | null
  p2o5: number | null
  k2o: number | null
  sulfur: number | null
  ph: number | null
}): string {
  return [r.storageId, r.sampledOn, r.basis, r.units, r.dryMatterPct, r.totalN, r.ammoniumN, r.p2o5, r.k2o, r.sulfur, r.ph].join('|')
}

/**
 * A reader of the current (not superseded) results of one lab report, keyed by sample code:
 * one indexed query per report number, the first time it is asked for.
 */
export function currentLabResultsReader(sqlite: SQLite.Database): (reportNumber: string) => Map<string, StoredLabResult> {
  const query = sqlite.prepare(
    `select r.id, r.sample_code, r.storage_id, r.sampled_on, k.basis, k.units, r.dry_matter_pct, r.total_n, r.ammonium_n, r.p2o5, r.k2o, r.sulfur, r.ph
     from lab_reports p join lab_results r on r.lab_report_id = p.id join lab_result_kinds k on k.id = r.kind_id
     where p.report_number = ? and r.superseded_by is null`,
  )
  const cache = new Map<string, Map<string, StoredLabResult>>()
  // nothing stored yet (a first import): no report has results, and no query needs to say so
  const none = new Map<string, StoredLabResult>()
  if (sqlite.prepare('select 1 from lab_results limit 1').pluck().get() === undefined) return () => none
  // the rows of one report come one after the other: the last report's results without hashing its number again
  let lastNumber: string | null = null
  let last = none
  return (reportNumber) => {
    if (reportNumber === lastNumber) return last
    let found = cache.get(reportNumber)
    if (!found) found = readReport(reportNumber)
    lastNumber = reportNumber
    last = found
    return found
  }

  function readReport(reportNumber: string): Map<string, StoredLabResult> {
    const found = new Map<string, StoredLabResult>()
    for (const r of query.all(reportNumber) as Record<string, any>[]) {
      found.set(r.sample_code, {
        id: r.id,
        signature: labResultSignature({
          storageId: r.storage_id,
          sampledOn: r.sampled_on,
          basis: r.basis,
          units: r.units,
          dryMatterPct: r.dry_matter_pct,
          totalN: r.total_n,
          ammoniumN: r.ammonium_n,
          p2o5: r.p2o5,
          k2o: r.k2o,
          sulfur: r.sulfur,
          ph: r.ph,
        }),
      })
    }
    cache.set(reportNumber, found)
    return found
  }
}
