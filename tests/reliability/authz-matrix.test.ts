// The authorization matrix (OWASP ASVS 5.0 V8 "Authorization": V8.2.1 function-level and V8.2.2
// data-specific access, V8.3.1 enforced at the server; OWASP Authorization Cheat Sheet: deny by
// default, validate permissions on every request). The expected status of every cell lives in
// tests/authz/matrix.json; a route the app serves that the matrix does not list fails the test.
import { randomUUID } from 'node:crypto'
import { readFileSync } from 'node:fs'
import request from 'supertest'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { signShareToken } from '../../shared/db/share-tokens.ts'
import { seedPassword } from '../helpers/viewer-seed.ts'
import { listRoutes, makeSecurityFixture, type SecurityFixture } from './helpers/security-fixture.ts'

type Target = 'own' | 'sameFirm' | 'otherFirm' | 'missing' | 'malformed'
type Cell = number | 'listed' | 'hidden'
interface Principal {
  credential: 'none' | 'session' | 'share'
  email?: string
  disabledAfterSignIn?: boolean
  plan?: string
  expired?: boolean
  farms: Record<'own' | 'sameFirm' | 'otherFirm', string>
}
interface Matrix {
  targets: Target[]
  principals: Record<string, Principal>
  ids: { missing: { farm: string; plan: string }; malformed: { farm: string[]; plan: string[] } }
  routes: { method: string; path: string; target: string; expect: Record<string, Cell[]> }[]
  pages: { routes: string[] }
}

const matrix = JSON.parse(readFileSync(new URL('../authz/matrix.json', import.meta.url), 'utf8')) as Matrix

let fx: SecurityFixture
const credentials = new Map<string, { cookie?: string; bearer?: string }>()
beforeAll(async () => {
  fx = await makeSecurityFixture()
  await Promise.all(
    Object.entries(matrix.principals).map(async ([name, p]) => {
      if (p.credential === 'session') credentials.set(name, { cookie: await fx.signIn(p.email!) })
      else if (p.credential === 'share') credentials.set(name, { bearer: p.expired ? fx.share.expired.token : fx.share.valid.token })
      else credentials.set(name, {})
    }),
  )
  for (const p of Object.values(matrix.principals)) {
    if (p.disabledAfterSignIn) await fx.writer.db.updateTable('users').set({ disabled: 1 }).where('email', '=', p.email!).execute()
  }
}, 120_000)
afterAll(async () => {
  await fx?.close()
})

/** A request as the principal: its session cookie, or its share token offered as a cookie and a bearer token. */
function as(name: string, req: request.Test): request.Test {
  const c = credentials.get(name)!
  if (c.cookie) req.set('Cookie', c.cookie)
  if (c.bearer) req.set('Cookie', `pitside_session=${c.bearer}`).set('Authorization', `Bearer ${c.bearer}`)
  return req
}

function farmValues(p: Principal, t: Target): string[] {
  if (t === 'missing') return [matrix.ids.missing.farm]
  if (t === 'malformed') return matrix.ids.malformed.farm
  return [p.farms[t]]
}
function planValues(p: Principal, t: Target): string[] {
  if (t === 'missing') return [matrix.ids.missing.plan]
  if (t === 'malformed') return matrix.ids.malformed.plan
  return [String(fx.planOf[p.farms[t]])]
}
async function shareTokens(name: string, p: Principal, t: Target): Promise<string[]> {
  const link = fx.share.valid
  const expiresAt = new Date(fx.clock.now.getTime() + 86_400_000)
  switch (t) {
    case 'own': {
      const c = credentials.get(name)!
      if (c.bearer) return [c.bearer]
      if (c.cookie) return [c.cookie.slice(c.cookie.indexOf('=') + 1)] // a session token is not a share token
      return [randomUUID()]
    }
    case 'sameFirm':
    case 'otherFirm':
      // the link's own id, signed with the right key, naming another plan: a link opens only its plan
      return [await signShareToken(fx.keys.share, { id: link.id, planId: fx.planOf[p.farms[t]]!, expiresAt }, fx.clock.now)]
    case 'missing':
      return [await signShareToken(fx.keys.share, { id: randomUUID(), planId: link.planId, expiresAt }, fx.clock.now)]
    case 'malformed':
      return ['not-a-token', 'a.b.c', '%00', 'x'.repeat(5000)]
  }
}

