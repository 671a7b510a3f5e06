import { Migrator, type Migration, type MigrationProvider, type Kysely } from 'kysely'
import * as createSchema from '../../migrations/2026_12_01_0900_create_schema.ts'
import * as labResultsWithoutCopies from '../../migrations/2026_12_02_0300_lab_results_without_copies.ts'
import * as labReportsWithoutCopies from '../../migrations/2026_12_02_0600_lab_reports_without_copies.ts'
import * as labResultsStorageIndex from '../../migrations/2026_12_02_0700_lab_results_storage_index.ts'
import * as labResultKinds from '../../migrations/2026_12_02_0800_lab_result_kinds.ts'
import { migrationNames } from './migration-names.ts'

// A static provider: Kysely's FileMigrationProvider reads the folder at run time, which fails under
// vitest and in the compiled build. Add each new migration here, in order.
const migrations: Record<string, Migration> = {
  '2026_12_01_0900_create_schema': createSchema,
  '2026_12_02_0300_lab_results_without_copies': labResultsWithoutCopies,
  '2026_12_02_0600_lab_reports_without_copies': labReportsWithoutCopies,
  '2026_12_02_0700_lab_results_storage_index': labResultsStorageIndex,
  '2026_12_02_0800_lab_result_kinds': labResultKinds,
}

if (Object.keys(migrations).join('\n') !== migrationNames.join('\n')) {
  throw new Error('shared/db/migrations.ts and shared/db/migration-names.ts list different migrations')
}

const provider: MigrationProvider = { getMigrations: async () => migrations }

export interface MigrationOutcome {
  applied: string[]
  latest: string
}

/** Brings the database to the latest schema. Returns the names of the migrations it applied (none when current). Throws when a migration fails. */
export async function migrateToLatest(db: Kysely<any>): Promise<MigrationOutcome> {
  const migrator = new Migrator({ db, provider })
  const { error, results } = await migrator.migrateToLatest()
  if (error) throw error
  const names = Object.keys(migrations)
  return {
    applied: (results ?? []).filter((r) => r.status === 'Success').map((r) => r.migrationName),
    latest: names[names.length - 1]!,
  }
}

export { migrationNames }
