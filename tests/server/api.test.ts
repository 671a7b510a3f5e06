import request from 'supertest'
import { SignJWT } from 'jose'
import { readdirSync, readFileSync } from 'node:fs'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createShare, parseDurationMs } from '../../cli/actions/share.ts'
import { parseMailEnv } from '../../cli/actions/share-mail.ts'
import { revokeShareLink } from '../../shared/db/share-links.ts'
import { signShareToken } from '../../shared/db/share-tokens.ts'
import type { FarmDetail, FarmsResponse, PlanView, SharedPlanResponse } from '../../shared/api-types.ts'
import { makeViewerFixture, type ViewerFixture } from '../helpers/viewer-app.ts'
import { seedPassword } from '../helpers/viewer-seed.ts'

let fx: ViewerFixture
beforeAll(async () => {
  fx = await makeViewerFixture({ signInLimits: { perAccount: 3, perAddress: 1000, windowMs: 60_000 } })
})
afterAll(async () => {
  await fx.close()
})

const cookies = new Map<string, string>()
/** Signs in (once per account: each sign-in runs scrypt) and returns the session cookie (name=value). */
async function signIn(email: string, { fresh = false } = {}): Promise<string> {
  const known = cookies.get(email)
  if (known && !fresh) return known
  const r = await request(fx.app).post('/api/session').send({ email, password: seedPassword })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  const cookie = String(r.headers['set-cookie']![0]).split(';')[0]!
  cookies.set(email, cookie)
  return cookie
}

