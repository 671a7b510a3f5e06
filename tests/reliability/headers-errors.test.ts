// Security headers and error answers: OWASP ASVS 5.0 V3.4 "Browser Security Mechanism Headers"
// (CSP, X-Content-Type-Options, frame-ancestors, Referrer-Policy), V13.4 "Unintended Information
// Leakage" (no stack traces, no internal details, no X-Powered-By), V4.1 / V1.3 input limits;
// OWASP HTTP Headers Cheat Sheet and Error Handling Cheat Sheet.
import request from 'supertest'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { seedPassword } from '../helpers/viewer-seed.ts'
import { makeSecurityFixture, type SecurityFixture } from './helpers/security-fixture.ts'

let fx: SecurityFixture
let broken: SecurityFixture
let cookie: string
beforeAll(async () => {
  fx = await makeSecurityFixture()
  broken = await makeSecurityFixture()
  cookie = await broken.signIn('maren@loamridge.example')
  broken.reader.sqlite.close() // every later database read inside the server fails
}, 60_000)
afterAll(async () => {
  await fx?.close()
  await broken?.close()
})

function expectSecurityHeaders(r: request.Response, what: string) {
  const csp = String(r.headers['content-security-policy'] ?? '')
  expect(csp, what).toMatch(/default-src 'self'/)
  expect(csp, what).toMatch(/script-src 'self'(;|$)/) // no inline or eval scripts
  expect(csp, what).toMatch(/object-src 'none'/)
  expect(csp, what).toMatch(/frame-ancestors 'none'/)
  expect(csp, what).toMatch(/base-uri 'none'/)
  expect(r.headers['x-content-type-options'], what).toBe('nosniff')
  expect(r.headers['x-powered-by'], what).toBeUndefined()
  expect(r.headers['referrer-policy'], what).toBe('no-referrer')
  expect(r.headers['x-frame-options'], what).toBe('SAMEORIGIN')
  expect(r.headers['cross-origin-opener-policy'], what).toBe('same-origin')
}

/** No stack frames, SQL, file paths or driver names in a body the client sees. */
function expectNoInternals(r: request.Response, what: string) {
  const text = r.text
  expect(text, what).not.toMatch(/\bat [\w.<>]+ \(|\.ts:\d+|\.js:\d+/)
  expect(text, what).not.toMatch(/\b(select|insert|update|delete)\b .*\b(from|into|set)\b/i)
  expect(text, what).not.toMatch(/sqlite|better-sqlite3|kysely|SqliteError|database connection/i)
  expect(text, what).not.toMatch(/\/(work|tmp|home|usr|root)\//)
  expect(text, what).not.toMatch(/node_modules/)
}

describe('security headers', () => {
  it('are on 200 answers: API, pages, assets and the share page', async () => {
    const signedIn = await fx.signIn('qbf@farm.example')
    for (const [what, r] of [
      ['GET /api/session', await request(fx.app).get('/api/session').set('Cookie', signedIn)],
      ['GET /api/farms', await request(fx.app).get('/api/farms').set('Cookie', signedIn)],
      ['GET /', await request(fx.app).get('/')],
      ['GET /s/<token>', await request(fx.app).get(`/s/${fx.share.valid.token}`)],
      ['GET /api/share/<token>', await request(fx.app).get(`/api/share/${fx.share.valid.token}`)],
    ] as const) {
      expect(r.status, what).toBe(200)
      expectSecurityHeaders(r, what)
    }
  })

  it('are on 4xx answers: unknown routes, unknown methods, refused sign-ins and missing data', async () => {
    for (const [what, r, status] of [
      ['GET /api/nothing', await request(fx.app).get('/api/nothing'), 404],
      ['PUT /api/farms', await request(fx.app).put('/api/farms').send({}), 404],
      ['GET /api/farms (no session)', await request(fx.app).get('/api/farms'), 401],
      ['POST /api/session (wrong password)', await request(fx.app).post('/api/session').send({ email: 'maren@loamridge.example', password: 'nope' }), 401],
      ['GET /api/share/garbage', await request(fx.app).get('/api/share/garbage'), 401],
      ['GET /assets/missing.js', await request(fx.app).get('/assets/missing.js'), 404],
    ] as const) {
      expect(r.status, what).toBe(status)
      expectSecurityHeaders(r, what)
      expectNoInternals(r, what)
    }
  })

  it('are on 500 answers, which carry no stack, SQL or paths', async () => {
    for (const [what, r] of [
      ['POST /api/session', await request(broken.app).post('/api/session').send({ email: 'maren@loamridge.example', password: seedPassword })],
      ['GET /api/farms', await request(broken.app).get('/api/farms').set('Cookie', cookie)],
      ['GET /api/plans/1', await request(broken.app).get('/api/plans/1').set('Cookie', cookie)],
      ['GET /api/share/<token>', await request(broken.app).get(`/api/share/${broken.share.valid.token}`)],
    ] as const) {
      expect(r.status, what).toBeGreaterThanOrEqual(500)
      expectSecurityHeaders(r, what)
      expectNoInternals(r, what)
      expect(r.body.error.code, what).toMatch(/^(internal|database)$/)
    }
    // the details go to the server's own log instead
    expect(broken.logs.join('\n')).toMatch(/unexpected failure|database/)
  })
})

describe('request bodies', () => {
  it('answers an oversized sign-in body with 413, and the server keeps serving', async () => {
    const big = { email: 'maren@loamridge.example', password: 'x'.repeat(10_000) }
    const r = await request(fx.app).post('/api/session').send(big)
    expect(r.status).toBe(413)
    expect(r.body.error.code).toBe('invalid_input')
    expectSecurityHeaders(r, '413')
    expectNoInternals(r, '413')
    const huge = await request(fx.app).post('/api/session').set('Content-Type', 'application/json').send('{"email":"' + 'a'.repeat(2_000_000) + '"}')
    expect(huge.status).toBe(413)
    expect((await request(fx.app).get('/api/nothing')).status).toBe(404)
  })

  it('answers a body that is not JSON with 400 and does not echo it back', async () => {
    const r = await request(fx.app).post('/api/session').set('Content-Type', 'application/json').send('{"email": <script>alert(1)</script>')
    expect(r.status).toBe(400)
    expect(r.text).not.toContain('<script>')
    expectNoInternals(r, '400')
  })

  it('does not reflect a requested path into an HTML answer', async () => {
    const r = await request(fx.app).get('/api/%3Cscript%3Ealert(1)%3C%2Fscript%3E')
    expect(r.status).toBe(404)
    expect(r.headers['content-type']).toMatch(/application\/json/)
  })
})
