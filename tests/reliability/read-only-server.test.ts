// The viewer cannot write: it opens the database read-only (SQLite URI/open flag SQLITE_OPEN_READONLY
// plus PRAGMA query_only, sqlite.org/pragma.html#pragma_query_only), and its code has no write path.
// OWASP ASVS 5.0 V8.1 / V15.2 (least privilege for the data layer).
import { readdirSync, readFileSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { fileURLToPath } from 'node:url'
import { sql } from 'kysely'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { openReader } from '../../shared/db/open-database.ts'
import { makeSecurityFixture, type SecurityFixture } from './helpers/security-fixture.ts'

const root = fileURLToPath(new URL('../../', import.meta.url))

let fx: SecurityFixture
beforeAll(async () => {
  fx = await makeSecurityFixture()
})
afterAll(async () => {
  await fx?.close()
})

function codeError(fn: () => unknown): string {
  try {
    fn()
  } catch (error) {
    return String((error as { code?: string }).code)
  }
  return 'no error'
}

async function asyncCodeError(fn: () => Promise<unknown>): Promise<string> {
  try {
    await fn()
  } catch (error) {
    return String((error as { code?: string }).code)
  }
  return 'no error'
}

describe('the viewer’s database connection', () => {
  it('fails every kind of write with SQLITE_READONLY, even after switching query_only off', async () => {
    const { sqlite, db } = fx.reader // the connection createApp was given
    const before = (sqlite.prepare('select count(*) as n from farms').get() as { n: number }).n
    expect(codeError(() => sqlite.prepare(`insert into organizations (code, name) values ('x', 'X')`).run())).toMatch(/^SQLITE_READONLY/)
    expect(codeError(() => sqlite.prepare(`update farms set name = 'changed'`).run())).toMatch(/^SQLITE_READONLY/)
    expect(codeError(() => sqlite.prepare(`delete from plans`).run())).toMatch(/^SQLITE_READONLY/)
    expect(codeError(() => sqlite.exec('create table intruder (x)'))).toMatch(/^SQLITE_READONLY/)
    expect(await asyncCodeError(() => db.insertInto('organizations').values({ code: 'y', name: 'Y' }).execute())).toMatch(/^SQLITE_READONLY/)
    expect(await asyncCodeError(() => db.updateTable('users').set({ disabled: 1 }).execute())).toMatch(/^SQLITE_READONLY/)
    sqlite.pragma('query_only = OFF')
    try {
      expect(codeError(() => sqlite.prepare(`delete from share_links`).run())).toMatch(/^SQLITE_READONLY/)
      expect(await asyncCodeError(() => sql`insert into organizations (code, name) values ('z', 'Z')`.execute(db))).toMatch(/^SQLITE_READONLY/)
    } finally {
      sqlite.pragma('query_only = ON')
    }
    expect((sqlite.prepare('select count(*) as n from farms').get() as { n: number }).n).toBe(before)
  })

  it('is what pitside serve opens: startServer uses openReader and never openWriter', () => {
    const main = readFileSync(join(root, 'server/main.ts'), 'utf8')
    expect(main).toMatch(/openReader\(options\.dbFile\)/)
    expect(main).not.toMatch(/openWriter/)
    const reader = openReader(fx.tmp.path('test.db'))
    try {
      expect(reader.sqlite.readonly).toBe(true)
      expect(reader.sqlite.pragma('query_only', { simple: true })).toBe(1)
    } finally {
      void reader.close()
    }
  })
})

function filesUnder(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name)
    return statSync(path).isDirectory() ? filesUnder(path) : /\.(ts|tsx|js|mjs)$/.test(name) ? [path] : []
  })
}

describe('the viewer’s code', () => {
  it('has no write path: no insert, update, delete, DDL, writable connection or file writes under server/', () => {
    const writePatterns: [string, RegExp][] = [
      ['SQL write', /\b(insert\s+(or\s+\w+\s+)?into|update\s+\w+\s+set|delete\s+from|replace\s+into|create\s+(table|index|trigger|view)|drop\s+(table|index)|alter\s+table|vacuum|reindex)\b/i],
      ['Kysely write', /\.(insertInto|updateTable|deleteFrom|replaceInto|mergeInto)\s*\(|\.schema\./],
      ['writable connection', /\bopenWriter\b|new\s+(SQLite|Database)\s*\(/],
      ['statement run/exec', /\b(sqlite|db|database)\.exec\s*\(|\.run\s*\(/],
      ['pragma change', /pragma\(\s*['"`][^'"`]*=/],
      ['backup or migration', /\.backup\s*\(|migrateToLatest/],
      ['file write', /\b(writeFile|writeFileSync|appendFile|appendFileSync|createWriteStream|rmSync|unlink|unlinkSync|renameSync|mkdirSync)\b/],
    ]
    const found: string[] = []
    const files = filesUnder(join(root, 'server'))
    expect(files.length).toBeGreaterThan(3)
    for (const file of files) {
      const lines = readFileSync(file, 'utf8').split('\n')
      lines.forEach((line, i) => {
        if (/^\s*(\/\/|\*)/.test(line)) return // comments may talk about writes
        for (const [what, re] of writePatterns) if (re.test(line)) found.push(`${relative(root, file)}:${i + 1}: ${what}: ${line.trim()}`)
      })
    }
    expect(found).toEqual([])
  })

})
