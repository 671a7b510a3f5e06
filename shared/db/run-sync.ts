import type SQLite from 'better-sqlite3'
import type { Compilable } from 'kysely'

const statements = new WeakMap<SQLite.Database, Map<string, SQLite.Statement>>()

/**
 * Runs a Kysely-built write on the raw connection, synchronously, so that a whole file's writes fit
 * in one better-sqlite3 transaction. Statements are prepared once per connection and SQL text.
 * Returns the new row id for inserts.
 */
export function runSync(sqlite: SQLite.Database, query: Compilable): { changes: number; lastInsertRowid: number } {
  const compiled = query.compile()
  let cache = statements.get(sqlite)
  if (!cache) statements.set(sqlite, (cache = new Map()))
  let statement = cache.get(compiled.sql)
  if (!statement) cache.set(compiled.sql, (statement = sqlite.prepare(compiled.sql)))
  const result = statement.run(...(compiled.parameters as unknown[]))
  return { changes: result.changes, lastInsertRowid: Number(result.lastInsertRowid) }
}

/** Splits a list for `in (…)` queries so no statement carries too many parameters. */
export function chunks<T>(values: readonly T[], size = 500): T[][] {
  const out: T[][] = []
  for (let i = 0; i < values.length; i += size) out.push(values.slice(i, i + size))
  return out
}
