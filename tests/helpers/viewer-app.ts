import { randomBytes } from 'node:crypto'
import { mkdirSync, writeFileSync } from 'node:fs'
import type { Express } from 'express'
import { createApp, type AppDeps } from '../../server/app.ts'
import { openReader, openWriter, type OpenDatabase } from '../../shared/db/open-database.ts'
import { deriveSigningKeys, type SigningKeys } from '../../shared/db/share-secret.ts'
import { makeTempDatabase, type TempDir } from './temp-db.ts'
import { seedViewerDatabase, type SeedResult } from './viewer-seed.ts'

export interface ViewerFixture {
  app: Express
  reader: OpenDatabase
  /** A second connection that may write (as the CLI would, while the viewer runs). */
  writer: OpenDatabase
  keys: SigningKeys
  seed: SeedResult
  tmp: TempDir
  clock: { now: Date }
  logs: string[]
  close(): Promise<void>
}

/** A seeded database, opened read-only for createApp (as `pitside serve` does), with a settable clock. */
export async function makeViewerFixture(overrides: Partial<AppDeps> = {}): Promise<ViewerFixture> {
  const temp = await makeTempDatabase()
  const seed = await seedViewerDatabase(temp.db)
  await temp.close()
  const file = temp.tmp.path('test.db')
  const reader = openReader(file)
  const writer = openWriter(file)
  const keys = deriveSigningKeys(new Uint8Array(randomBytes(32)), 'test')
  const clock = { now: new Date('2026-11-20T12:00:00Z') }
  const logs: string[] = []
  const webDir = temp.tmp.path('web')
  mkdirSync(webDir, { recursive: true })
  writeFileSync(`${webDir}/index.html`, '<!doctype html><title>Pitside</title><div id="root"></div>')
  mkdirSync(`${webDir}/assets`, { recursive: true })
  writeFileSync(`${webDir}/assets/app-3f9a.js`, 'console.log("pitside");\n'.repeat(50))
  const app = createApp({
    database: reader,
    keys,
    webDir,
    signInLimits: { perAccount: 3, perAddress: 8, windowMs: 60_000 },
    now: () => clock.now,
    log: (line) => logs.push(line),
    ...overrides,
  })
  return {
    app,
    reader,
    writer,
    keys,
    seed,
    tmp: temp.tmp,
    clock,
    logs,
    close: async () => {
      await reader.close().catch(() => undefined)
      await writer.close().catch(() => undefined)
      temp.tmp.cleanup()
    },
  }
}
