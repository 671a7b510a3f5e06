import type SQLite from 'better-sqlite3'
import { existsSync } from 'node:fs'
import { migrationNames } from '../../shared/db/migration-names.ts'
import { openReaderSqlite, openWriterSqlite } from '../../shared/db/open-sqlite.ts'
import { appErrorFromSqlite } from '../../shared/db/sqlite-errors.ts'
import { AppError } from '../../shared/errors.ts'

/**
 * Opens the database for the advisor commands and checks that `pitside init` has created its
 * tables at the latest schema, so that a wrong `--db` path gets a clear message instead of an
 * empty new file and an SQL error. The raw connection only (no Kysely): see advisor-db.ts for both.
 */
export function openAdvisorSqlite(file: string, mode: 'write' | 'read' = 'write'): SQLite.Database {
  if (!existsSync(file)) {
    throw new AppError('database', `database ${file} does not exist: run \`pitside --db ${file} init\` first (or give the right --db)`)
  }
  const sqlite = mode === 'write' ? openWriterSqlite(file) : openReaderSqlite(file)
  const hasTables = sqlite.prepare(`select 1 from sqlite_master where type = 'table' and name = 'kysely_migration'`).get()
  const applied = new Set(hasTables ? (sqlite.prepare('select name from kysely_migration').pluck().all() as string[]) : [])
  if (applied.size === 0) {
    sqlite.close()
    throw new AppError('database', `${file} has no Pitside tables: run \`pitside --db ${file} init\` first (or give the right --db)`)
  }
  if (!migrationNames.every((n) => applied.has(n))) {
    sqlite.close()
    throw new AppError('database', `database ${file} is not at the latest schema: run \`pitside --db ${file} init\``)
  }
  return sqlite
}

/**
 * Runs body with an open connection and closes it afterwards, whatever happens. SQLite failures with
 * an outside cause (locked, disk full, I/O, corrupt) become AppErrors with a message for the user.
 */
export async function withAdvisorSqlite<T>(file: string, mode: 'write' | 'read', body: (sqlite: SQLite.Database) => Promise<T> | T): Promise<T> {
  const sqlite = openAdvisorSqlite(file, mode)
  try {
    return await body(sqlite)
  } catch (error) {
    throw appErrorFromSqlite(error, `${mode === 'write' ? 'cannot write' : 'cannot read'} ${file}`) ?? error
  } finally {
    sqlite.close()
  }
}
