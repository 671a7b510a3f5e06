import { randomUUID } from 'node:crypto'
import request from 'supertest'
import { insertShareLink } from '../../../shared/db/share-links.ts'
import { signShareToken } from '../../../shared/db/share-tokens.ts'
import { makeViewerFixture, type ViewerFixture } from '../../helpers/viewer-app.ts'
import { seedPassword } from '../../helpers/viewer-seed.ts'
import type { AppDeps } from '../../../server/app.ts'

export interface SecurityFixture extends ViewerFixture {
  /** Plan ids of each farm's first version (`QBF` → id), including the second firm's extra farm BWE. */
  planOf: Record<string, number>
  /** A live share link to QBF version 2, and an expired one to QBF version 1. */
  share: { valid: { id: string; token: string; planId: number }; expired: { id: string; token: string; planId: number } }
  signIn(email: string, password?: string): Promise<string>
}

/**
 * The viewer's seeded test database (tests/helpers/viewer-seed.ts: firms loamridge and brightwater),
 * plus a second brightwater farm with a plan (so both firms have a "same firm" farm) and two share
 * links. Sign-in limits are raised so that the tests measure authorization, not rate limiting.
 */
export async function makeSecurityFixture(overrides: Partial<AppDeps> = {}): Promise<SecurityFixture> {
  const fx = await makeViewerFixture({
    signInLimits: { perAccount: 10_000, perAddress: 10_000, windowMs: 60_000 },
    shareRequestsPerMinute: 100_000,
    ...overrides,
  })
  const w = fx.writer.db
  const bwd = await w.selectFrom('farms').selectAll().where('code', '=', 'BWD').executeTakeFirstOrThrow()
  const { id: bweId } = await w
    .insertInto('farms')
    .values({ organization_id: bwd.organization_id, code: 'BWE', name: 'Bramblegate East', operator_name: 'Oren Castile', region: 'Tamarack Valley' })
    .returning('id')
    .executeTakeFirstOrThrow()
  const bwdPlan = await w.selectFrom('plans').selectAll().where('id', '=', fx.seed.plans['BWD-v1']!).executeTakeFirstOrThrow()
  const { id: _, ...planRow } = bwdPlan
  const { id: bwePlan } = await w
    .insertInto('plans')
    .values({ ...planRow, farm_id: bweId })
    .returning('id')
    .executeTakeFirstOrThrow()
  const planOf: Record<string, number> = { BWE: bwePlan }
  for (const [key, id] of Object.entries(fx.seed.plans)) if (key.endsWith('-v1')) planOf[key.slice(0, -3)] = id

  const now = fx.clock.now
  const make = async (planId: number, expiresAt: Date, signedAt: Date) => {
    const id = randomUUID()
    await insertShareLink(w, { id, planId, recipientEmail: 'holder@farm.example', createdBy: 'maren@loamridge.example', expiresAt })
    return { id, planId, token: await signShareToken(fx.keys.share, { id, planId, expiresAt }, signedAt) }
  }
  const share = {
    valid: await make(fx.seed.plans['QBF-v2']!, new Date(now.getTime() + 30 * 86_400_000), now),
    expired: await make(fx.seed.plans['QBF-v1']!, new Date(now.getTime() - 86_400_000), new Date(now.getTime() - 31 * 86_400_000)),
  }

  const signIn = async (email: string, password = seedPassword) => {
    const r = await request(fx.app).post('/api/session').send({ email, password })
    if (r.status !== 200) throw new Error(`sign-in of ${email} answered ${r.status}: ${JSON.stringify(r.body)}`)
    return String(r.headers['set-cookie']![0]).split(';')[0]!
  }
  return { ...fx, planOf, share, signIn }
}

/** Every route of an Express app as `METHOD /path`, found by walking the router stacks (Express 5 / router 2). */
export function listRoutes(app: { router: unknown }): string[] {
  const out: string[] = []
  const walk = (stack: any[], prefix: string) => {
    for (const layer of stack) {
      const raw = typeof layer.rawPath === 'string' ? layer.rawPath : ''
      if (layer.route) {
        for (const method of Object.keys(layer.route.methods)) {
          if (method === '_all') continue
          out.push(`${method.toUpperCase()} ${(prefix + layer.route.path).replace(/\/$/, '') || '/'}`)
        }
      } else if (Array.isArray(layer.handle?.stack)) {
        walk(layer.handle.stack, raw === '/' ? prefix : prefix + raw)
      }
    }
  }
  walk((app.router as { stack: any[] }).stack, '')
  return out
}
