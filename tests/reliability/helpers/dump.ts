import SQLite from 'better-sqlite3'

/**
 * A textual dump of every table's schema and rows, in rowid order, like `sqlite3 .dump` but without
 * needing the sqlite3 program. Two dumps are equal exactly when the stored data is equal.
 */
export function dumpDatabase(file: string): string {
  const sqlite = new SQLite(file, { readonly: true, fileMustExist: true })
  try {
    const out: string[] = []
    const objects = sqlite
      .prepare(`select type, name, sql from sqlite_master where sql is not null order by type, name`)
      .all() as { type: string; name: string; sql: string }[]
    for (const o of objects) {
      out.push(`${o.sql};`)
      if (o.type !== 'table') continue
      const rows = sqlite.prepare(`select * from "${o.name}" order by rowid`).raw().all() as unknown[][]
      for (const r of rows) out.push(`${o.name}\t${JSON.stringify(r)}`)
    }
    return out.join('\n')
  } finally {
    sqlite.close()
  }
}

/** `PRAGMA integrity_check` and `PRAGMA foreign_key_check` of a file, as SQLite reports them. */
export function checkFile(file: string): { integrity: string; foreignKeys: unknown[] } {
  const sqlite = new SQLite(file, { readonly: true, fileMustExist: true })
  try {
    const integrity = (sqlite.prepare('pragma integrity_check').all() as { integrity_check: string }[])
      .map((r) => r.integrity_check)
      .join('; ')
    const foreignKeys = sqlite.prepare('pragma foreign_key_check').all()
    return { integrity, foreignKeys }
  } finally {
    sqlite.close()
  }
}
