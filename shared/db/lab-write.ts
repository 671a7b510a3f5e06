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

/**
 * The numbers of one row, in this order (NaN: null). Values that repeat from row to row (report
 * number, date, form, species, basis, units, lab) travel as indexes into the file's word list,
 * which grows by the batch's new words; the rest of the row's strings travel as strings.
 */
export const rowNumbers = 21
const N_STORAGE = 0, N_EVENT = 1, N_LINE = 2, N_DM = 3, N_TOTAL_N = 4, N_NH4 = 5, N_ORG_N = 6, N_P2O5 = 7, N_K2O = 8
const N_SULFUR = 9, N_PH = 10, N_SUPERSEDES = 11, N_FLAGS = 12, N_REPORT = 13, N_DATE = 14, N_FORM = 15, N_SPECIES = 16
const N_BASIS = 17, N_UNITS = 18, N_PER_UNIT = 19, N_LAB = 20
/** Which of a row's optional strings follow its sample code and reported cells (in this order). */
const F_QUALIFIERS = 1, F_NOTES = 2, F_WARNINGS = 4

/** Rows per batch: big enough that a batch costs little to hand over, small enough to keep memory flat. */
export const batchRows = 4096
/** Rows of a file's first batch for a writer thread: small, so that the writer starts soon after the reading. */
export const firstBatchRows = 256

/** The words (repeated strings) of one file, numbered in the order they first appear. */
export class LabWordList {
  private readonly ids = new Map<string, number>()
  /** words numbered since the last `take` */
  private fresh: string[] = []
  /** per slot (a column of the rows), the last word asked for and its number: rows repeat their neighbours' words */
  private readonly lastWord: (string | null)[] = []
  private readonly lastId: number[] = []

  /** The number of a word in one slot of the rows: the same as `id`, without hashing a word its slot just had. */
  idIn(slot: number, word: string): number {
    if (this.lastWord[slot] === word) return this.lastId[slot]!
    const id = this.id(word)
    this.lastWord[slot] = word
    this.lastId[slot] = id
    return id
  }

  id(word: string): number {
    let id = this.ids.get(word)
    if (id === undefined) {
      id = this.ids.size
      this.ids.set(word, id)
      this.fresh.push(word)
    }
    return id
  }

  /** The words numbered since the last call, to send with a batch. */
  take(): string[] {
    const out = this.fresh
    this.fresh = []
    return out
  }
}

export class LabRowBatch {
  /** per row: sample code, reported cells, then the optional strings its flags name */
  strings: string[] = []
  readonly numbers: Float64Array
  count = 0

  constructor(
    private readonly words: LabWordList,
    private readonly capacity = batchRows,
  ) {
    this.numbers = new Float64Array(capacity * rowNumbers)
  }

  get full(): boolean {
    return this.count === this.capacity
  }

  /** Adds one checked row: its values as stored and the stored result it supersedes, if any. */
  add(row: LabRow, v: LabResultValues, supersedes: number | null): void {
    const s = this.strings
    // the lab's cells as written, without those String(value) gives back (shared/lab-reported.ts)
    s.push(row.sampleId, storedAsReported(v.form, row.units, row.basis) ? row.reportedOdd : row.reported)
    let flags = 0
    if (row.qualifiers !== null) {
      s.push(row.qualifiers)
      flags |= F_QUALIFIERS
    }
    if (row.notes !== null) {
      s.push(row.notes)
      flags |= F_NOTES
    }
    if (v.warnings) {
      s.push(JSON.stringify(v.warnings))
      flags |= F_WARNINGS
    }
    const w = this.words
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
    n[o + N_FLAGS] = flags
    n[o + N_REPORT] = w.idIn(0, row.reportId)
    n[o + N_DATE] = w.idIn(1, row.sampledOn)
    n[o + N_FORM] = w.idIn(2, v.form)
    n[o + N_SPECIES] = w.idIn(3, v.species)
    n[o + N_BASIS] = w.idIn(4, row.basis)
    n[o + N_UNITS] = w.idIn(5, row.units)
    n[o + N_PER_UNIT] = w.idIn(6, v.perUnit)
    n[o + N_LAB] = row.lab === null ? NaN : w.idIn(7, row.lab)
    this.count++
  }
}

export interface LabFileMeta {
  fileName: string
  sha256: string
  message: string | null
  /** the file's size: decides whether the indexes are rebuilt after the rows (see beginLabFileWrite) */
  bytes?: number
}

/**
 * A big file into a table that holds fewer results than the file brings: inserting into the
 * table alone and then building its indexes in one sorted pass costs less than keeping the indexes
 * up to date row by row (random inserts into a B-tree). A result row is 100–200 bytes in a
 * lab file, so bytes / 200 is a low estimate of the file's rows. Only for a connection that does not
 * read lab_results during the import (the writer thread): without its indexes the table is scanned.
 */
export function rebuildsIndexes(bytes: number, storedResults: number): boolean {
  return bytes >= 4 * 1024 * 1024 && bytes / 200 >= storedResults
}

/**
 * The indexes built again: results by storage, whose keys arrive in no order. The index by report
 * and sample is kept up to date as the rows go in: a lab numbers its reports in sequence, so its
 * keys mostly append, which costs less than sorting them all again.
 */
