import { z } from 'zod'
import { AppError } from '../shared/errors.ts'

const envSchema = z.object({
  PITSIDE_SECRET: z.string().optional(),
  PITSIDE_PUBLIC_URL: z.string().url().optional(),
  /** Express `trust proxy`: a hop count, `loopback`, an address list; unset or `false` trusts no proxy. */
  PITSIDE_TRUST_PROXY: z.string().optional(),
  PITSIDE_SESSION_HOURS: z.coerce.number().min(0.1).max(24 * 30).default(12),
})

export interface ServerConfig {
  secret: string | undefined
  publicUrl: string | undefined
  trustProxy: boolean | number | string
  sessionTtlSeconds: number
}

/** Reads the server's environment once; throws a `config` AppError naming the variable. */
export function parseServerEnv(env: NodeJS.ProcessEnv): ServerConfig {
  const clean = Object.fromEntries(Object.entries(env).map(([k, v]) => [k, v === '' ? undefined : v]))
  const parsed = envSchema.safeParse(clean)
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!
    throw new AppError('config', `${issue.path.join('.')}: ${issue.message}`)
  }
  const e = parsed.data
  const tp = e.PITSIDE_TRUST_PROXY
  const trustProxy = tp === undefined || tp === 'false' ? false : tp === 'true' ? true : /^\d+$/.test(tp) ? Number(tp) : tp
  return {
    secret: e.PITSIDE_SECRET,
    publicUrl: e.PITSIDE_PUBLIC_URL,
    trustProxy,
    sessionTtlSeconds: Math.round(e.PITSIDE_SESSION_HOURS * 3600),
  }
}
