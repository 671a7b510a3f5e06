import type SQLite from 'better-sqlite3'
import { AppError } from '../errors.ts'
import type { LabRow } from '../lab-csv.ts'
import { storedAsReported } from '../lab-reported.ts'
import type { LabResultValues } from '../lab-results.ts'

/**
 * Writing one lab file's results: ONE transaction, all or nothing, on the connection of the thread
 * that owns it. Rows travel in batches: the strings of a batch in one array (joined by NUL, which
 * a lab file cannot contain, when the batch crosses to a worker thread) and its numbers in one
 * Float64Array, so that handing a batch to the writer costs two copies of flat memory instead of
 * one object per row. `LabFileWrite` applies batches on its own connection; shared/db/lab-writer.ts
 * runs it in this thread or in a worker (shared/db/lab-write-worker.ts) beside the parser.
 */

/** The strings of one row, in this order. */
export const rowStrings = 13
const S_REPORT = 0, S_SAMPLE = 1, S_DATE = 2, S_FORM = 3, S_SPECIES = 4, S_BASIS = 5, S_UNITS = 6, S_REPORTED = 7
const S_QUALIFIERS = 8, S_PER_UNIT = 9, S_NOTES = 10, S_WARNINGS = 11, S_LAB = 12
/** The numbers of one row, in this order (NaN: null). */
export const rowNumbers = 13
const N_STORAGE = 0, N_EVENT = 1, N_LINE = 2, N_DM = 3, N_TOTAL_N = 4, N_NH4 = 5, N_ORG_N = 6, N_P2O5 = 7, N_K2O = 8
const N_SULFUR = 9, N_PH = 10, N_SUPERSEDES = 11, N_FLAGS = 12
const F_QUALIFIERS = 1, F_NOTES = 2, F_WARNINGS = 4, F_LAB = 8

/** Rows per batch: big enough that a batch costs little to hand over, small enough to keep memory flat. */
export const batchRows = 4096

export class LabRowBatch {
  strings: string[] = []
  numbers = new Float64Array(batchRows * rowNumbers)
  count = 0

  get full(): boolean {
    return this.count === batchRows
  }

  /** Adds one checked row: its values as stored and the stored result it supersedes, if any. */
  add(row: LabRow, v: LabResultValues, supersedes: number | null): void {
    const s = this.strings
    // the lab's cells as written, without those String(value) gives back (shared/lab-reported.ts)
    const reported = storedAsReported(v.form, row.units, row.basis) ? row.reportedOdd : row.reported
    const warnings = v.warnings ? JSON.stringify(v.warnings) : ''
    s.push(row.reportId, row.sampleId, row.sampledOn, v.form, v.species, row.basis, row.units, reported,
      row.qualifiers ?? '', v.perUnit, row.notes ?? '', warnings, row.lab ?? '')
    const n = this.numbers
    const o = this.count * rowNumbers
    n[o + N_STORAGE] = v.storageId
    n[o + N_EVENT] = v.samplingEventId ?? NaN
    n[o + N_LINE] = row.line
    n[o + N_DM] = v.dryMatterPct ?? NaN
    n[o + N_TOTAL_N] = v.totalN
    n[o + N_NH4] = v.ammoniumN ?? NaN
    n[o + N_ORG_N] = v.organicN ?? NaN
    n[o + N_P2O5] = v.p2o5 ?? NaN
    n[o + N_K2O] = v.k2o ?? NaN
    n[o + N_SULFUR] = v.sulfur ?? NaN
    n[o + N_PH] = row.ph ?? NaN
    n[o + N_SUPERSEDES] = supersedes ?? NaN
    n[o + N_FLAGS] = (row.qualifiers !== null ? F_QUALIFIERS : 0) | (row.notes !== null ? F_NOTES : 0) | (v.warnings ? F_WARNINGS : 0) | (row.lab !== null ? F_LAB : 0)
    this.count++
  }

}

export interface LabFileMeta {
  fileName: string
  sha256: string
  message: string | null
}

export interface LabFileCounts {
  /** rows in the file */
  rows: number
  unchanged: number
  warnings: number
}

/** A failed insert: the line of the row and SQLite's error (its `code` tells disk full from a bug). */
export class LabRowWriteError extends Error {
  constructor(
    readonly line: number,
    /** SQLite's code (SQLITE_FULL, …), read by appErrorFromSqlite */
    readonly code: string | undefined,
    message: string,
  ) {
    super(message)
  }
}

const num = (x: number) => (x !== x ? null : x)

export interface LabFileWrite {
  readonly runId: number
  /** results added so far */
  readonly count: number
  readonly replaced: number
  /** Inserts a batch's rows (strings as an array). Throws LabRowWriteError naming the row. */
  insert(strings: readonly string[], numbers: Float64Array, count: number): void
  /** Checks the foreign keys, records the counts and commits; returns the import run id. */
  commit(counts: LabFileCounts): number
  /** Rolls the file back (nothing of it stays) and restores the connection's settings. */
  rollback(): void
}

