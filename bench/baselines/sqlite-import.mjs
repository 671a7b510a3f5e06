// The practical limit for a CSV import: the sqlite3 command-line tool's own `.import --csv` of the
// same file into a WAL-mode table with the file's columns and the same unique key (report, sample).
import { spawnSync } from 'node:child_process'
import { labColumns } from '../generate/labs.mjs'

const numeric = new Set(['dry_matter_pct', 'total_n', 'ammonium_n', 'p2o5', 'k2o', 'ph'])

export const sqliteBinary = process.env.SQLITE3 ?? 'sqlite3'

/** True when the sqlite3 command-line tool can be run. */
export function haveSqlite3() {
  return spawnSync(sqliteBinary, ['-version'], { encoding: 'utf8' }).status === 0
}

/** Creates the baseline's empty database (WAL journal, the lab file's columns, unique report + sample). */
export function createSqliteBaselineDb(file) {
  const columns = labColumns.map((c) => `${c} ${numeric.has(c) ? 'REAL' : 'TEXT'}`).join(', ')
  const sql = `PRAGMA journal_mode=WAL; CREATE TABLE lab_rows (${columns}, UNIQUE (report_id, sample_id));`
  const r = spawnSync(sqliteBinary, [file, sql], { encoding: 'utf8' })
  if (r.status !== 0) throw new Error(`sqlite3 could not create ${file}: ${r.stderr}`)
}

/** The arguments that import `csvFile` into the baseline database `file`. */
export function sqliteImportArgs(file, csvFile) {
  return [file, `.import --csv --skip 1 ${csvFile} lab_rows`]
}

export function countRows(file, table) {
  const r = spawnSync(sqliteBinary, [file, `select count(*) from ${table}`], { encoding: 'utf8' })
  return Number(r.stdout.trim())
}
