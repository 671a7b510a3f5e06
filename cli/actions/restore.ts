import SQLite from 'better-sqlite3'
import { copyFileSync, existsSync, linkSync, renameSync, rmSync, statSync } from 'node:fs'
import { resolve } from 'node:path'
import {
  describeProblems,
  fsyncFileAndDir,
  hasSqliteHeader,
  inspectDatabase,
  type DatabaseReport,
} from '../../shared/db/database-checks.ts'
import { migrateToLatest } from '../../shared/db/migrations.ts'
import { openWriter } from '../../shared/db/open-database.ts'
import { appErrorFromSqlite } from '../../shared/db/sqlite-errors.ts'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson } from '../output.ts'

export interface RestoreOutcome {
  database: string
  from: string
  /** Where the database that was replaced now lives; null when there was none. */
  keptAs: string | null
  /** Migrations applied to bring an older backup up to this version. */
  upgraded: string[]
  report: DatabaseReport
}

const inUseWaitMs = 1000

/** The name under which restore keeps the database it replaces. */
export function beforeRestoreName(database: string): string {
  return `${database}.before-restore`
}

/** Refuses a backup file that is not a sound Pitside database this version can use. */
function checkBackupFile(from: string): DatabaseReport {
  if (!existsSync(from)) throw new AppError('not_found', `${from} does not exist; expected a file made by \`pitside backup\``)
  if (statSync(from).size === 0 || !hasSqliteHeader(from)) {
    throw new AppError('invalid_input', `${from} is not a SQLite database (it lacks the "SQLite format 3" header); expected a file made by \`pitside backup\``)
  }
  let report: DatabaseReport
  try {
    const sqlite = new SQLite(from, { readonly: true, fileMustExist: true })
    try {
      report = inspectDatabase(sqlite)
    } finally {
      sqlite.close()
    }
  } catch (error) {
    const code = (error as { code?: string }).code ?? ''
    if (code.startsWith('SQLITE_CORRUPT') || code.startsWith('SQLITE_NOTADB')) {
      throw new AppError('invalid_input', `refusing to restore: ${from} is damaged (${code}: not a sound SQLite database); take another backup`)
    }
    throw appErrorFromSqlite(error, `cannot read ${from}`) ?? error
  }
  const problems = describeProblems(report, from)
  if (problems.length > 0) throw new AppError('invalid_input', `refusing to restore:\n${problems.join('\n')}`)
  return report
}

/**
 * Takes the database out of use for the swap: switching it out of WAL mode needs every other
 * connection closed (a WAL connection holds a shared lock while it is open), and the exclusive
 * transaction then keeps newcomers waiting until the new file is in place. Returns the connection
 * holding the lock, or null when the current file is too damaged for SQLite to lock (restoring it is
 * the point); throws a `database` AppError when another process has the file open.
 */
function lockOut(database: string): SQLite.Database | null {
  const sqlite = new SQLite(database, { fileMustExist: true })
  try {
    sqlite.pragma(`busy_timeout = ${inUseWaitMs}`)
    const mode = sqlite.pragma('journal_mode = DELETE', { simple: true })
    if (mode !== 'delete') throw Object.assign(new Error('still in WAL mode'), { code: 'SQLITE_BUSY' })
    sqlite.exec('begin exclusive')
    return sqlite
  } catch (error) {
    sqlite.close()
    const code = (error as { code?: string }).code ?? ''
    if (code.startsWith('SQLITE_BUSY') || code.startsWith('SQLITE_LOCKED')) {
      throw new AppError(
        'database',
        `${database} is in use by another process (the viewer or another pitside command); stop it and run restore again`,
      )
    }
    if (code.startsWith('SQLITE_NOTADB') || code.startsWith('SQLITE_CORRUPT')) return null
    throw appErrorFromSqlite(error, `cannot open ${database}`) ?? error
  }
}