/**
 * Opens the file's transaction (`begin immediate`: the write lock is held from here to the
 * commit) and its import run. Foreign keys are checked once per distinct storage and sampling
 * event at the commit instead of by SQLite for every row (a third of the write time): no other
 * writer can remove a storage while the lock is held, and the import run and lab reports are rows
 * of this same transaction.
 */
export function beginLabFileWrite(sqlite: SQLite.Database, meta: LabFileMeta): LabFileWrite {
  const insertRun = sqlite.prepare(`insert into import_runs (kind, file_name, sha256, outcome, message) values ('labs', ?, ?, 'imported', ?)`)
  const finishRun = sqlite.prepare(`update import_runs set rows = ?, rows_new = ?, rows_unchanged = ?, warnings = ?, outcome = ? where id = ?`)
  const insertReport = sqlite.prepare(`insert into lab_reports (lab, report_number, source_file, source_sha256, import_run_id) values (?, ?, ?, ?, ?)`)
  const insertResult = sqlite.prepare(
    `insert into lab_results (lab_report_id, storage_id, sampling_event_id, report_number, sample_code, sampled_on, line,
       form, species, basis, units, reported, qualifiers, per_unit, dry_matter_pct, total_n, ammonium_n, organic_n,
       p2o5, k2o, sulfur, ph, notes, warnings, import_run_id)
     values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  )
  const supersede = sqlite.prepare(`update lab_results set superseded_by = ? where id = ?`)
  const storageExists = sqlite.prepare(`select 1 from storages where id = ?`).pluck()
  const eventExists = sqlite.prepare(`select 1 from sampling_events where id = ?`).pluck()

  const foreignKeys = sqlite.pragma('foreign_keys', { simple: true }) as number
  if (foreignKeys) sqlite.pragma('foreign_keys = OFF')
  let open = false
  const close = () => {
    // SQLite may already have rolled back (a full disk at commit); rolling back again would hide why
    if (open && sqlite.inTransaction) sqlite.exec('rollback')
    open = false
    if (foreignKeys) sqlite.pragma('foreign_keys = ON')
  }
  let runId: number
  try {
    sqlite.exec('begin immediate')
    open = true
    runId = Number(insertRun.run(meta.fileName, meta.sha256, meta.message).lastInsertRowid)
  } catch (error) {
    close()
    throw error
  }
  const reports = new Map<string, number>()
  const storages = new Set<number>()
  const events = new Set<number>()
  let lastStorage = -1
  let count = 0
  let replaced = 0

  return {
    runId,
    get count() {
      return count
    },
    get replaced() {
      return replaced
    },
    insert(s, n, rows) {
      for (let i = 0; i < rows; i++) {
        const b = i * rowStrings
        const o = i * rowNumbers
        const flags = n[o + N_FLAGS]!
        try {
          const reportNumber = s[b + S_REPORT]!
          let reportId = reports.get(reportNumber)
          if (reportId === undefined) {
            reportId = Number(insertReport.run(flags & F_LAB ? s[b + S_LAB] : null, reportNumber, meta.fileName, meta.sha256, runId).lastInsertRowid)
            reports.set(reportNumber, reportId)
          }
          const storageId = n[o + N_STORAGE]!
          if (storageId !== lastStorage) {
            storages.add(storageId)
            lastStorage = storageId
          }
          const eventId = num(n[o + N_EVENT]!)
          if (eventId !== null) events.add(eventId)
          const { lastInsertRowid } = insertResult.run(
            reportId, storageId, eventId, reportNumber, s[b + S_SAMPLE], s[b + S_DATE], n[o + N_LINE],
            s[b + S_FORM], s[b + S_SPECIES], s[b + S_BASIS], s[b + S_UNITS], s[b + S_REPORTED],
            flags & F_QUALIFIERS ? s[b + S_QUALIFIERS] : null, s[b + S_PER_UNIT],
            num(n[o + N_DM]!), n[o + N_TOTAL_N], num(n[o + N_NH4]!), num(n[o + N_ORG_N]!), num(n[o + N_P2O5]!),
            num(n[o + N_K2O]!), num(n[o + N_SULFUR]!), num(n[o + N_PH]!),
            flags & F_NOTES ? s[b + S_NOTES] : null, flags & F_WARNINGS ? s[b + S_WARNINGS] : null, runId,
          )
          const supersedes = num(n[o + N_SUPERSEDES]!)
          if (supersedes !== null) {
            supersede.run(lastInsertRowid, supersedes)
            replaced++
          }
          count++
        } catch (error) {
          throw new LabRowWriteError(n[o + N_LINE]!, (error as { code?: string })?.code, (error as Error)?.message ?? String(error))
        }
      }
    },
    commit(counts) {
      try {
        for (const id of storages) {
          if (!storageExists.get(id)) throw new AppError('conflict', `storage ${id} was removed while the lab file was being imported; nothing was written`)
        }
        for (const id of events) {
          if (!eventExists.get(id)) throw new AppError('conflict', `sampling event ${id} was removed while the lab file was being imported; nothing was written`)
        }
        finishRun.run(counts.rows, count, counts.unchanged, counts.warnings, replaced > 0 ? 'replaced' : 'imported', runId)
        sqlite.exec('commit')
        open = false
        return runId
      } finally {
        close()
      }
    },
    rollback() {
      close()
    },
  }
}
