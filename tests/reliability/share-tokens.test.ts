// Share-link tokens: RFC 8725 "JSON Web Token Best Current Practices" §2 (threats) and §3 (pinned
// algorithms §3.1, validate all crypto §3.3, issuer and subject §3.8, audience §3.9, explicit typing
// §3.11, cross-JWT confusion §3.12), OWASP JSON Web Token Cheat Sheet for Java (none algorithm,
// token sidejacking, revocation), OWASP ASVS 5.0 V9 "Self-contained Tokens". Every bad token gets the
// same answer, so a failure tells an attacker nothing about which check it tripped.
import { generateKeyPair, exportJWK, SignJWT, type JWTPayload } from 'jose'
import { randomUUID } from 'node:crypto'
import request from 'supertest'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { revokeShareLink } from '../../shared/db/share-links.ts'
import { signShareToken } from '../../shared/db/share-tokens.ts'
import { spawnServe } from '../helpers/viewer-server.ts'
import { makeSecurityFixture, type SecurityFixture } from './helpers/security-fixture.ts'

let fx: SecurityFixture
beforeAll(async () => {
  fx = await makeSecurityFixture()
})
afterAll(async () => {
  await fx?.close()
})

const b64 = (v: unknown) => Buffer.from(typeof v === 'string' ? v : JSON.stringify(v)).toString('base64url')
const header = { alg: 'HS256', typ: 'pitside-share+jwt' }

/** Claims as signShareToken writes them, for the valid link. */
function goodClaims(): JWTPayload {
  const nowS = Math.floor(fx.clock.now.getTime() / 1000)
  return { iss: 'pitside', aud: 'pitside:share', sub: String(fx.share.valid.planId), jti: fx.share.valid.id, iat: nowS, exp: nowS + 86_400 }
}

async function sign(claims: JWTPayload, protectedHeader: Record<string, unknown> = header, key: Uint8Array = fx.keys.share) {
  return new SignJWT(claims).setProtectedHeader(protectedHeader as { alg: string }).sign(key)
}

let made: Promise<[string, string][]> | null = null
/** The bad tokens, made once per file (key generation and a sign-in take a while). */
function badTokens(): Promise<[string, string][]> {
  return (made ??= makeBadTokens())
}

async function makeBadTokens(): Promise<[string, string][]> {
  const good = fx.share.valid.token
  const [h, p, s] = good.split('.') as [string, string, string]
  const claims = goodClaims()
  const nowS = claims.iat!
  const rsa = await generateKeyPair('RS256', { extractable: true })
  const ec = await generateKeyPair('ES256', { extractable: true })
  const attacker = new Uint8Array(32).fill(9)
  const revoked = await (async () => {
    const id = randomUUID()
    const expiresAt = new Date(fx.clock.now.getTime() + 86_400_000)
    const { insertShareLink } = await import('../../shared/db/share-links.ts')
    await insertShareLink(fx.writer.db, { id, planId: fx.share.valid.planId, recipientEmail: 'r@farm.example', createdBy: 't', expiresAt })
    await revokeShareLink(fx.writer.db, id, fx.clock.now)
    return signShareToken(fx.keys.share, { id, planId: fx.share.valid.planId, expiresAt }, fx.clock.now)
  })()
  const without = (k: keyof JWTPayload) => Object.fromEntries(Object.entries(claims).filter(([key]) => key !== k))
  return [
    // RFC 8725 §2.1 / §3.1: "none" and algorithm substitution
    ['alg none, no signature', `${b64({ alg: 'none', typ: header.typ })}.${p}.`],
    ['alg none, original signature kept', `${b64({ alg: 'none', typ: header.typ })}.${p}.${s}`],
    ['alg NoNe (case trick)', `${b64({ alg: 'NoNe', typ: header.typ })}.${p}.`],
    ['HS512 with the right key', await sign(claims, { ...header, alg: 'HS512' })],
    ['HS384 with the right key', await sign(claims, { ...header, alg: 'HS384' })],
    ['RS256 with an embedded jwk (attacker key)', await new SignJWT(claims).setProtectedHeader({ ...header, alg: 'RS256', jwk: await exportJWK(rsa.publicKey) }).sign(rsa.privateKey)],
    ['ES256 with an embedded jwk', await new SignJWT(claims).setProtectedHeader({ ...header, alg: 'ES256', jwk: await exportJWK(ec.publicKey) }).sign(ec.privateKey)],
    ['jku pointing at an attacker key set', await sign(claims, { ...header, jku: 'https://attacker.example/jwks.json' }, attacker)],
    ['x5u pointing at an attacker certificate', await sign(claims, { ...header, x5u: 'https://attacker.example/cert.pem' }, attacker)],
    ['kid path traversal with an empty key', await sign(claims, { ...header, kid: '../../../../dev/null' }, new Uint8Array(32))],
    ['kid SQL injection', await sign(claims, { ...header, kid: "x' UNION SELECT 'secret" }, new TextEncoder().encode('secret'.padEnd(32, '\0')))],
    ['unknown critical header', `${b64({ ...header, crit: ['exp2'], exp2: 1 })}.${p}.${s}`],
    ['unencoded payload (b64: false)', `${b64({ ...header, b64: false, crit: ['b64'] })}.${p}.${s}`],
    // RFC 8725 §3.3: validate all cryptographic operations
    ['payload changed, signature kept', `${h}.${b64({ ...claims, sub: String(fx.planOf.FCD) })}.${s}`],
    ['signature changed', `${h}.${p}.${s.slice(0, -3)}${s.endsWith('AAA') ? 'BBB' : 'AAA'}`],
    ['signature removed', `${h}.${p}.`],
    ['signed with another key', await sign(claims, header, attacker)],
    ['signed with the session key (cross-JWT confusion, §3.12)', await sign(claims, header, fx.keys.session)],
    // RFC 7519 §4.1.4 / §4.1.5 and RFC 8725 §3.10: time claims
    ['expired link', fx.share.expired.token],
    ['expired by its exp claim', await sign({ ...claims, exp: nowS - 60 })],
    ['no expiry at all', await sign(without('exp'))],
    ['expiry as a string', await sign({ ...claims, exp: String(nowS + 3600) as unknown as number })],
    ['not yet valid (nbf in the future)', await sign({ ...claims, nbf: nowS + 3600 })],
    ['no issued-at', await sign(without('iat'))],
    // RFC 8725 §3.8, §3.9, §3.11: issuer, audience, explicit type
    ['wrong issuer', await sign({ ...claims, iss: 'someone-else' })],
    ['no issuer', await sign(without('iss'))],
    ['wrong audience (the session audience)', await sign({ ...claims, aud: 'pitside:session' })],
    ['wrong type (plain JWT)', await sign(claims, { alg: 'HS256', typ: 'JWT' })],
    ['the session type', await sign(claims, { alg: 'HS256', typ: 'pitside-session+jwt' })],
    ['no type', await sign(claims, { alg: 'HS256' })],
    // binding to one plan and to a stored, unrevoked link (OWASP JWT cheat sheet: revocation)
    ["plan A's link id on plan B, re-signed with the right key", await sign({ ...claims, sub: String(fx.planOf.FCD) })],
    ["plan A's link id on another firm's plan", await sign({ ...claims, sub: String(fx.planOf.BWD) })],
    ['revoked link', revoked],
    ['link id that was never stored', await sign({ ...claims, jti: randomUUID() })],
    ['no link id', await sign(without('jti'))],
    ['subject that is not a plan id', await sign({ ...claims, sub: 'QBF' })],
    ['subject zero', await sign({ ...claims, sub: '0' })],
    // size and shape
    ['oversized but correctly signed', await sign({ ...claims, pad: 'x'.repeat(3000) })],
    ['very large', 'e'.repeat(12_000)],
    ['five parts (JWE shape)', `${h}.${p}.${s}.AAAA.BBBB`],
    ['two parts', `${h}.${p}`],
    ['not base64url', `${h}.${p}.${s.replace(/.$/, '+')}/=`],
    ['header that is not JSON', `${b64('not json')}.${p}.${s}`],
    ['a session cookie token', (await fx.signIn('qbf@farm.example')).split('=')[1]!],
  ]
}