describe('sign-in', () => {
  it('sets an HttpOnly, SameSite=Lax session cookie with an expiry and answers with the user', async () => {
    const r = await request(fx.app).post('/api/session').send({ email: 'Maren@Loamridge.example', password: seedPassword })
    expect(r.status).toBe(200)
    expect(r.body.user).toMatchObject({ email: 'maren@loamridge.example', role: 'advisor', organization: { code: 'loamridge' } })
    const cookie = String(r.headers['set-cookie']![0])
    expect(cookie).toMatch(/^pitside_session=[\w-]+\.[\w-]+\.[\w-]+;/)
    expect(cookie).toMatch(/HttpOnly/)
    expect(cookie).toMatch(/SameSite=Lax/)
    expect(cookie).toMatch(/Max-Age=43200/)
    expect(cookie).not.toMatch(/Secure/) // plain http here
    expect(Date.parse(r.body.expires_at) - fx.clock.now.getTime()).toBe(12 * 3600_000)
  })

  it('returns the signed-in user from GET /api/session and forgets the session after DELETE', async () => {
    const cookie = await signIn('qbf@farm.example', { fresh: true })
    cookies.delete('qbf@farm.example')
    const me = await request(fx.app).get('/api/session').set('Cookie', cookie)
    expect(me.status).toBe(200)
    expect(me.body.user).toMatchObject({ email: 'qbf@farm.example', role: 'client', farms: ['QBF'] })
    const out = await request(fx.app).delete('/api/session').set('Cookie', cookie)
    expect(out.status).toBe(204)
    expect(String(out.headers['set-cookie']![0])).toMatch(/pitside_session=;/)
    const after = await request(fx.app).get('/api/session').set('Cookie', cookie)
    expect(after.status).toBe(401)
    expect(after.body.error.code).toBe('unauthorized')
  })

  it('gives the same answer for an unknown e-mail, a wrong password and a disabled account', async () => {
    await fx.writer.db.updateTable('users').set({ disabled: 1 }).where('email', '=', 'teodor@loamridge.example').execute()
    const answers = []
    for (const [email, password, address] of [
      ['nobody@loamridge.example', seedPassword, '198.51.100.1'],
      ['maren@loamridge.example', 'not-the-password', '198.51.100.2'],
      ['teodor@loamridge.example', seedPassword, '198.51.100.3'],
    ]) {
      const r = await request(fx.app).post('/api/session').set('X-Forwarded-For', address!).send({ email, password })
      answers.push({ status: r.status, body: r.body, cookie: r.headers['set-cookie'] ?? null })
    }
    expect(answers[0]).toEqual({ status: 401, body: { error: { code: 'unauthorized', message: 'the e-mail address or the password is not right' } }, cookie: null })
    expect(answers[1]).toEqual(answers[0])
    expect(answers[2]).toEqual(answers[0])
    await fx.writer.db.updateTable('users').set({ disabled: 0 }).where('email', '=', 'teodor@loamridge.example').execute()
  })

  it('ends the sessions of an account that is disabled or whose password changes', async () => {
    const cookie = await signIn('teodor@loamridge.example', { fresh: true })
    await fx.writer.db.updateTable('users').set({ disabled: 1 }).where('email', '=', 'teodor@loamridge.example').execute()
    expect((await request(fx.app).get('/api/farms').set('Cookie', cookie)).status).toBe(401)
    await fx.writer.db.updateTable('users').set({ disabled: 0 }).where('email', '=', 'teodor@loamridge.example').execute()
    expect((await request(fx.app).get('/api/farms').set('Cookie', cookie)).status).toBe(200)
    const { password_hash } = await fx.writer.db.selectFrom('users').select('password_hash').where('email', '=', 'teodor@loamridge.example').executeTakeFirstOrThrow()
    await fx.writer.db.updateTable('users').set({ password_hash: password_hash.replace(/.$/, (c) => (c === 'A' ? 'B' : 'A')) }).where('email', '=', 'teodor@loamridge.example').execute()
    expect((await request(fx.app).get('/api/farms').set('Cookie', cookie)).status).toBe(401)
    await fx.writer.db.updateTable('users').set({ password_hash }).where('email', '=', 'teodor@loamridge.example').execute()
  })

  it('refuses a body that is not JSON, or JSON without the two fields', async () => {
    const form = await request(fx.app).post('/api/session').type('form').send('email=a&password=b')
    expect(form.status).toBe(400)
    const broken = await request(fx.app).post('/api/session').set('Content-Type', 'application/json').send('{"email":')
    expect(broken.status).toBe(400)
    expect(broken.body.error.code).toBe('invalid_input')
    const missing = await request(fx.app).post('/api/session').send({ email: 'x@y.example' })
    expect(missing.status).toBe(400)
  })

  it('marks the cookie Secure when served over https behind a trusted proxy', async () => {
    const proxied = await makeViewerFixture({ trustProxy: 1 })
    try {
      const r = await request(proxied.app)
        .post('/api/session')
        .set('X-Forwarded-Proto', 'https')
        .send({ email: 'maren@loamridge.example', password: seedPassword })
      expect(r.status).toBe(200)
      expect(String(r.headers['set-cookie']![0])).toMatch(/; Secure/)
    } finally {
      await proxied.close()
    }
  })
})

describe('sign-in rate limits', () => {
  it('locks an account after repeated failures, even with the right password from a new address', async () => {
    const email = 'fcd@farm.example'
    for (let i = 0; i < 3; i++) {
      const r = await request(fx.app).post('/api/session').set('X-Forwarded-For', `192.0.2.${10 + i}`).send({ email, password: 'wrong-password' })
      expect(r.status).toBe(401)
    }
    const locked = await request(fx.app).post('/api/session').set('X-Forwarded-For', '192.0.2.99').send({ email, password: seedPassword })
    expect(locked.status).toBe(429)
    expect(locked.body.error).toMatchObject({ code: 'rate_limited' })
    expect(locked.body.error.message).toMatch(/this account/)
    const caseVariant = await request(fx.app).post('/api/session').send({ email: ' FCD@farm.example ', password: seedPassword })
    expect(caseVariant.status).toBe(429)
  })

  it('limits attempts per address, and a forged X-Forwarded-For does not reset the count', async () => {
    const limitedApp = await makeViewerFixture({ signInLimits: { perAccount: 3, perAddress: 4, windowMs: 60_000 } })
    try {
      const statuses: number[] = []
      for (let i = 0; i < 5; i++) {
        const r = await request(limitedApp.app)
          .post('/api/session')
          .set('X-Forwarded-For', `10.0.${i}.1`)
          .send({ email: `someone${i}@example.org`, password: 'guess-guess' })
        statuses.push(r.status)
      }
      expect(statuses.slice(0, 4)).toEqual(Array(4).fill(401))
      expect(statuses[4]).toBe(429)
    } finally {
      await limitedApp.close()
    }
  })
})

