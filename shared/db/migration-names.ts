/**
 * The names of the schema migrations, in order, without loading them or Kysely: commands that only
 * check that a database is at the latest schema (the lab import, for one) start faster. Add each
 * new migration here and in shared/db/migrations.ts (which checks that the two lists agree).
 */
export const migrationNames: readonly string[] = [
  '2026_12_01_0900_create_schema',
  '2026_12_02_0300_lab_results_without_copies',
  '2026_12_02_0600_lab_reports_without_copies',
  '2026_12_02_0700_lab_results_storage_index',
  '2026_12_02_0800_lab_result_kinds',
]
