import type SQLite from 'better-sqlite3'
import { Kysely, SqliteDialect } from 'kysely'
import { openReaderSqlite, openWriterSqlite } from './open-sqlite.ts'
import type { Database } from './schema.ts'

export interface OpenDatabase {
  db: Kysely<Database>
  /** The raw connection, for transactions, pragmas, backups and prepared hot paths. */
  sqlite: SQLite.Database
  file: string
  close(): Promise<void>
}

/**
 * Opens the database for writing: WAL journal, foreign keys on, a busy timeout so a second writer
 * waits instead of failing. Creates the file when it does not exist.
 */
export function openWriter(file: string): OpenDatabase {
  return wrapDatabase(file, openWriterSqlite(file))
}

/**
 * Opens an existing database read-only (`readonly` and `query_only`): the viewer's connection.
 * Throws a `database` AppError when the file does not exist.
 */
export function openReader(file: string): OpenDatabase {
  return wrapDatabase(file, openReaderSqlite(file))
}

/** A Kysely instance over an open connection; closing it closes the connection. */
export function wrapDatabase(file: string, sqlite: SQLite.Database): OpenDatabase {
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
