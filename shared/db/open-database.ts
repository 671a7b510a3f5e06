import SQLite from 'better-sqlite3'
import { Kysely, SqliteDialect } from 'kysely'
import { existsSync } from 'node:fs'
import { AppError } from '../errors.ts'
import type { Database } from './schema.ts'

export interface OpenDatabase {
  db: Kysely<Database>
  /** The raw connection, for transactions, pragmas, backups and prepared hot paths. */
  sqlite: SQLite.Database
  file: string
  close(): Promise<void>
}

const busyTimeoutMs = 5000

/**
 * Opens the database for writing: WAL journal, foreign keys on, a busy timeout so a second writer
 * waits instead of failing. Creates the file when it does not exist.
 */
export function openWriter(file: string): OpenDatabase {
  let sqlite: SQLite.Database
  try {
    sqlite = new SQLite(file)
    sqlite.pragma(`busy_timeout = ${busyTimeoutMs}`)
    sqlite.pragma('journal_mode = WAL')
    sqlite.pragma('synchronous = NORMAL')
    sqlite.pragma('foreign_keys = ON')
  } catch (error) {
    throw new AppError('database', `cannot open database ${file}: ${(error as Error).message}`)
  }
  return wrap(file, sqlite)
}

/**
 * Opens an existing database read-only (`readonly` and `query_only`): the viewer's connection.
 * Throws a `database` AppError when the file does not exist.
 */
export function openReader(file: string): OpenDatabase {
  if (!existsSync(file)) {
    throw new AppError('database', `database ${file} does not exist; run \`pitside --db ${file} init\` first`)
  }
  let sqlite: SQLite.Database
  try {
    sqlite = new SQLite(file, { readonly: true, fileMustExist: true })
    sqlite.pragma(`busy_timeout = ${busyTimeoutMs}`)
    sqlite.pragma('query_only = ON')
  } catch (error) {
    throw new AppError('database', `cannot open database ${file}: ${(error as Error).message}`)
  }
  return wrap(file, sqlite)
}

function wrap(file: string, sqlite: SQLite.Database): OpenDatabase {
  const db = new Kysely<Database>({ dialect: new SqliteDialect({ database: sqlite }) })
  return {
    db,
    sqlite,
    file,
    close: async () => {
      await db.destroy() // closes the better-sqlite3 connection too
    },
  }
}
