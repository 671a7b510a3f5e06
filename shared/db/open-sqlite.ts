import SQLite from 'better-sqlite3'
import { existsSync } from 'node:fs'
import { AppError } from '../errors.ts'

/**
 * The raw better-sqlite3 connections, without Kysely (some 280 modules that a command like the lab
 * import never uses): shared/db/open-database.ts wraps them for the queries written with Kysely.
 */

export const busyTimeoutMs = 5000

/**
 * The page size of a new database file (SQLite's default is 4 KiB). A lab import writes each page
 * twice (to the WAL, then at the checkpoint) with one system call per page and frame, and the
 * stored plans are tens of kilobytes each: with 16 KiB pages a 200,000-row import makes a quarter of
 * the calls (docs/performance.md). Fixed when the first table is created; an existing file keeps its own.
 */
export const newDatabasePageSize = 16384

/**
 * Opens the database for writing: WAL journal, foreign keys on, a busy timeout so a second writer
 * waits instead of failing. Creates the file when it does not exist.
 */
export function openWriterSqlite(file: string): SQLite.Database {
  try {
    const sqlite = new SQLite(file)
    sqlite.pragma(`busy_timeout = ${busyTimeoutMs}`)
    // before the WAL journal, which fixes the page size of an empty file
    if (sqlite.pragma('page_count', { simple: true }) === 0) sqlite.pragma(`page_size = ${newDatabasePageSize}`)
    sqlite.pragma('journal_mode = WAL')
    sqlite.pragma('synchronous = NORMAL')
    sqlite.pragma('foreign_keys = ON')
    return sqlite
  } catch (error) {
    throw new AppError('database', `cannot open database ${file}: ${(error as Error).message}`)
  }
}

/**
 * Opens an existing database read-only (`readonly` and `query_only`): the viewer's connection.
 * Throws a `database` AppError when the file does not exist.
 */
export function openReaderSqlite(file: string): SQLite.Database {
  if (!existsSync(file)) {
    throw new AppError('database', `database ${file} does not exist; run \`pitside --db ${file} init\` first`)
  }
  try {
    const sqlite = new SQLite(file, { readonly: true, fileMustExist: true })
    sqlite.pragma(`busy_timeout = ${busyTimeoutMs}`)
    sqlite.pragma('query_only = ON')
    return sqlite
  } catch (error) {
    throw new AppError('database', `cannot open database ${file}: ${(error as Error).message}`)
  }
}
