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
 * number, date, lab, and the kind: form, species, basis, units and per-unit together) travel as
 * indexes into the file's word list, which grows by the batch's new words; the rest of the row's
 * strings travel as strings.
 */
export const rowNumbers = 17
const N_STORAGE = 0, N_EVENT = 1, N_LINE = 2, N_DM = 3, N_TOTAL_N = 4, N_NH4 = 5, N_ORG_N = 6, N_P2O5 = 7, N_K2O = 8
const N_SULFUR = 9, N_PH = 10, N_SUPERSEDES = 11, N_FLAGS = 12, N_REPORT = 13, N_DATE = 14, N_KIND = 15, N_LAB = 16
/** Which of a row's optional strings follow its sample code and reported cells (in this order). */
const F_QUALIFIERS = 1, F_NOTES = 2, F_WARNINGS = 4

/** Values bound per result row (the import run is written into the statement); the row's line is value P_LINE. */
const rowParameters = 19
const P_LINE = 5
/** Rows per insert statement (SQLite allows 32,766 values in one statement). */
export const chunkRows = 128

/** Rows per batch: big enough that a batch costs little to hand over, small enough to keep memory flat. */
export const batchRows = 4096
/** Rows of a file's first batch for a writer thread: small, so that the writer starts soon after the reading. */
export const firstBatchRows = 256

/** How many of a file's kinds LabWordList.kindId compares value by value. */
const kindsCompared = 16

/**
 * The words (repeated strings) of one file, numbered in the order they first appear: the same word
 * has one number (`id`, `idIn`), except for `runIn`, whose words may be numbered again.
 */
export class LabWordList {
  private readonly ids = new Map<string, number>()
  /** words numbered so far */
  private count = 0
  /** words numbered since the last `take` */
  private fresh: string[] = []
  /** per slot (a column of the rows), the last word asked for and its number: rows repeat their neighbours' words */
  private readonly lastWord: (string | null)[] = []
  private readonly lastId: number[] = []
  /** the kinds asked for so far, their five values one after the other, and their numbers */
  private readonly kindValues: string[] = []
  private readonly kindIds: number[] = []

  /** The number of a word in one slot of the rows: the same as `id`, without hashing a word its slot just had. */
  idIn(slot: number, word: string): number {
    if (this.lastWord[slot] === word) return this.lastId[slot]!
    const id = this.id(word)
    this.lastWord[slot] = word
    this.lastId[slot] = id
    return id
  }

  /**
   * The number of a word in one slot whose words come in runs (a report's number and date, on each
   * of its rows): the number the slot just had while the word stays the same, else a new number,
   * even for a word seen before, without looking it up. The reader of these words must not take
   * equal numbers for equal words or the other way round (the writer finds reports by their text).
   */
  runIn(slot: number, word: string): number {
    if (this.lastWord[slot] === word) return this.lastId[slot]!
    const id = this.count++
    this.fresh.push(word)
    this.lastWord[slot] = word
    this.lastId[slot] = id
    return id
  }

  /**
   * The number of a result's kind (what lab_result_kinds holds), as the word of its five values
   * (JSON: any text may be in them). A file has a handful of kinds, and neighbouring rows (a
   * report's storages) alternate between a few: the first kinds are compared value by value
   * (mostly the same string objects), without making their word again.
   */
  kindId(form: string, species: string, basis: string, units: string, perUnit: string): number {
    const k = this.kindValues
    for (let i = 0; i < k.length; i += 5) {
      if (k[i] === form && k[i + 1] === species && k[i + 2] === basis && k[i + 3] === units && k[i + 4] === perUnit) return this.kindIds[i / 5]!
    }
    const id = this.id(JSON.stringify([form, species, basis, units, perUnit]))
    if (k.length < 5 * kindsCompared) {
      k.push(form, species, basis, units, perUnit)
      this.kindIds.push(id)
    }
    return id
  }