const rebuiltIndexes = new Set(['lab_results_storage_idx'])

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
  /** Inserts a batch's rows, after adding the batch's new words. Throws LabRowWriteError naming the row. */
  insert(newWords: readonly string[], strings: readonly string[], numbers: Float64Array, count: number): void
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
export function beginLabFileWrite(sqlite: SQLite.Database, meta: LabFileMeta, options: { mayRebuildIndexes?: boolean } = {}): LabFileWrite {
  const insertRun = sqlite.prepare(`insert into import_runs (kind, file_name, sha256, outcome, message) values ('labs', ?, ?, 'imported', ?)`)
  const finishRun = sqlite.prepare(`update import_runs set rows = ?, rows_new = ?, rows_unchanged = ?, warnings = ?, outcome = ? where id = ?`)
  const insertReport = sqlite.prepare(`insert into lab_reports (lab, report_number, source_file, source_sha256, import_run_id) values (?, ?, ?, ?, ?)`)
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
  // the indexes to build again before the commit (inside the transaction: a failure or a crash
  // rolls their removal back with the rows)
  let indexes: string[] = []
  if (options.mayRebuildIndexes && meta.bytes !== undefined) {
    const stored = (sqlite.prepare('select max(id) from lab_results').pluck().get() as number | null) ?? 0
    if (rebuildsIndexes(meta.bytes, stored)) {
      const found = (sqlite.prepare(`select name, sql from sqlite_master where type = 'index' and tbl_name = 'lab_results' and sql is not null`).all() as { name: string; sql: string }[]).filter((ix) => rebuiltIndexes.has(ix.name))
      try {
        for (const ix of found) sqlite.exec(`drop index "${ix.name.replace(/"/g, '""')}"`)
      } catch (error) {
        close()
        throw error
      }
      indexes = found.map((ix) => ix.sql)
    }
  }

  // One insert statement per combination of the values that repeat (form, species, basis, units):
  // they and the import run are written into its SQL as literals, so each row binds 18 values, not
  // 24. A result's report number and time are its lab report's and its import run's.
  const literal = (text: string) => `'${text.replace(/'/g, "''")}'`
  const inserts = new Map<string, SQLite.Statement>()
  const insertFor = (form: string, species: string, basis: string, units: string, perUnit: string) => {
    const key = form + '\u0000' + species + '\u0000' + basis + '\u0000' + units + '\u0000' + perUnit
    let statement = inserts.get(key)
    if (!statement) {
      statement = sqlite.prepare(
        `insert into lab_results (lab_report_id, storage_id, sampling_event_id, sample_code, sampled_on, line,
           reported, qualifiers, dry_matter_pct, total_n, ammonium_n, organic_n, p2o5, k2o, sulfur, ph, notes, warnings,
           form, species, basis, units, per_unit, import_run_id)
         values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?,
           ${literal(form)}, ${literal(species)}, ${literal(basis)}, ${literal(units)}, ${literal(perUnit)}, ${runId})`,
      )
      inserts.set(key, statement)
    }
    return statement
  }
  const words: string[] = []
  const reports = new Map<number, number>() // word of the report number → lab report id
  const storages = new Set<number>()
  const events = new Set<number>()
  let lastStorage = -1
  const lastWords = [-1, -1, -1, -1, -1] // form, species, basis, units, per unit of the statement in use
  let insert: SQLite.Statement | null = null
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
    insert(newWords, s, n, rows) {
      for (const w of newWords) words.push(w)
      let k = 0
      for (let i = 0; i < rows; i++) {
        const o = i * rowNumbers
        const flags = n[o + N_FLAGS]!
        try {
          const reportWord = n[o + N_REPORT]!
          let reportId = reports.get(reportWord)
          if (reportId === undefined) {
            const lab = n[o + N_LAB]!
            reportId = Number(insertReport.run(lab !== lab ? null : words[lab], words[reportWord]!, meta.fileName, meta.sha256, runId).lastInsertRowid)
            reports.set(reportWord, reportId)
          }
          const storageId = n[o + N_STORAGE]!
          if (storageId !== lastStorage) {
            storages.add(storageId)
            lastStorage = storageId
          }
          const eventId = num(n[o + N_EVENT]!)
          if (eventId !== null) events.add(eventId)
          const form = n[o + N_FORM]!, species = n[o + N_SPECIES]!, basis = n[o + N_BASIS]!, units = n[o + N_UNITS]!, perUnit = n[o + N_PER_UNIT]!
          if (!insert || form !== lastWords[0] || species !== lastWords[1] || basis !== lastWords[2] || units !== lastWords[3] || perUnit !== lastWords[4]) {
            insert = insertFor(words[form]!, words[species]!, words[basis]!, words[units]!, words[perUnit]!)
            lastWords[0] = form
            lastWords[1] = species
            lastWords[2] = basis
            lastWords[3] = units
            lastWords[4] = perUnit
          }
          // the values as arguments, not one array: better-sqlite3 reads an array's items one property look-up at a time
          const sample = s[k++]
          const reported = s[k++]
          const qualifiers = flags & F_QUALIFIERS ? s[k++] : null
          const notes = flags & F_NOTES ? s[k++] : null
          const warnings = flags & F_WARNINGS ? s[k++] : null
          const { lastInsertRowid } = insert.run(
            reportId, storageId, eventId, sample, words[n[o + N_DATE]!], n[o + N_LINE], reported, qualifiers,
            num(n[o + N_DM]!), n[o + N_TOTAL_N], num(n[o + N_NH4]!), num(n[o + N_ORG_N]!), num(n[o + N_P2O5]!), num(n[o + N_K2O]!),
            num(n[o + N_SULFUR]!), num(n[o + N_PH]!), notes, warnings,
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
      if (k !== s.length) throw new Error(`a batch of ${rows} rows came with ${s.length} strings, ${k} of them read`)
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
        for (const sql of indexes) sqlite.exec(sql)
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
