import SQLite from 'better-sqlite3'
import { createHash } from 'node:crypto'
import { existsSync, readFileSync, renameSync, rmSync, statSync } from 'node:fs'
import { dirname, resolve } from 'node:path'
import { describeProblems, fsyncFileAndDir, inspectDatabase, type DatabaseReport } from '../../shared/db/database-checks.ts'
import { openReader } from '../../shared/db/open-database.ts'
import { appErrorFromSqlite } from '../../shared/db/sqlite-errors.ts'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson } from '../output.ts'

export interface BackupOutcome {
  database: string
  backup: string
  bytes: number
  pages: number
  sha256: string
  durationMs: number
  report: DatabaseReport
}

/**
 * Copies the database to `target` with SQLite's online backup API, which is safe while other
 * processes read and write: the copy is one committed state. The copy is written beside the
 * target, checked (integrity, foreign keys, schema), flushed and only then renamed into place,
 * so a failed or interrupted backup never leaves a half-written file under the target's name.
 */
export async function backupDatabase(source: string, target: string, { force = false } = {}): Promise<BackupOutcome> {
  const started = performance.now()
  if (resolve(source) === resolve(target)) {
    throw new AppError('usage', `the backup file ${target} is the database itself; name another file`)
  }
  if (existsSync(target) && !force) {
    throw new AppError('conflict', `${target} already exists; name a new file or add --force to replace it`)
  }
  if (!existsSync(dirname(resolve(target)))) {
    throw new AppError('io', `cannot write backup ${target}: the folder ${dirname(target)} does not exist`)
  }
  const partial = `${target}.partial-${process.pid}`
  const cleanup = () => {
    for (const f of [partial, `${partial}-journal`, `${partial}-wal`, `${partial}-shm`]) rmSync(f, { force: true })
  }
  const { sqlite, close } = openReader(source)
  let pages = 0
  try {
    // After the first (empty) step, one step copies every page. A step holds one read transaction, so
    // writes by other processes (which WAL lets go on) cannot restart it; many small steps would restart
    // after every commit and might never finish under a busy writer.
    pages = (await sqlite.backup(partial, { progress: () => 0x7fffffff })).totalPages
  } catch (error) {
    cleanup()
    throw appErrorFromSqlite(error, `cannot write backup ${target}`) ?? error
  } finally {
    await close()
  }

  let report: DatabaseReport
  try {
    const copy = new SQLite(partial)
    try {
      copy.pragma('journal_mode = DELETE') // a stand-alone file: no -wal beside it
      report = inspectDatabase(copy)
    } finally {
      copy.close()
    }
    const problems = describeProblems(report, target)
    if (problems.length > 0) {
      throw new AppError('database', `the backup did not pass its check, so it was not kept:\n${problems.join('\n')}`)
    }
    fsyncFileAndDir(partial)
    renameSync(partial, target)
  } catch (error) {
    cleanup()
    throw appErrorFromSqlite(error, `cannot write backup ${target}`) ?? error
  }
  const bytes = statSync(target).size
  const sha256 = createHash('sha256').update(readFileSync(target)).digest('hex')
  return { database: source, backup: target, bytes, pages, sha256, durationMs: Math.round(performance.now() - started), report }
}

export const run: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const target = String(args[0])
  const out = await backupDatabase(g.db, target, { force: Boolean(options.force) })
  if (g.json) {
    printJson({
      database: out.database,
      backup: out.backup,
      bytes: out.bytes,
      pages: out.pages,
      sha256: out.sha256,
      integrity: out.report.integrity.join('; '),
      schema: out.report.schema.applied.at(-1) ?? null,
      rows: out.report.rows,
      duration_ms: out.durationMs,
    })
    return
  }
  const total = Object.values(out.report.rows).reduce((a, b) => a + b, 0)
  note(
    g,
    `backed up ${out.database} to ${out.backup}: ${out.bytes} bytes, ${total} rows, integrity ok, ` +
      `schema ${out.report.schema.applied.at(-1)}, sha256 ${out.sha256.slice(0, 16)}… (${out.durationMs} ms)`,
  )
}
