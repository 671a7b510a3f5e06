import { randomUUID } from 'node:crypto'
import express, { Router } from 'express'
import { rateLimit } from 'express-rate-limit'
import type { Kysely } from 'kysely'
import { z } from 'zod'
import type { SessionResponse } from '../../shared/api-types.ts'
import { hashPassword, verifyPassword } from '../../shared/db/passwords.ts'
import type { Database } from '../../shared/db/schema.ts'
import { findPasswordHash, normalizeEmail } from '../../shared/db/users.ts'
import { AppError } from '../../shared/errors.ts'
import type { Sessions } from '../auth.ts'

export interface SignInLimits {
  /** Failed sign-ins per e-mail address within the window. */
  perAccount: number
  /** Sign-in attempts per client address within the window. */
  perAddress: number
  windowMs: number
}

export const defaultSignInLimits: SignInLimits = { perAccount: 5, perAddress: 30, windowMs: 15 * 60_000 }

const signInBody = z.object({
  email: z.string().min(1).max(320),
  password: z.string().min(1).max(1024),
})

// Same answer, same status and (roughly) the same time for an unknown address, a disabled account
// and a wrong password, so the form does not tell who has an account.
const badCredentials = 'the e-mail address or the password is not right'

function limited(message: string) {
  return (_req: express.Request, res: express.Response) => {
    res.status(429).json({ error: { code: 'rate_limited', message } })
  }
}

export function sessionRoutes({ db, sessions, limits }: { db: Kysely<Database>; sessions: Sessions; limits: SignInLimits }): Router {
  const router = Router()
  // a hash of a random password, verified when the address is unknown so that the time taken is the same
  let decoy: Promise<string> | null = null
  const decoyHash = () => (decoy ??= hashPassword(randomUUID()))

  const minutes = Math.ceil(limits.windowMs / 60_000)
  const perAddress = rateLimit({
    windowMs: limits.windowMs,
    limit: limits.perAddress,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    // req.ip follows the `trust proxy` setting: X-Forwarded-For counts only behind a configured proxy
    validate: { xForwardedForHeader: false },
    handler: limited(`too many sign-in attempts from this address; try again in ${minutes} minutes`),
  })
  const perAccount = rateLimit({
    windowMs: limits.windowMs,
    limit: limits.perAccount,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    skipSuccessfulRequests: true,
    keyGenerator: (req) => `account:${normalizeEmail(String((req.body as { email?: unknown } | undefined)?.email ?? ''))}`,
    validate: { xForwardedForHeader: false },
    handler: limited(`too many failed sign-ins for this account; try again in ${minutes} minutes`),
  })

  const json = express.json({ limit: '4kb', type: () => true })
  const requireJson: express.RequestHandler = (req, _res, next) => {
    // a cross-site form cannot send application/json without a preflight, which this server never grants
    if (!req.is('application/json')) return next(new AppError('invalid_input', 'expected Content-Type: application/json'))
    next()
  }

  router.post('/', requireJson, json, perAddress, perAccount, async (req, res) => {
    const parsed = signInBody.safeParse(req.body)
    if (!parsed.success) throw new AppError('invalid_input', 'expected { "email": "…", "password": "…" }')
    const { email, password } = parsed.data
    const stored = await findPasswordHash(db, normalizeEmail(email))
    const ok = await verifyPassword(password, stored?.passwordHash ?? (await decoyHash()))
    if (!stored || !ok || stored.disabled) throw new AppError('unauthorized', badCredentials)
    const { token, expiresAt } = await sessions.start(res, req, stored.id, stored.passwordHash)
    // read back through the same path as every later request
    const signedIn = await sessions.readToken(token)
    if (!signedIn) throw new AppError('unauthorized', badCredentials)
    const body: SessionResponse = { user: signedIn.user(), expires_at: expiresAt.toISOString() }
    res.json(body)
  })

  router.get('/', async (req, res) => {
    const signedIn = await sessions.require(req)
    const body: SessionResponse = { user: signedIn.user(), expires_at: signedIn.expiresAt.toISOString() }
    res.set('Cache-Control', 'no-store').json(body)
  })

  router.delete('/', async (req, res) => {
    await sessions.end(req, res)
    res.status(204).end()
  })

  return router
}
