import express, { type Express } from 'express'
import helmet from 'helmet'
import type { OpenDatabase } from '../shared/db/open-database.ts'
import type { SigningKeys } from '../shared/db/share-secret.ts'
import { Sessions } from './auth.ts'
import { apiNotFound, errorMiddleware } from './errors.ts'
import { PlanCache } from './plan-cache.ts'
import { farmRoutes } from './routes/farms.ts'
import { planRoutes } from './routes/plans.ts'
import { defaultSignInLimits, sessionRoutes, type SignInLimits } from './routes/session.ts'
import { shareRoutes } from './routes/share.ts'
import { webRoutes } from './static.ts'

export interface AppDeps {
  /** Opened with openReader: the viewer never writes. */
  database: OpenDatabase
  keys: SigningKeys
  /** The built client (dist/web); null answers page requests with a "not built" note. */
  webDir: string | null
  /** Express's `trust proxy` setting; false (the default) ignores X-Forwarded-* headers. */
  trustProxy?: boolean | number | string
  sessionTtlSeconds?: number
  signInLimits?: SignInLimits
  shareRequestsPerMinute?: number
  now?: () => Date
  log?: (line: string) => void
}

export const defaultSessionTtlSeconds = 12 * 3600

/** The viewer: JSON API under /api and the client's pages. Does not listen; see server/main.ts. */
export function createApp(deps: AppDeps): Express {
  const now = deps.now ?? (() => new Date())
  const log = deps.log ?? ((line: string) => process.stderr.write(line + '\n'))
  const { db, sqlite } = deps.database
  const sessions = new Sessions(sqlite, deps.keys.session, { ttlSeconds: deps.sessionTtlSeconds ?? defaultSessionTtlSeconds, now })
  const plans = new PlanCache(db)
  const sweep = setInterval(() => sessions.sweep(), 10 * 60_000)
  sweep.unref()

  const app = express()
  app.set('trust proxy', deps.trustProxy ?? false)
  app.set('etag', false) // plans carry their own ETag; the rest is small and not worth hashing
  app.set('query parser', 'simple')
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          'default-src': ["'self'"],
          'script-src': ["'self'"],
          'style-src': ["'self'", "'unsafe-inline'"],
          'img-src': ["'self'", 'data:'],
          'font-src': ["'self'"],
          'connect-src': ["'self'"],
          'form-action': ["'self'"],
          'frame-ancestors': ["'none'"],
          'object-src': ["'none'"],
          'base-uri': ["'none'"],
          'upgrade-insecure-requests': null,
        },
      },
      referrerPolicy: { policy: 'no-referrer' },
      strictTransportSecurity: false, // only meaningful behind https, which a proxy in front sets
    }),
  )

  const api = express.Router()
  api.use((_req, res, next) => {
    res.set('Cache-Control', 'no-store')
    next()
  })
  api.use('/session', sessionRoutes({ db, sessions, limits: deps.signInLimits ?? defaultSignInLimits }))
  api.use('/farms', farmRoutes({ db, sessions }))
  api.use('/plans', planRoutes({ db, sessions, plans }))
  api.use('/share', shareRoutes({ db, shareKey: deps.keys.share, plans, now, perMinute: deps.shareRequestsPerMinute ?? 60 }))
  api.use(apiNotFound)
  app.use('/api', api)
  app.use(webRoutes(deps.webDir, { db, sqlite, sessions, plans, log }))
  app.use(errorMiddleware(log))
  return app
}
