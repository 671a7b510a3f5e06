import { Router, type RequestHandler } from 'express'
import { rateLimit } from 'express-rate-limit'
import type { Kysely } from 'kysely'
import type { Database } from '../../shared/db/schema.ts'
import { findShareLink } from '../../shared/db/share-links.ts'
import { verifyShareToken } from '../../shared/db/share-tokens.ts'
import { AppError } from '../../shared/errors.ts'
import type { PlanCache } from '../plan-cache.ts'

/** Headers for anything that carries a share token: never cached, never sent on as a referrer. */
export const shareHeaders: RequestHandler = (_req, res, next) => {
  res.set('Cache-Control', 'no-store').set('Referrer-Policy', 'no-referrer').set('X-Robots-Tag', 'noindex, nofollow')
  next()
}

// One answer for every refusal (RFC 8725 §2): telling expired or withdrawn links from forged ones
// would confirm to a forger that a signature passed.
const refused =
  'This share link cannot be opened: it is not valid, has expired or has been withdrawn. Check that the whole link was copied from the e-mail, or ask your advisor for a new one.'
const messages = { invalid: refused, expired: refused, revoked: refused } as const

export function shareRoutes({
  db,
  shareKey,
  plans,
  now,
  perMinute,
}: {
  db: Kysely<Database>
  shareKey: Uint8Array
  plans: PlanCache
  now: () => Date
  perMinute: number
}): Router {
  const router = Router()
  router.use(shareHeaders)
  router.use(
    rateLimit({
      windowMs: 60_000,
      limit: perMinute,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      validate: { xForwardedForHeader: false },
      handler: (_req, res) => {
        res.status(429).json({ error: { code: 'rate_limited', message: 'too many requests; wait a minute and try again' } })
      },
    }),
  )

  router.get('/:token', async (req, res) => {
    const at = now()
    let claims
    try {
      claims = await verifyShareToken(shareKey, req.params.token, at)
    } catch (error) {
      const reason = (error as { reason?: 'expired' | 'invalid' }).reason ?? 'invalid'
      throw new AppError('unauthorized', messages[reason])
    }
    const link = await findShareLink(db, claims.id)
    // the signed plan id must be the one the link was made for: a link never opens another plan
    if (!link || link.planId !== claims.planId) throw new AppError('unauthorized', messages.invalid)
    if (link.revokedAt) throw new AppError('unauthorized', messages.revoked)
    if (new Date(link.expiresAt) <= at) throw new AppError('unauthorized', messages.expired)
    const plan = await plans.get(link.planId)
    if (!plan) throw new AppError('unauthorized', messages.invalid)
    res.type('application/json').send(`{"plan":${plan.json},"expires_at":${JSON.stringify(link.expiresAt)}}`)
  })

  return router
}
