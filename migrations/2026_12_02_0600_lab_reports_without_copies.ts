import { sql, type Kysely } from 'kysely'

/**
 * Lab reports no longer copy their file's name and SHA-256: both are their import run's
 * (import_runs.file_name, import_runs.sha256), one row per file instead of one per report. A big
 * lab file has a report every few rows, so its import writes some 2 MB less (docs/performance.md).
 */
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema.alterTable('lab_reports').dropColumn('source_file').execute()
  await db.schema.alterTable('lab_reports').dropColumn('source_sha256').execute()
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.alterTable('lab_reports').addColumn('source_file', 'text').execute()
  await db.schema.alterTable('lab_reports').addColumn('source_sha256', 'text').execute()
  await sql`update lab_reports set
      source_file = (select file_name from import_runs i where i.id = lab_reports.import_run_id),
      source_sha256 = (select sha256 from import_runs i where i.id = lab_reports.import_run_id)`.execute(db)
}