describe('roles', () => {
  it('shows an advisor every farm of their organization and none of another', async () => {
    const cookie = await signIn('maren@loamridge.example')
    const r = await request(fx.app).get('/api/farms').set('Cookie', cookie)
    expect(r.status).toBe(200)
    const body = r.body as FarmsResponse
    expect(body.farms.map((f) => f.code)).toEqual(['FCD', 'QBF', 'RSF'])
    const qbf = body.farms.find((f) => f.code === 'QBF')!
    expect(qbf).toMatchObject({ storages: 2, fields: 3, acres: 137.5, latest_plan: { version: 2, season: 2027 } })
  })

  it('shows a client only the farms granted to them', async () => {
    const cookie = await signIn('qbf@farm.example')
    const farms = await request(fx.app).get('/api/farms').set('Cookie', cookie)
    expect((farms.body as FarmsResponse).farms.map((f) => f.code)).toEqual(['QBF'])
    const own = await request(fx.app).get('/api/farms/QBF').set('Cookie', cookie)
    expect(own.status).toBe(200)
    const other = await request(fx.app).get('/api/farms/FCD').set('Cookie', cookie)
    const missing = await request(fx.app).get('/api/farms/NOPE').set('Cookie', cookie)
    expect(other.status).toBe(404)
    expect(other.body).toEqual({ error: { code: 'not_found', message: 'no farm FCD' } })
    expect(missing.body).toEqual({ error: { code: 'not_found', message: 'no farm NOPE' } })
  })

  it("answers another farm's plan with the same 404 as a plan that does not exist", async () => {
    const cookie = await signIn('qbf@farm.example')
    const own = await request(fx.app).get(`/api/plans/${fx.seed.plans['QBF-v2']}`).set('Cookie', cookie)
    expect(own.status).toBe(200)
    const otherId = fx.seed.plans['FCD-v1']!
    const other = await request(fx.app).get(`/api/plans/${otherId}`).set('Cookie', cookie)
    const missing = await request(fx.app).get('/api/plans/999999').set('Cookie', cookie)
    expect(other.status).toBe(404)
    expect(missing.status).toBe(404)
    expect(other.body.error.message.replace(String(otherId), 'ID')).toBe(missing.body.error.message.replace('999999', 'ID'))
    expect(Object.keys(other.headers).sort()).toEqual(Object.keys(missing.headers).sort())
    const versions = await request(fx.app).get(`/api/plans/${otherId}/versions`).set('Cookie', cookie)
    expect(versions.status).toBe(404)
    const another = await signIn('ada@brightwater.example')
    expect((await request(fx.app).get(`/api/plans/${fx.seed.plans['QBF-v1']}`).set('Cookie', another)).status).toBe(404)
    expect((await request(fx.app).get('/api/farms/QBF').set('Cookie', another)).status).toBe(404)
  })

  it('refuses every data route without a session', async () => {
    for (const path of ['/api/farms', '/api/farms/QBF', `/api/plans/${fx.seed.plans['QBF-v1']}`, `/api/plans/${fx.seed.plans['QBF-v1']}/versions`]) {
      const r = await request(fx.app).get(path)
      expect(r.status, path).toBe(401)
      expect(r.body.error.code).toBe('unauthorized')
    }
    const forged = await request(fx.app).get('/api/farms').set('Cookie', 'pitside_session=eyJhbGciOiJub25lIn0.eyJzdWIiOiIxIn0.')
    expect(forged.status).toBe(401)
  })
})

