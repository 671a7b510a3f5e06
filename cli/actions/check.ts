import { describeProblems, inspectDatabase } from '../../shared/db/database-checks.ts'
import { openReader } from '../../shared/db/open-database.ts'
import { appErrorFromSqlite } from '../../shared/db/sqlite-errors.ts'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson } from '../output.ts'

/**
 * `pitside check`: integrity check, foreign-key check and schema version of the database, read-only.
 * Exits 0 when all is well; otherwise prints what is wrong and exits with the database code (69).
 * An older schema is reported but is not a failure (`pitside init` upgrades it).
 */
export const run: ActionModule['run'] = async ({ globals: g }) => {
  const { sqlite, close } = openReader(g.db)
  let report
  try {
    report = inspectDatabase(sqlite)
  } catch (error) {
    throw appErrorFromSqlite(error, `cannot check ${g.db}`) ?? error
  } finally {
    await close()
  }
  const problems = describeProblems(report, g.db)
  const { schema } = report
  if (g.json) {
    printJson({
      database: g.db,
      ok: problems.length === 0,
      integrity: report.integrity,
      foreign_keys: report.foreignKeys,
      schema: { applied: schema.applied.at(-1) ?? null, latest: schema.latest, pending: schema.pending, unknown: schema.unknown },
      rows: report.rows,
      problems,
    })
  } else if (problems.length === 0) {
    const total = Object.values(report.rows).reduce((a, b) => a + b, 0)
    process.stdout.write(
      `${g.db}: integrity ok, foreign keys ok, schema ${schema.applied.at(-1)}` +
        (schema.pending.length ? ` (${schema.pending.length} migration(s) pending: run \`pitside init\`)` : ' (latest)') +
        `, ${total} rows\n`,
    )
  }
  if (problems.length > 0) {
    if (g.json) note(g, problems.join('\n'))
    throw new AppError('database', problems.join('\n'))
  }
}