describe('share tokens', () => {
  it('opens the plan with the real link (the control for the refusals below)', async () => {
    const r = await request(fx.app).get(`/api/share/${fx.share.valid.token}`)
    expect(r.status).toBe(200)
    expect(r.body.plan.farm.code).toBe('QBF')
  })

  it('refuses every bad token with one and the same generic answer', async () => {
    const tokens = await badTokens()
    expect(tokens.length).toBeGreaterThanOrEqual(25)
    const answers = new Map<string, string[]>()
    for (const [name, token] of tokens) {
      const r = await request(fx.app).get(`/api/share/${encodeURIComponent(token)}`)
      const key = JSON.stringify({ status: r.status, body: r.body, cache: r.headers['cache-control'], referrer: r.headers['referrer-policy'] })
      answers.set(key, [...(answers.get(key) ?? []), name])
      expect(JSON.stringify(r.body), name).not.toMatch(/Quillback|Ferncastle|Bramblegate/)
    }
    const distinct = [...answers.keys()]
    expect(distinct, `different answers: ${JSON.stringify([...answers.values()])}`).toHaveLength(1)
    expect(JSON.parse(distinct[0]!)).toMatchObject({ status: 401, cache: 'no-store', referrer: 'no-referrer', body: { error: { code: 'unauthorized' } } })
  }, 60_000)

  it('never writes a token into the server log', async () => {
    const tokens = (await badTokens()).map(([, t]) => t)
    for (const t of [fx.share.valid.token, ...tokens.slice(0, 10)]) await request(fx.app).get(`/api/share/${encodeURIComponent(t)}`)
    await request(fx.app).get(`/api/share/${fx.share.valid.token}/extra`) // an unknown API route under /share
    const log = fx.logs.join('\n')
    for (const t of [fx.share.valid.token, ...tokens]) expect(log.includes(t.slice(0, 40)) && t.length >= 40).toBe(false)
  })

  it('sends the share page and its API with Referrer-Policy: no-referrer and Cache-Control: no-store', async () => {
    for (const path of [`/s/${fx.share.valid.token}`, `/api/share/${fx.share.valid.token}`, '/api/share/garbage']) {
      const r = await request(fx.app).get(path)
      expect(r.headers['referrer-policy'], path).toBe('no-referrer')
      expect(r.headers['cache-control'], path).toBe('no-store')
    }
  })

  it('keeps tokens out of the real server’s output', async () => {
    const server = await spawnServe(fx.tmp.path('test.db'), { PITSIDE_SECRET: Buffer.from(new Uint8Array(32).fill(3)).toString('base64url') })
    try {
      const token = await signShareToken(new Uint8Array(32).fill(1), { id: fx.share.valid.id, planId: fx.share.valid.planId, expiresAt: new Date(Date.now() + 3600_000) })
      for (const path of [`/api/share/${token}`, `/s/${token}`, `/api/share/${token}/x`]) await fetch(server.url + path)
    } finally {
      await server.stop()
    }
    expect(server.stderr()).not.toMatch(/eyJ[\w-]{10,}/)
  })
})
