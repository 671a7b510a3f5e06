import type SQLite from 'better-sqlite3'
import type { Kysely } from 'kysely'
import type { Problem } from '../errors.ts'
import { runSync } from './run-sync.ts'
import type { Database } from './schema.ts'

/** What an import would do to one row of its file. */
export type RowStatus = 'new' | 'changed' | 'unchanged'

/** One changed column of a stored record, named as in the file. */
export interface Change {
  column: string
  from: unknown
  to: unknown
}

export interface ImportItem {
  line: number
  /** The record's key as the user writes it, e.g. `QBF/P1`. */
  key: string
  status: RowStatus
  changes: Change[]
}

export interface WriteContext {
  sqlite: SQLite.Database
  db: Kysely<Database>
  /** The import_runs row of this file. */
  importRunId: number
  /** ISO instant written to updated_at. */
  now: string
}

/** The outcome of comparing a file with what is stored: problems, per-row items, and the writes. */
export interface PreparedImport {
  problems: Problem[]
  items: ImportItem[]
  /** Applies every new and changed row; synchronous so it runs inside one transaction. */
  write(ctx: WriteContext): void
}

export type RecordKind = 'farms' | 'storages' | 'fields' | 'samples' | 'applications'

/**
 * Compares stored column values with the file's. `next` lists [file column, stored value, new
 * value]; a new value of undefined means the file lacks the column (left alone). Numbers compare
 * exactly: both sides come from the same decimal text.
 */
export function diffValues(next: readonly [string, unknown, unknown][]): Change[] {
  const changes: Change[] = []
  for (const [column, from, to] of next) {
    if (to === undefined) continue
    if ((from ?? null) !== (to ?? null)) changes.push({ column, from: from ?? null, to: to ?? null })
  }
  return changes
}

export function statusOf(isNew: boolean, changes: readonly Change[]): RowStatus {
  return isNew ? 'new' : changes.length ? 'changed' : 'unchanged'
}

export interface ImportRunCounts {
  kind: RecordKind
  fileName: string
  sha256: string
  rows: number
  rowsNew: number
  rowsChanged: number
  rowsUnchanged: number
  warnings: number
}

/** Records one import that changed something; returns its id. */
export function insertImportRun(sqlite: SQLite.Database, db: Kysely<Database>, c: ImportRunCounts): number {
  return runSync(
    sqlite,
    db.insertInto('import_runs').values({
      kind: c.kind,
      file_name: c.fileName,
      sha256: c.sha256,
      rows: c.rows,
      rows_new: c.rowsNew,
      rows_unchanged: c.rowsUnchanged,
      warnings: c.warnings,
      outcome: 'imported',
      message: `${c.rowsNew} new, ${c.rowsChanged} changed, ${c.rowsUnchanged} unchanged`,
    }),
  ).lastInsertRowid
}

/** "farm QBF does not exist" with the nearest spelling, if only the case differs. */
export function unknownCodeMessage(what: string, code: string, known: readonly string[], hint: string): string {
  const sameLetters = known.find((k) => k.toLowerCase() === code.toLowerCase())
  if (sameLetters) return `${what} ${code} does not exist; did you mean ${sameLetters}? (codes are case-sensitive)`
  return `${what} ${code} does not exist${hint ? ` (${hint})` : ''}`
}
