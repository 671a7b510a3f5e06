import { wrapDatabase, type OpenDatabase } from '../../shared/db/open-database.ts'
import { appErrorFromSqlite } from '../../shared/db/sqlite-errors.ts'
import { openAdvisorSqlite } from './advisor-sqlite.ts'

/**
 * Opens the database for the advisor commands (plan, plans, export, records, record imports) with
 * Kysely over the raw connection, after advisor-sqlite.ts's checks (exists, has Pitside's tables
 * at the latest schema).
 */
export function openAdvisorDb(file: string, mode: 'write' | 'read' = 'write'): OpenDatabase {
  return wrapDatabase(file, openAdvisorSqlite(file, mode))
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
