import type { Kysely } from 'kysely'

/**
 * The index of lab results by storage holds the storage alone, no longer its sampling dates: a
 * storage has a few results a year, so its rows are found by storage and their dates read from
 * them. The index is half the size and a big lab import builds it again in half the time
 * (docs/performance.md).
 */
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema.dropIndex('lab_results_storage_idx').execute()
  await db.schema.createIndex('lab_results_storage_idx').on('lab_results').column('storage_id').execute()
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropIndex('lab_results_storage_idx').execute()
  await db.schema.createIndex('lab_results_storage_idx').on('lab_results').columns(['storage_id', 'sampled_on']).execute()
}
