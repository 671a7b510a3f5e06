import { sql, type Kysely } from 'kysely'

/**
 * Lab results no longer copy their report's number and their import run's time into every row:
 * both are read from lab_reports and import_runs (one row per report, one per file). A result row
 * of a big import is about a sixth smaller, and so is the write of each one (docs/performance.md).
 * The results of a report are found by report and sample through lab_report_id.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema.dropIndex('lab_results_report_sample_idx').execute()
  await db.schema.alterTable('lab_results').dropColumn('report_number').execute()
  await db.schema.alterTable('lab_results').dropColumn('created_at').execute()
  await db.schema.createIndex('lab_results_report_sample_idx').on('lab_results').columns(['lab_report_id', 'sample_code']).execute()
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropIndex('lab_results_report_sample_idx').execute()
  await db.schema.alterTable('lab_results').addColumn('report_number', 'text').execute()
  await db.schema.alterTable('lab_results').addColumn('created_at', 'text').execute()
  await sql`update lab_results set
      report_number = (select report_number from lab_reports p where p.id = lab_results.lab_report_id),
      created_at = (select created_at from import_runs i where i.id = lab_results.import_run_id)`.execute(db)
  await db.schema.createIndex('lab_results_report_sample_idx').on('lab_results').columns(['report_number', 'sample_code']).execute()
}