describe('farms and plans', () => {
  it('gives a farm its storages with the latest round, its spread and a trend over seasons', async () => {
    const cookie = await signIn('maren@loamridge.example')
    const r = await request(fx.app).get('/api/farms/QBF').set('Cookie', cookie)
    const farm = r.body as FarmDetail
    const pit = farm.storages.find((s) => s.code === 'PIT-N')!
    expect(pit.analysis_unit).toBe('lb/1000 gal')
    expect(pit.results).toBe(15)
    expect(pit.seasons.map((s) => [s.season, s.samples])).toEqual([[2024, 5], [2025, 5], [2026, 5]])
    expect(pit.latest_round!.samples).toHaveLength(3)
    expect(pit.latest_round!.from).toBe('2026-10-10')
    const tn = pit.latest_round!.values.total_n
    expect(tn.n).toBe(3)
    const values = pit.latest_round!.samples.map((s) => s.total_n!)
    const mean = values.reduce((a, b) => a + b) / 3
    expect(tn.mean).toBeCloseTo(mean, 9)
    expect(tn.sd).toBeCloseTo(Math.sqrt(values.reduce((a, v) => a + (v - mean) ** 2, 0) / 2), 9)
    expect(farm.fields.map((f) => [f.code, f.crop, f.storage])).toEqual([
      ['CREEK', 'corn_grain', 'PIT-N'],
      ['HILL', 'corn_silage', 'PIT-S'],
      ['N40', 'corn_grain', 'PIT-N'],
    ])
    expect(farm.plans.map((p) => p.version)).toEqual([2, 1])
  })

  it('serves a plan from its stored JSON, with an ETag that answers 304', async () => {
    const cookie = await signIn('maren@loamridge.example')
    const id = fx.seed.plans['QBF-v2']!
    const r = await request(fx.app).get(`/api/plans/${id}`).set('Cookie', cookie)
    const plan = r.body as PlanView
    const stored = JSON.parse(
      (await fx.writer.db.selectFrom('plans').select('result').where('id', '=', id).executeTakeFirstOrThrow()).result,
    )
    expect(plan.result).toEqual(stored)
    expect(plan).toMatchObject({ id, version: 2, season: 2027, farm: { code: 'QBF', name: 'Quillback Finishing' }, created_by: 'maren@loamridge.example' })
    expect(plan.storages.map((s) => s.species)).toEqual(['swine', 'swine'])
    // the case each field was computed from, for the what-if panel
    const inputs = JSON.parse((await fx.writer.db.selectFrom('plans').select('inputs').where('id', '=', id).executeTakeFirstOrThrow()).inputs)
    expect(Object.keys(plan.cases).sort()).toEqual(['CREEK', 'HILL', 'N40'])
    expect(plan.cases.N40).toEqual(inputs.fields.find((f: { code: string }) => f.code === 'N40').case)
    const again = await request(fx.app).get(`/api/plans/${id}`).set('Cookie', cookie).set('If-None-Match', String(r.headers.etag))
    expect(again.status).toBe(304)
    const versions = await request(fx.app).get(`/api/plans/${id}/versions`).set('Cookie', cookie)
    expect(versions.body.versions.map((v: { version: number }) => v.version)).toEqual([2, 1])
  })

  it('sends plans and the built assets gzipped to clients that accept it', async () => {
    const cookie = await signIn('maren@loamridge.example')
    const id = fx.seed.plans['QBF-v1']!
    const zipped = await request(fx.app).get(`/api/plans/${id}`).set('Cookie', cookie).set('Accept-Encoding', 'gzip, br')
    expect(zipped.headers['content-encoding']).toBe('gzip')
    expect((zipped.body as PlanView).id).toBe(id)
    const plain = await request(fx.app).get(`/api/plans/${id}`).set('Cookie', cookie).set('Accept-Encoding', 'gzip;q=0, identity')
    expect(plain.headers['content-encoding']).toBeUndefined()
    expect(plain.body).toEqual(zipped.body)
    const asset = await request(fx.app).get('/assets/app-3f9a.js').set('Accept-Encoding', 'gzip')
    expect(asset.status).toBe(200)
    expect(asset.headers['content-encoding']).toBe('gzip')
    expect(asset.headers['cache-control']).toBe('public, max-age=31536000, immutable')
    expect(asset.text).toBe('console.log("pitside");\n'.repeat(50))
    expect((await request(fx.app).get('/assets/missing.js')).status).toBe(404)
    const page = await request(fx.app).get('/farms/QBF')
    expect(page.status).toBe(200)
    expect(page.text).toMatch(/<div id="root">/)
  })

  it('answers an unknown API route with a JSON 404 and sets the security headers', async () => {
    const r = await request(fx.app).get('/api/nothing-here')
    expect(r.status).toBe(404)
    expect(r.body).toEqual({ error: { code: 'not_found', message: 'no API route GET /api/nothing-here' } })
    expect(r.headers['x-content-type-options']).toBe('nosniff')
    expect(r.headers['content-security-policy']).toMatch(/default-src 'self'/)
    expect(r.headers['x-powered-by']).toBeUndefined()
  })

  it('answers a failure inside the server with a 500 that carries no internals', async () => {
    const broken = await makeViewerFixture()
    try {
      broken.reader.sqlite.close()
      const r = await request(broken.app).post('/api/session').send({ email: 'maren@loamridge.example', password: seedPassword })
      expect(r.status).toBe(500)
      expect(r.body).toEqual({ error: { code: 'internal', message: 'something went wrong on the server (this is a bug)' } })
      expect(JSON.stringify(r.body)).not.toMatch(/sqlite|connection|stack/i)
      expect(broken.logs.join('\n')).toMatch(/unexpected failure/)
    } finally {
      await broken.close()
    }
  })
})

