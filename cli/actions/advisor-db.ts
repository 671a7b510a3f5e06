import { wrapDatabase, type OpenDatabase } from '../../shared/db/open-database.ts'
import { openAdvisorSqlite, withAdvisorSqlite } from './advisor-sqlite.ts'

/**
 * Opens the database for the advisor commands (plan, plans, export, records, record imports) with
 * Kysely over the raw connection, after advisor-sqlite.ts's checks (exists, has Pitside's tables
 * at the latest schema).
 */
export function openAdvisorDb(file: string, mode: 'write' | 'read' = 'write'): OpenDatabase {
  return wrapDatabase(file, openAdvisorSqlite(file, mode))
}

/**
 * Runs body with an open database and closes it afterwards, whatever happens (withAdvisorSqlite,
 * with Kysely over the connection).
 */
export async function withAdvisorDb<T>(file: string, mode: 'write' | 'read', body: (opened: OpenDatabase) => Promise<T> | T): Promise<T> {
  return withAdvisorSqlite(file, mode, (sqlite) => body(wrapDatabase(file, sqlite)))
}
