import { statSync } from 'node:fs'
import { afterEach, describe, expect, it } from 'vitest'
import { runCli } from '../helpers/cli.ts'
import { makeTempDatabase, makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { findShareUrl, readEmlText } from '../helpers/viewer-eml.ts'
import { seedViewerDatabase, type SeedResult } from '../helpers/viewer-seed.ts'
import { spawnServe } from '../helpers/viewer-server.ts'

// Spawns the BUILT binary: run `npm run build:node` first.
let dirs: TempDir[] = []
afterEach(() => {
  for (const d of dirs) d.cleanup()
  dirs = []
})

async function seededDb(): Promise<{ db: string; seed: SeedResult; tmp: TempDir }> {
  const temp = await makeTempDatabase()
  const seed = await seedViewerDatabase(temp.db)
  await temp.close()
  dirs.push(temp.tmp)
  return { db: temp.tmp.path('test.db'), seed, tmp: temp.tmp }
}

async function emptyDb(): Promise<{ db: string; tmp: TempDir }> {
  const tmp = makeTempDir()
  dirs.push(tmp)
  const db = tmp.path('x.db')
  expect((await runCli(['--db', db, 'init'])).exitCode).toBe(0)
  return { db, tmp }
}

describe('pitside users', () => {
  it('creates the organization on request, adds accounts, lists them and changes a password', async () => {
    const { db } = await emptyDb()
    const first = await runCli(['--db', db, 'users', 'add', '--email', 'Ana@Example.org', '--name', 'Ana Reyes', '--role', 'advisor', '--org', 'fenwick', '--org-name', 'Fenwick Advisors', '--password-stdin'], { input: 'a long enough password\n' })
    expect(first.exitCode, String(first.stderr)).toBe(0)
    expect(first.stderr).toMatch(/added advisor ana@example\.org \(Ana Reyes\) in fenwick/)
    const list = await runCli(['--db', db, '--json', 'users', 'list'])
    expect(JSON.parse(String(list.stdout)).users).toEqual([
      expect.objectContaining({ email: 'ana@example.org', role: 'advisor', organization: 'fenwick', farms: [], disabled: false }),
    ])
    const table = await runCli(['--db', db, 'users', 'list'])
    expect(table.stdout).toMatch(/ana@example\.org\s+│ Ana Reyes\s+│ advisor\s+│ fenwick\s+│ \(all\)\s+│ active/)
    const passwd = await runCli(['--db', db, 'users', 'passwd', 'ana@example.org', '--password-stdin'], { input: 'another long password' })
    expect(passwd.exitCode).toBe(0)
    const disabled = await runCli(['--db', db, 'users', 'disable', 'ana@example.org'])
    expect(disabled.exitCode).toBe(0)
    expect(JSON.parse(String((await runCli(['--db', db, '--json', 'users', 'list'])).stdout)).users[0].disabled).toBe(true)
  })

  it('refuses bad accounts with a clear message and the documented exit code', async () => {
    const { db } = await seededDb()
    const cases: [string[], string, number, RegExp][] = [
      [['--email', 'x@y.example', '--name', 'X', '--role', 'advisor'], 'password1', 64, /several organizations exist \(brightwater, loamridge\); choose one with --org/],
      [['--email', 'x@y.example', '--name', 'X', '--role', 'client', '--org', 'loamridge', '--farm', 'BWD'], 'password1', 66, /farm BWD not found in organization loamridge/],
      [['--email', 'maren@loamridge.example', '--name', 'X', '--role', 'advisor', '--org', 'loamridge'], 'password1', 67, /already exists/],
      [['--email', 'x@y.example', '--name', 'X', '--role', 'advisor', '--org', 'loamridge'], 'short', 65, /at least 8 characters, found 5/],
      [['--email', 'not-an-address', '--name', 'X', '--role', 'advisor', '--org', 'loamridge'], 'password1', 65, /email: expected an address/],
      [['--email', 'x@y.example', '--name', 'X', '--role', 'client', '--org', 'loamridge'], 'password1', 64, /a client needs at least one --farm/],
      [['--email', 'x@y.example', '--name', 'X', '--role', 'owner', '--org', 'loamridge'], 'password1', 64, /Allowed choices are advisor, client/],
    ]
    const results = await Promise.all(cases.map(([args, password]) => runCli(['--db', db, 'users', 'add', ...args, '--password-stdin'], { input: password })))
    for (const [i, [args, , code, message]] of cases.entries()) {
      const r = results[i]!
      expect(r.exitCode, args.join(' ') + ': ' + String(r.stderr)).toBe(code)
      expect(r.stderr).toMatch(message)
      expect(r.stderr).not.toMatch(/\bat .*\.js:\d+/)
    }
    const noStdin = await runCli(['--db', db, 'users', 'passwd', 'maren@loamridge.example'])
    expect(noStdin.exitCode).toBe(64)
    expect(noStdin.stderr).toMatch(/--password-stdin/)
    const unknown = await runCli(['--db', db, 'users', 'disable', 'nobody@x.example'])
    expect(unknown.exitCode).toBe(66)
  })
})

describe('pitside share', () => {
  it('e-mails a link to the outbox, prints it as JSON, lists it and revokes it', async () => {
    const { db, seed, tmp } = await seededDb()
    const env = { PITSIDE_OUTBOX: tmp.path('outbox'), PITSIDE_PUBLIC_URL: 'https://viewer.example/' }
    const planId = seed.plans['QBF-v2']!
    const r = await runCli(['--db', db, '--json', 'share', String(planId), '--to', 'qbf@farm.example', '--expires', '12h'], { env })
    expect(r.exitCode, String(r.stderr)).toBe(0)
    const created = JSON.parse(String(r.stdout))
    expect(Object.keys(created).sort()).toEqual(['expires_at', 'id', 'outbox_file', 'url'])
    expect(created.url).toMatch(/^https:\/\/viewer\.example\/s\/[\w-]+\.[\w-]+\.[\w-]+$/)
    expect(findShareUrl(created.outbox_file)).toBe(created.url)
    expect(readEmlText(created.outbox_file)).toMatch(/Loamridge Nutrient Advisors has shared the 2027 manure application plan \(version 2\) for Quillback Finishing/)
    const hours = (Date.parse(created.expires_at) - Date.now()) / 3600_000
    expect(hours).toBeGreaterThan(11.9)
    expect(hours).toBeLessThanOrEqual(12)
    // the key file was made on first use, readable by its owner only
    expect(statSync(`${db}.key`).mode & 0o777).toBe(0o600)

    const human = await runCli(['--db', db, 'share', String(planId), '--to', 'someone@farm.example'], { env })
    expect(human.stdout).toMatch(/^https:\/\/viewer\.example\/s\/\S+$/)
    expect(human.stderr).toMatch(/no SMTP_HOST set, so the e-mail to someone@farm\.example was written to .*\.eml/)

    const list = JSON.parse(String((await runCli(['--db', db, '--json', 'share', 'list', '--plan', String(planId)])).stdout))
    expect(list.links).toHaveLength(2)
    expect(list.links.every((l: { state: string }) => l.state === 'active')).toBe(true)
    const revoked = await runCli(['--db', db, 'share', 'revoke', created.id])
    expect(revoked.exitCode).toBe(0)
    const after = JSON.parse(String((await runCli(['--db', db, '--json', 'share', 'list'])).stdout))
    expect(after.links.find((l: { id: string }) => l.id === created.id).state).toBe('revoked')
  })

  it('refuses a missing plan, a bad duration, a weak secret and an unknown link', async () => {
    const { db, seed, tmp } = await seededDb()
    const env = { PITSIDE_OUTBOX: tmp.path('outbox') }
    const id = String(seed.plans['QBF-v1'])
    const cases: [string[], Record<string, string>, number, RegExp][] = [
      [['share', '99999', '--to', 'a@b.example'], env, 66, /no plan 99999/],
      [['share', 'abc', '--to', 'a@b.example'], env, 64, /expected a plan id/],
      [['share', id], env, 64, /--to <email>/],
      [['share', id, '--to', 'a@b.example', '--expires', '3 months'], env, 64, /--expires: expected a number and a unit/],
      [['share', id, '--to', 'a@b.example', '--expires', '400d'], env, 64, /between 1m and 365d/],
      [['share', id, '--to', 'a@b.example'], { ...env, PITSIDE_SECRET: 'c2hvcnQ' }, 78, /PITSIDE_SECRET: expected at least 256 bits/],
      [['share', 'revoke', 'no-such-link'], env, 66, /no share link no-such-link/],
    ]
    const results = await Promise.all(cases.map(([args, e]) => runCli(['--db', db, ...args], { env: e })))
    for (const [i, [args, , code, message]] of cases.entries()) {
      const r = results[i]!
      expect(r.exitCode, args.join(' ') + ': ' + String(r.stderr)).toBe(code)
      expect(r.stderr).toMatch(message)
    }
  })
})

describe('pitside serve', () => {
  it('serves the API read-only on the printed URL and lists the demo sign-ins', async () => {
    const { db } = await seededDb()
    const server = await spawnServe(db)
    try {
      expect(server.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+$/)
      const session = await fetch(`${server.url}/api/session`)
      expect(session.status).toBe(401)
      expect(await session.json()).toEqual({ error: { code: 'unauthorized', message: expect.stringMatching(/not signed in/) } })
      const signIn = await fetch(`${server.url}/api/session`, {
        method: 'POST',
        headers: { 'Content-Type': 'application/json' },
        body: JSON.stringify({ email: 'qbf@farm.example', password: 'pitside-demo' }),
      })
      expect(signIn.status).toBe(200)
      await expect.poll(() => server.stderr(), { timeout: 10_000 }).toMatch(/demo sign-ins \(password pitside-demo/)
      expect(server.stderr()).toMatch(/maren@loamridge\.example\s+advisor/)
      expect(server.stderr()).toMatch(/qbf@farm\.example\s+client \(QBF\)/)
    } finally {
      await server.stop()
    }
  })

  it('fails with a clear message when the database does not exist', async () => {
    const tmp = makeTempDir()
    dirs.push(tmp)
    const r = await runCli(['--db', tmp.path('missing.db'), 'serve', '--port', '0'])
    expect(r.exitCode).toBe(69)
    expect(r.stderr).toMatch(/does not exist; run `pitside --db .* init` first/)
  })
})