describe('share links', () => {
  const mail = () => parseMailEnv({ PITSIDE_OUTBOX: fx.tmp.path('outbox') })
  const share = (planId: number, expires = '30d') =>
    createShare(
      { db: fx.writer.db, keys: fx.keys, mail: mail(), publicUrl: 'http://viewer.example', now: () => fx.clock.now },
      { planId, to: 'qbf@farm.example', expiresInMs: parseDurationMs(expires), createdBy: 'maren@loamridge.example' },
    )
  const tokenOf = (url: string) => url.split('/').pop()!

  it('opens the plan behind a link without an account, never cached and never sent as a referrer', async () => {
    const planId = fx.seed.plans['QBF-v2']!
    const created = await share(planId)
    expect(created.url).toMatch(/^http:\/\/viewer\.example\/s\/[\w-]+\.[\w-]+\.[\w-]+$/)
    const r = await request(fx.app).get(`/api/share/${tokenOf(created.url)}`)
    expect(r.status).toBe(200)
    expect(r.headers['cache-control']).toBe('no-store')
    expect(r.headers['referrer-policy']).toBe('no-referrer')
    const body = r.body as SharedPlanResponse
    expect(body.plan.id).toBe(planId)
    expect(body.expires_at).toBe(created.link.expiresAt)
    const page = await request(fx.app).get(`/s/${tokenOf(created.url)}`)
    expect(page.status).toBe(200)
    expect(page.headers['cache-control']).toBe('no-store')
    expect(page.headers['referrer-policy']).toBe('no-referrer')
  })

  it('writes the e-mail to the outbox with the link in it', async () => {
    const created = await share(fx.seed.plans['FCD-v1']!)
    expect(created.outboxFile).toMatch(/outbox\/\d{8}T\d{6}Z-[0-9a-f-]{36}\.eml$/)
    expect(readdirSync(fx.tmp.path('outbox'))).toContain(created.outboxFile!.split('/').pop())
    const eml = readFileSync(created.outboxFile!, 'utf8')
    expect(eml).toMatch(/^To: qbf@farm\.example$/m)
    expect(eml).toMatch(/^Subject: Manure application plan 2027 for Ferncastle Dairy$/m)
    const unfolded = eml.replace(/=\r?\n/g, '').replace(/=3D/g, '=')
    expect(unfolded).toContain(created.url)
    expect(unfolded).toMatch(/hydrogen sulfide/)
  })

  it('refuses an expired link with a clear message', async () => {
    const created = await share(fx.seed.plans['QBF-v1']!, '1h')
    const saved = fx.clock.now
    fx.clock.now = new Date(saved.getTime() + 2 * 3600_000)
    try {
      const r = await request(fx.app).get(`/api/share/${tokenOf(created.url)}`)
      expect(r.status).toBe(401)
      expect(r.body.error.message).toMatch(/has expired/)
      expect(r.headers['cache-control']).toBe('no-store')
    } finally {
      fx.clock.now = saved
    }
  })

  it('refuses a revoked link', async () => {
    const created = await share(fx.seed.plans['QBF-v1']!)
    expect((await request(fx.app).get(`/api/share/${tokenOf(created.url)}`)).status).toBe(200)
    await revokeShareLink(fx.writer.db, created.link.id)
    const r = await request(fx.app).get(`/api/share/${tokenOf(created.url)}`)
    expect(r.status).toBe(401)
    expect(r.body.error.message).toMatch(/withdrawn/)
  })

  it('refuses a tampered link: changed payload, changed signature, another key, alg none', async () => {
    const created = await share(fx.seed.plans['QBF-v1']!)
    const [h, p, s] = tokenOf(created.url).split('.') as [string, string, string]
    const payload = JSON.parse(Buffer.from(p, 'base64url').toString())
    const otherPlan = { ...payload, sub: String(fx.seed.plans['FCD-v1']) }
    const variants = [
      `${h}.${Buffer.from(JSON.stringify(otherPlan)).toString('base64url')}.${s}`,
      `${h}.${p}.${s.slice(0, -2)}${s.endsWith('AA') ? 'BB' : 'AA'}`,
      `${Buffer.from(JSON.stringify({ alg: 'none', typ: 'pitside-share+jwt' })).toString('base64url')}.${p}.`,
      await signShareToken(new Uint8Array(32).fill(7), { id: payload.jti, planId: payload.sub, expiresAt: new Date(payload.exp * 1000) }, fx.clock.now),
      'not-a-token',
    ]
    for (const token of variants) {
      const r = await request(fx.app).get(`/api/share/${encodeURIComponent(token)}`)
      expect(r.status, token).toBe(401)
      expect(r.body.error.message).toMatch(/not valid/)
      expect(JSON.stringify(r.body)).not.toContain('Ferncastle')
    }
  })

  it("never opens plan B with plan A's link, even when re-signed with the right key", async () => {
    const a = fx.seed.plans['QBF-v1']!
    const b = fx.seed.plans['FCD-v1']!
    const created = await share(a)
    const forged = await signShareToken(fx.keys.share, { id: created.link.id, planId: b, expiresAt: new Date(created.link.expiresAt) }, fx.clock.now)
    const r = await request(fx.app).get(`/api/share/${forged}`)
    expect(r.status).toBe(401)
    expect(JSON.stringify(r.body)).not.toContain('Ferncastle')
    // nor does the link work as a session, for the plan it names or any other
    for (const id of [a, b]) {
      const asCookie = await request(fx.app).get(`/api/plans/${id}`).set('Cookie', `pitside_session=${tokenOf(created.url)}`)
      expect(asCookie.status).toBe(401)
    }
  })

  it('does not take a session token signed with the share key', async () => {
    const token = await new SignJWT({ st: 'x' })
      .setProtectedHeader({ alg: 'HS256', typ: 'pitside-session+jwt' })
      .setIssuer('pitside')
      .setAudience('pitside:session')
      .setSubject('1')
      .setJti('j')
      .setIssuedAt()
      .setExpirationTime('1h')
      .sign(fx.keys.share)
    expect((await request(fx.app).get('/api/farms').set('Cookie', `pitside_session=${token}`)).status).toBe(401)
  })
})
