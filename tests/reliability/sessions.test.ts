// Passwords and sessions: OWASP ASVS 5.0 V6 "Authentication" (V6.2 password security, V6.3 general
// authentication security: anti-automation, same answer for unknown accounts), V7 "Session
// Management" (V7.2 fundamental session security, V7.4 session termination), V11.4 hashing;
// OWASP Password Storage Cheat Sheet (scrypt N=2^17, r=8, p=1), Authentication Cheat Sheet
// (generic error messages, account lockout), Session Management Cheat Sheet (HttpOnly, SameSite,
// expiry, renewal on sign-in, invalidation on sign-out).
import SQLite from 'better-sqlite3'
import { readFileSync } from 'node:fs'
import request from 'supertest'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { runCli } from '../helpers/cli.ts'
import { seedPassword } from '../helpers/viewer-seed.ts'
import { makeSecurityFixture, type SecurityFixture } from './helpers/security-fixture.ts'

let fx: SecurityFixture
let dbFile: string
beforeAll(async () => {
  fx = await makeSecurityFixture({ signInLimits: { perAccount: 2, perAddress: 1000, windowMs: 60_000 } })
  dbFile = fx.tmp.path('test.db')
}, 60_000)
afterAll(async () => {
  await fx?.close()
})

const signIn = (email: string, password: string, address?: string, app = fx.app) => {
  const r = request(app).post('/api/session')
  if (address) r.set('X-Forwarded-For', address)
  return r.send({ email, password })
}

describe('password storage', () => {
  it('stores each new account with scrypt N=2^17, r=8, p=1 and a salt of its own, even for the same password', async () => {
    for (const email of ['salt1@farm.example', 'salt2@farm.example']) {
      const r = await runCli(['--db', dbFile, 'users', 'add', '--email', email, '--name', 'Salt Test', '--role', 'client', '--farm', 'QBF', '--org', 'loamridge', '--password-stdin'], {
        input: 'the same long password\n',
      })
      expect(r.exitCode, String(r.stderr)).toBe(0)
    }
    const s = new SQLite(dbFile, { readonly: true })
    const rows = s.prepare(`select password_hash from users where email like 'salt_@farm.example'`).all() as { password_hash: string }[]
    s.close()
    const parts = rows.map((r) => r.password_hash.split('$'))
    for (const [scheme, params] of parts) {
      expect(scheme).toBe('scrypt')
      expect(params).toBe('N=131072,r=8,p=1')
    }
    expect(parts[0]![2]).not.toBe(parts[1]![2]) // salts
    expect(parts[0]![3]).not.toBe(parts[1]![3]) // derived keys
    expect(rows.every((r) => !r.password_hash.includes('the same long password'))).toBe(true)
  })

  it('compares derived keys in constant time (crypto.timingSafeEqual), never with == or Buffer.equals', () => {
    const source = readFileSync(new URL('../../shared/db/passwords.ts', import.meta.url), 'utf8')
    expect(source).toMatch(/timingSafeEqual\(key, decoded\.key\)/)
    expect(source).not.toMatch(/\.equals\(|key\s*===|===\s*decoded\.key|toString\([^)]*\)\s*===/)
  })
})

describe('sign-in answers', () => {
  it('answers an unknown account, a wrong password and a disabled account identically', async () => {
    await fx.writer.db.updateTable('users').set({ disabled: 1 }).where('email', '=', 'fcd@farm.example').execute()
    const answers = await Promise.all(
      ([
        ['nobody@loamridge.example', seedPassword],
        ['maren@loamridge.example', 'wrong-password'],
        ['fcd@farm.example', seedPassword],
      ] as const).map(async ([email, password]) => {
        const r = await signIn(email, password)
        return { status: r.status, body: r.body, cookie: r.headers['set-cookie'] ?? null, type: r.headers['content-type'] }
      }),
    )
    await fx.writer.db.updateTable('users').set({ disabled: 0 }).where('email', '=', 'fcd@farm.example').execute()
    expect(answers[0]!.status).toBe(401)
    expect(answers[0]!.cookie).toBeNull()
    expect(answers[1]).toEqual(answers[0])
    expect(answers[2]).toEqual(answers[0])
  })
})

describe('sign-in rate limits', () => {
  it('answers 429 after repeated failures for one account, even with the right password from another address', async () => {
    // the fixture trusts no proxy, so these addresses are ignored; the account limit must hold regardless
    for (let i = 0; i < 2; i++) expect((await signIn('teodor@loamridge.example', 'wrong', `192.0.2.${i}`)).status).toBe(401)
    const locked = await signIn('teodor@loamridge.example', seedPassword, '192.0.2.99')
    expect(locked.status).toBe(429)
    expect(locked.body.error.code).toBe('rate_limited')
    expect(locked.headers['set-cookie']).toBeUndefined()
    // another account is not affected
    expect((await signIn('maren@loamridge.example', seedPassword)).status).toBe(200)
  })

  it('answers 429 per address, and a forged X-Forwarded-For does not open a new budget', async () => {
    const limited = await makeSecurityFixture({ signInLimits: { perAccount: 1000, perAddress: 2, windowMs: 60_000 } })
    try {
      const statuses = []
      for (let i = 0; i < 5; i++) {
        statuses.push((await signIn(`nobody${i}@farm.example`, 'x', `203.0.113.${i}`, limited.app)).status)
      }
      expect(statuses).toEqual([401, 401, 429, 429, 429])
    } finally {
      await limited.close()
    }
  })

  it('behind one trusted proxy counts the address the proxy saw, not the ones the client prepended', async () => {
    const proxied = await makeSecurityFixture({ trustProxy: 1, signInLimits: { perAccount: 1000, perAddress: 2, windowMs: 60_000 } })
    try {
      const statuses = []
      for (let i = 0; i < 4; i++) {
        // the client sends a forged list; the proxy appends the real peer address last
        statuses.push((await signIn(`nobody${i}@farm.example`, 'x', `10.9.${i}.1, 198.51.100.${i}, 203.0.113.50`, proxied.app)).status)
      }
      expect(statuses).toEqual([401, 401, 429, 429])
      // a different real address still gets its own budget
      expect((await signIn('nobody@farm.example', 'x', '203.0.113.51', proxied.app)).status).toBe(401)
    } finally {
      await proxied.close()
    }
  })
})

