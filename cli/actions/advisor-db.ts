import { existsSync } from 'node:fs'
import { migrationNames } from '../../shared/db/migrations.ts'
import { openReader, openWriter, type OpenDatabase } from '../../shared/db/open-database.ts'
import { appErrorFromSqlite } from '../../shared/db/sqlite-errors.ts'
import { AppError } from '../../shared/errors.ts'

/**
 * Opens the database for the advisor commands (labs, plan, plans, export, records) and checks that
 * `pitside init` has created its tables, so that a wrong `--db` path gets a clear message instead
 * of an empty new file and an SQL error.
 */
export function openAdvisorDb(file: string, mode: 'write' | 'read' = 'write'): OpenDatabase {
  if (!existsSync(file)) {
    throw new AppError('database', `database ${file} does not exist: run \`pitside --db ${file} init\` first (or give the right --db)`)
  }
  const opened = mode === 'write' ? openWriter(file) : openReader(file)
  const hasTables = opened.sqlite.prepare(`select 1 from sqlite_master where type = 'table' and name = 'kysely_migration'`).get()
  const applied = new Set(
    hasTables ? (opened.sqlite.prepare('select name from kysely_migration').all() as { name: string }[]).map((r) => r.name) : [],
  )
  if (applied.size === 0) {
    opened.sqlite.close()
    throw new AppError('database', `${file} has no Pitside tables: run \`pitside --db ${file} init\` first (or give the right --db)`)
  }
  if (!migrationNames.every((n) => applied.has(n))) {
    opened.sqlite.close()
    throw new AppError('database', `database ${file} is not at the latest schema: run \`pitside --db ${file} init\``)
  }
  return opened
}

/**
 * Runs body with an open database and closes it afterwards, whatever happens. SQLite failures with
 * an outside cause (locked, disk full, I/O, corrupt) become AppErrors with a message for the user.
 */
export async function withAdvisorDb<T>(file: string, mode: 'write' | 'read', body: (opened: OpenDatabase) => Promise<T> | T): Promise<T> {
  const opened = openAdvisorDb(file, mode)
  try {
    return await body(opened)
  } catch (error) {
    throw appErrorFromSqlite(error, `${mode === 'write' ? 'cannot write' : 'cannot read'} ${file}`) ?? error
  } finally {
    await opened.close()
  }
}
