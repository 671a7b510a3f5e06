import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { migrateToLatest } from '../../shared/db/migrations.ts'
import { openWriter, type OpenDatabase } from '../../shared/db/open-database.ts'

export interface TempDir {
  dir: string
  path(name: string): string
  cleanup(): void
}

export function makeTempDir(prefix = 'pitside-test-'): TempDir {
  const dir = mkdtempSync(join(tmpdir(), prefix))
  return { dir, path: (name) => join(dir, name), cleanup: () => rmSync(dir, { recursive: true, force: true }) }
}

/** A fresh database file per test, migrated by the real migrations/. Call close() and cleanup() after. */
export async function makeTempDatabase(): Promise<OpenDatabase & { tmp: TempDir }> {
  const tmp = makeTempDir()
  const opened = openWriter(tmp.path('test.db'))
  await migrateToLatest(opened.db)
  return { ...opened, tmp }
}