  id(word: string): number {
    let id = this.ids.get(word)
    if (id === undefined) {
      id = this.count++
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

  /** `numbers`: a buffer to fill again (of at least capacity × rowNumbers), instead of a new one */
  constructor(
    private readonly words: LabWordList,
    private readonly capacity = batchRows,
    numbers?: Float64Array,
  ) {
    if (numbers && numbers.length < capacity * rowNumbers) throw new Error(`a batch of ${capacity} rows needs ${capacity * rowNumbers} numbers, not ${numbers.length}`)
    this.numbers = numbers ?? new Float64Array(capacity * rowNumbers)
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
    n[o + N_REPORT] = w.runIn(0, row.reportId)
    n[o + N_DATE] = w.runIn(1, row.sampledOn)
    n[o + N_KIND] = w.kindId(v.form, v.species, row.basis, row.units, v.perUnit)
    n[o + N_LAB] = row.lab === null ? NaN : w.idIn(2, row.lab)
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

  /** The failure of SQLite's statement for the row on `line`. */
  static of(line: number, error: unknown): LabRowWriteError {
    return new LabRowWriteError(line, (error as { code?: string })?.code, (error as Error)?.message ?? String(error))
  }
}

const num = (x: number) => (x !== x ? null : x)

export interface LabFileWrite {
  readonly runId: number
  /** results added so far (some may wait for the next multi-row insert, at the latest the commit) */
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
  const insertReport = sqlite.prepare(`insert into lab_reports (lab, report_number, import_run_id) values (?, ?, ?)`)
  const supersede = sqlite.prepare(`update lab_results set superseded_by = ? where id = ?`)
  const storageExists = sqlite.prepare(`select 1 from storages where id = ?`).pluck()
  const findKind = sqlite.prepare(`select id from lab_result_kinds where form = ? and species = ? and basis = ? and units = ? and per_unit = ?`).pluck()
  const insertKind = sqlite.prepare(`insert into lab_result_kinds (form, species, basis, units, per_unit) values (?, ?, ?, ?, ?)`)
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

  // Rows go in `chunkRows` at a time, with one multi-row insert: better-sqlite3's cost per call
  // (binding, stepping, the result object) is as large as SQLite's own work for a row
  // (docs/performance.md). Rows that supersede a stored result go in alone (their new id is needed).
  // `or fail`: a statement that fails keeps the rows it inserted before the failing one, so SQLite
  // keeps no statement journal to undo it (for a 200,000-row file some 190 MB of page copies in a
  // temporary file); any failure refuses the whole file and rolls the transaction back anyway.
  const columns = `lab_report_id, storage_id, sampling_event_id, sample_code, sampled_on, line, reported, qualifiers,
    dry_matter_pct, total_n, ammonium_n, organic_n, p2o5, k2o, sulfur, ph, notes, warnings, kind_id, import_run_id`
  const rowValues = `(${'?, '.repeat(rowParameters)}${runId})`
  const insertOne = sqlite.prepare(`insert or fail into lab_results (${columns}) values ${rowValues}`)
  const insertChunk = sqlite.prepare(`insert or fail into lab_results (${columns}) values ${Array(chunkRows).fill(rowValues).join(', ')}`)
  /** the values of the rows not inserted yet, rowParameters per row */
  const pending: unknown[] = new Array(chunkRows * rowParameters)
  let pendingRows = 0
  /** Inserts the pending rows; a failed chunk is inserted again row by row, to name the row that fails. */
  const flush = () => {
    if (pendingRows === 0) return
    const rows = pendingRows
    pendingRows = 0
    let chunkError: unknown = null
    if (rows === chunkRows) {
      try {
        insertChunk.run(...pending)
        count += rows
        return
      } catch (error) {
        // SQLite rolls the whole transaction back itself on some errors (a full disk)
        if (!sqlite.inTransaction) throw LabRowWriteError.of(pending[P_LINE] as number, error)
        chunkError = error
      }
    }
    // rows one by one, to name the row that fails: after a failed chunk, the rows that statement
    // kept go in twice, and this write never commits (the error below is thrown in every case)
    for (let r = 0; r < rows; r++) {
      const o = r * rowParameters
      try {
        insertOne.run(...pending.slice(o, o + rowParameters))
        count++
      } catch (error) {
        throw LabRowWriteError.of(pending[o + P_LINE] as number, error)
      }
    }
    if (chunkError !== null) throw LabRowWriteError.of(pending[P_LINE] as number, chunkError)
  }
  const words: string[] = []
  const reports = new Map<string, number>() // report number → lab report id
  let lastReportWord = -1
  let lastReportId = -1
  const kinds = new Map<number, number>() // word of a kind → its id in lab_result_kinds
  /** The id of a kind, found or added (in this transaction: a file rolled back leaves none). */
  let lastKindWord = -1
  let lastKindId = -1
  const kindOf = (word: number): number => {
    if (word === lastKindWord) return lastKindId
    let id = kinds.get(word)
    if (id === undefined) {
      const values = JSON.parse(words[word]!) as [string, string, string, string, string]
      id = (findKind.get(...values) as number | undefined) ?? Number(insertKind.run(...values).lastInsertRowid)
      kinds.set(word, id)
    }
    lastKindWord = word
    lastKindId = id
    return id
  }
  const storages = new Set<number>()
  const events = new Set<number>()
  let lastStorage = -1
  let count = 0
  let replaced = 0

  return {
    runId,
    get count() {
      return count + pendingRows
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
        const line = n[o + N_LINE]!
        let reportId: number | undefined
        let kindId: number
        try {
          kindId = kindOf(n[o + N_KIND]!)
          const reportWord = n[o + N_REPORT]!
          if (reportWord === lastReportWord) reportId = lastReportId
          else {
            // a report's number may come back under a new word (LabWordList.runIn): found by its text
            const number = words[reportWord]!
            reportId = reports.get(number)
            if (reportId === undefined) {
              const lab = n[o + N_LAB]!
              reportId = Number(insertReport.run(lab !== lab ? null : words[lab], number, runId).lastInsertRowid)
              reports.set(number, reportId)
            }
            lastReportWord = reportWord
            lastReportId = reportId
          }
        } catch (error) {
          throw LabRowWriteError.of(line, error)
        }
        const storageId = n[o + N_STORAGE]!
        if (storageId !== lastStorage) {
          storages.add(storageId)
          lastStorage = storageId
        }
        const eventId = num(n[o + N_EVENT]!)
        if (eventId !== null) events.add(eventId)
        const p = pending
        const v = pendingRows * rowParameters
        p[v] = reportId
        p[v + 1] = storageId
        p[v + 2] = eventId
        p[v + 3] = s[k++]
        p[v + 4] = words[n[o + N_DATE]!]
        p[v + P_LINE] = line
        p[v + 6] = s[k++]
        p[v + 7] = flags & F_QUALIFIERS ? s[k++] : null
        p[v + 8] = num(n[o + N_DM]!)
        p[v + 9] = n[o + N_TOTAL_N]
        p[v + 10] = num(n[o + N_NH4]!)
        p[v + 11] = num(n[o + N_ORG_N]!)
        p[v + 12] = num(n[o + N_P2O5]!)
        p[v + 13] = num(n[o + N_K2O]!)
        p[v + 14] = num(n[o + N_SULFUR]!)
        p[v + 15] = num(n[o + N_PH]!)
        p[v + 16] = flags & F_NOTES ? s[k++] : null
        p[v + 17] = flags & F_WARNINGS ? s[k++] : null
        p[v + 18] = kindId
        const supersedes = num(n[o + N_SUPERSEDES]!)
        if (supersedes === null) {
          if (++pendingRows === chunkRows) flush()
          continue
        }
        // a row that supersedes a stored result: the rows before it, then it alone
        const values = p.slice(v, v + rowParameters)
        flush()
        try {
          const { lastInsertRowid } = insertOne.run(...values)
          count++
          supersede.run(lastInsertRowid, supersedes)
          replaced++
        } catch (error) {
          throw LabRowWriteError.of(line, error)
        }
      }
      if (k !== s.length) throw new Error(`a batch of ${rows} rows came with ${s.length} strings, ${k} of them read`)
    },
    commit(counts) {
      try {
        flush()
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