/**
 * Replaces the database with a backup. The backup is checked (integrity, foreign keys, schema not
 * newer than this version), copied beside the database, upgraded to the latest schema and checked
 * again; then the current file is kept as `<db>.before-restore` and the copy is renamed into place
 * in one step. Refuses while another process has the database open, and when a
 * `<db>.before-restore` from an earlier restore is still there (nothing is ever overwritten).
 */
export async function restoreDatabase(database: string, from: string): Promise<RestoreOutcome> {
  if (resolve(database) === resolve(from)) {
    throw new AppError('usage', `${from} is the database itself; name the backup file to restore from`)
  }
  checkBackupFile(from)
  const keptAs = beforeRestoreName(database)
  const hadDatabase = existsSync(database)
  if (hadDatabase && existsSync(keptAs)) {
    throw new AppError(
      'conflict',
      `${keptAs} is still there from an earlier restore; move it somewhere safe (or delete it) and run restore again`,
    )
  }

  const staged = `${database}.restoring-${process.pid}`
  const cleanup = () => {
    for (const f of [staged, `${staged}-journal`, `${staged}-wal`, `${staged}-shm`]) rmSync(f, { force: true })
  }
  let upgraded: string[] = []
  let report: DatabaseReport
  try {
    // through SQLite rather than a file copy: a backup file with a -wal beside it is copied whole
    const source = new SQLite(from, { readonly: true, fileMustExist: true })
    try {
      await source.backup(staged, { progress: () => 0x7fffffff })
    } finally {
      source.close()
    }
    const opened = openWriter(staged)
    try {
      upgraded = (await migrateToLatest(opened.db)).applied
      opened.sqlite.pragma('journal_mode = DELETE')
      report = inspectDatabase(opened.sqlite)
    } finally {
      await opened.close()
    }
    const problems = describeProblems(report, staged)
    if (problems.length > 0 || report.schema.pending.length > 0) {
      throw new AppError('database', `the restored copy did not pass its check:\n${problems.join('\n')}`)
    }
    fsyncFileAndDir(staged)
  } catch (error) {
    cleanup()
    throw appErrorFromSqlite(error, `cannot prepare the restore of ${database}`) ?? error
  }

  if (!hadDatabase) {
    renameSync(staged, database)
    return { database, from, keptAs: null, upgraded, report }
  }

  let lock: SQLite.Database | null
  try {
    lock = lockOut(database)
  } catch (error) {
    cleanup()
    throw error
  }
  let renamed = false
  try {
    try {
      linkSync(database, keptAs)
    } catch {
      copyFileSync(database, keptAs) // file systems without hard links
    }
    renameSync(staged, database)
    renamed = true
    for (const f of [`${database}-wal`, `${database}-shm`]) rmSync(f, { force: true })
    fsyncFileAndDir(database)
  } catch (error) {
    cleanup()
    if (!renamed) rmSync(keptAs, { force: true })
    throw appErrorFromSqlite(error, `cannot replace ${database}`) ??
      new AppError('io', `cannot replace ${database}: ${(error as Error).message}` + (renamed ? '' : '; the database was not changed'))
  } finally {
    lock?.close() // the lock was on the old file, which now lives on as keptAs
  }
  return { database, from, keptAs, upgraded, report }
}

export const run: ActionModule['run'] = async ({ args, globals: g }) => {
  const out = await restoreDatabase(g.db, String(args[0]))
  if (g.json) {
    printJson({
      database: out.database,
      from: out.from,
      kept_as: out.keptAs,
      upgraded: out.upgraded,
      schema: out.report.schema.applied.at(-1) ?? null,
      rows: out.report.rows,
    })
    return
  }
  const total = Object.values(out.report.rows).reduce((a, b) => a + b, 0)
  note(
    g,
    `restored ${out.database} from ${out.from} (${total} rows, integrity ok` +
      (out.upgraded.length ? `, upgraded with ${out.upgraded.join(', ')}` : '') +
      `)` +
      (out.keptAs ? `; the database it replaced is kept as ${out.keptAs}` : ''),
  )
}