async function observe(route: Matrix['routes'][number], name: string, p: Principal, t: Target): Promise<Cell[]> {
  const out: Cell[] = []
  switch (route.target) {
    case 'none': {
      const r = await as(name, request(fx.app)[route.method.toLowerCase() as 'get' | 'delete'](route.path))
      return [r.status]
    }
    case 'account': {
      const accounts: Record<Target, unknown> = {
        own: { email: p.email ?? 'nobody@farm.example', password: seedPassword },
        sameFirm: { email: p.farms.own === 'BWD' ? 'ada@brightwater.example' : 'teodor@loamridge.example', password: 'not-the-password' },
        otherFirm: { email: p.farms.own === 'BWD' ? 'maren@loamridge.example' : 'ada@brightwater.example', password: 'not-the-password' },
        missing: { email: 'nobody@farm.example', password: seedPassword },
        malformed: { email: 42, password: ['x'] },
      }
      const r = await as(name, request(fx.app).post(route.path).send(accounts[t] as object))
      return [r.status]
    }
    case 'listedFarm': {
      for (const code of farmValues(p, t)) {
        const r = await as(name, request(fx.app).get(route.path))
        if (r.status !== 200) out.push(r.status)
        else out.push((r.body.farms as { code: string }[]).some((f) => f.code === code) ? 'listed' : 'hidden')
      }
      return out
    }
    case 'farm':
      for (const code of farmValues(p, t)) out.push((await as(name, request(fx.app).get(route.path.replace(':code', code)))).status)
      return out
    case 'plan':
      for (const id of planValues(p, t)) out.push((await as(name, request(fx.app).get(route.path.replace(':id', id)))).status)
      return out
    case 'shareToken':
      for (const token of await shareTokens(name, p, t)) {
        out.push((await as(name, request(fx.app).get(route.path.replace(':token', encodeURIComponent(token))))).status)
      }
      return out
    default:
      throw new Error(`matrix.json: unknown target kind ${route.target}`)
  }
}

describe('authorization matrix', () => {
  it('lists every route the app serves, and serves every route it lists', () => {
    const served = listRoutes(fx.app)
    const listed = [...matrix.routes.map((r) => `${r.method} ${r.path}`), ...matrix.pages.routes]
    expect(served.filter((r) => !listed.includes(r)), 'routes missing from tests/authz/matrix.json').toEqual([])
    expect(listed.filter((r) => !served.includes(r)), 'routes in matrix.json the app does not serve').toEqual([])
  })

  it('has a cell for every principal and target of every route', () => {
    for (const route of matrix.routes) {
      expect(Object.keys(route.expect).sort()).toEqual(Object.keys(matrix.principals).sort())
      for (const cells of Object.values(route.expect)) expect(cells).toHaveLength(route.target === 'none' ? 1 : matrix.targets.length)
    }
  })

  it('answers a farm or plan of another firm exactly like one that does not exist', async () => {
    const cookie = credentials.get('clientA')!.cookie!
    const other = await request(fx.app).get(`/api/plans/${fx.planOf.BWD}`).set('Cookie', cookie)
    const missing = await request(fx.app).get(`/api/plans/999999`).set('Cookie', cookie)
    expect(other.status).toBe(404)
    expect(other.body.error.code).toBe(missing.body.error.code)
    expect(other.body.error.message.replace(/\d+/, 'N')).toBe(missing.body.error.message.replace(/\d+/, 'N'))
    expect(JSON.stringify(other.body)).not.toMatch(/Bramblegate|brightwater/i)
  })

  // DELETE /api/session is last in the file: signing out would end the sessions the other cells use.
  for (const route of matrix.routes) {
    it(`answers ${route.method} ${route.path} as the matrix says for every principal and target`, async () => {
      const mismatches: string[] = []
      let cells = 0
      // the principals ask at the same time (sign-ins hash in parallel); each cell is still its own request
      await Promise.all(
        Object.entries(matrix.principals).map(async ([name, p]) => {
          const targets = route.target === 'none' ? (['own'] as Target[]) : matrix.targets
          for (const [i, t] of targets.entries()) {
            const expected = route.expect[name]![i]!
            const seen = await observe(route, name, p, t)
            cells++
            for (const s of seen) if (s !== expected) mismatches.push(`${name} × ${route.target === 'none' ? '-' : t}: expected ${expected}, got ${s}`)
          }
        }),
      )
      expect(mismatches).toEqual([])
      expect(cells).toBe(Object.keys(matrix.principals).length * (route.target === 'none' ? 1 : matrix.targets.length))
    }, 180_000)
  }

  it('serves the HTML shell to anyone and puts no farm data in it', async () => {
    for (const path of ['/', '/farms/QBF', '/s/anything']) {
      const r = await request(fx.app).get(path)
      expect(r.status).toBe(200)
      expect(r.text).not.toMatch(/Quillback|Ferncastle|Bramblegate/)
    }
  })

})