describe('session cookie', () => {
  it('is HttpOnly, SameSite and expires with the session; a new sign-in never reuses a token it was sent', async () => {
    const planted = 'pitside_session=attacker-chosen-value'
    const r = await request(fx.app).post('/api/session').set('Cookie', planted).send({ email: 'qbf@farm.example', password: seedPassword })
    expect(r.status).toBe(200)
    const cookie = String(r.headers['set-cookie']![0])
    expect(cookie).toMatch(/; HttpOnly/i)
    expect(cookie).toMatch(/; SameSite=(Lax|Strict)/i)
    expect(cookie).toMatch(/; Max-Age=\d+/)
    expect(cookie).toMatch(/; Expires=/)
    expect(cookie).toMatch(/; Path=\//)
    expect(cookie).not.toContain('attacker-chosen-value')
    const value = cookie.split(';')[0]!
    expect((await request(fx.app).get('/api/session').set('Cookie', value)).status).toBe(200)
    // past its lifetime the same cookie no longer works
    const saved = fx.clock.now
    fx.clock.now = new Date(Date.parse(r.body.expires_at) + 1000)
    try {
      expect((await request(fx.app).get('/api/session').set('Cookie', value)).status).toBe(401)
    } finally {
      fx.clock.now = saved
    }
  })

  it('ends access at once on sign-out, even if the old cookie is replayed', async () => {
    const cookie = await fx.signIn('maren@loamridge.example')
    expect((await request(fx.app).get('/api/farms').set('Cookie', cookie)).status).toBe(200)
    const out = await request(fx.app).delete('/api/session').set('Cookie', cookie)
    expect(out.status).toBe(204)
    expect(String(out.headers['set-cookie']![0])).toMatch(/pitside_session=;.*Expires=Thu, 01 Jan 1970/)
    for (const path of ['/api/farms', '/api/session', `/api/plans/${fx.planOf.QBF}`]) {
      expect((await request(fx.app).get(path).set('Cookie', cookie)).status, path).toBe(401)
    }
  })

  it('ends access at once when `pitside users disable` runs while the viewer is up, and again after a password change', async () => {
    const cookie = await fx.signIn('qbf@farm.example')
    expect((await request(fx.app).get('/api/farms/QBF').set('Cookie', cookie)).status).toBe(200)
    expect((await runCli(['--db', dbFile, 'users', 'disable', 'qbf@farm.example'])).exitCode).toBe(0)
    expect((await request(fx.app).get('/api/farms/QBF').set('Cookie', cookie)).status).toBe(401)
    expect((await runCli(['--db', dbFile, 'users', 'enable', 'qbf@farm.example'])).exitCode).toBe(0)
    const again = await fx.signIn('qbf@farm.example')
    expect((await request(fx.app).get('/api/farms/QBF').set('Cookie', again)).status).toBe(200)
    const passwd = await runCli(['--db', dbFile, 'users', 'passwd', 'qbf@farm.example', '--password-stdin'], { input: 'a brand new password\n' })
    expect(passwd.exitCode, String(passwd.stderr)).toBe(0)
    expect((await request(fx.app).get('/api/farms/QBF').set('Cookie', again)).status).toBe(401)
  })

  it('refuses a session token that was altered, signed with another key, or signed without an expiry', async () => {
    const cookie = await fx.signIn('fcd@farm.example')
    const token = cookie.split('=')[1]!
    const [h, p, s] = token.split('.') as [string, string, string]
    const claims = JSON.parse(Buffer.from(p, 'base64url').toString())
    const maren = await fx.writer.db.selectFrom('users').select('id').where('email', '=', 'maren@loamridge.example').executeTakeFirstOrThrow()
    const { SignJWT } = await import('jose')
    const { exp: _, ...noExp } = claims
    const variants = [
      `${h}.${Buffer.from(JSON.stringify({ ...claims, sub: String(maren.id) })).toString('base64url')}.${s}`,
      `${Buffer.from(JSON.stringify({ alg: 'none', typ: 'pitside-session+jwt' })).toString('base64url')}.${p}.`,
      await new SignJWT(noExp).setProtectedHeader({ alg: 'HS256', typ: 'pitside-session+jwt' }).sign(fx.keys.session),
      await new SignJWT(claims).setProtectedHeader({ alg: 'HS256', typ: 'pitside-session+jwt' }).sign(fx.keys.share),
    ]
    for (const v of variants) expect((await request(fx.app).get('/api/session').set('Cookie', `pitside_session=${v}`)).status).toBe(401)
  })
})
