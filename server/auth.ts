import { createHash, randomUUID } from 'node:crypto'
import type SQLite from 'better-sqlite3'
import type { Request, Response } from 'express'
import { jwtVerify, SignJWT } from 'jose'
import type { SessionUser } from '../shared/api-types.ts'
import type { Viewer } from '../shared/db/viewer-queries.ts'
import { AppError } from '../shared/errors.ts'

export const sessionCookie = 'pitside_session'
const algorithm = 'HS256'
const issuer = 'pitside'
const audience = 'pitside:session'
const type = 'pitside-session+jwt'

export interface SignedIn {
  viewer: Viewer
  /** The account as GET /api/session shows it (an advisor's farm list is read only when asked for). */
  user: () => SessionUser
  tokenId: string
  expiresAt: Date
}

interface UserRow {
  id: number
  organization_id: number
  email: string
  name: string
  role: 'advisor' | 'client'
  disabled: number
  password_hash: string
  org_code: string
  org_name: string
}

/** A short fingerprint of the password hash: changing the password ends every session signed before. */
function passwordStamp(passwordHash: string): string {
  return createHash('sha256').update(passwordHash).digest('base64url').slice(0, 16)
}

/**
 * Signs session cookies and turns a request's cookie back into the signed-in user, checking on every
 * request that the account still exists, is enabled and has the same password, and which farms it may see.
 */
export class Sessions {
  readonly ttlSeconds: number
  private readonly key: Uint8Array
  private readonly now: () => Date
  private readonly userById: SQLite.Statement<[number], UserRow>
  private readonly grants: SQLite.Statement<[number, number], { farm_id: number; code: string }>
  private readonly allFarmCodes: SQLite.Statement<[number], { code: string }>
  // signed-out token ids until their expiry (the database is read-only, so this list lives in memory)
  private readonly signedOut = new Map<string, number>()
  // verified tokens, so a busy page does not verify the same signature on every request
  private readonly verified = new Map<string, { sub: number; jti: string; st: string; exp: number }>()
  // who is signed in behind each token, kept until another connection (the CLI) writes to the
  // database: PRAGMA data_version changes with every such commit, so a disabled account, a new
  // password or changed grants still end or change access at the next request
  private readonly signedIn = new Map<string, SignedIn>()
  private signedInVersion = -1
  private readonly dataVersion: SQLite.Statement<[], number>

  constructor(sqlite: SQLite.Database, key: Uint8Array, options: { ttlSeconds: number; now: () => Date }) {
    this.key = key
    this.ttlSeconds = options.ttlSeconds
    this.now = options.now
    this.userById = sqlite.prepare(
      `select u.id, u.organization_id, u.email, u.name, u.role, u.disabled, u.password_hash,
              o.code as org_code, o.name as org_name
         from users u join organizations o on o.id = u.organization_id where u.id = ?`,
    )
    this.grants = sqlite.prepare(
      `select f.id as farm_id, f.code from user_farms uf join farms f on f.id = uf.farm_id
        where uf.user_id = ? and f.organization_id = ? order by f.code`,
    )
    this.allFarmCodes = sqlite.prepare('select code from farms where organization_id = ? order by code')
    this.dataVersion = sqlite.prepare<[], number>('pragma data_version').pluck()
  }

  /** Signs a session for this account and sets the cookie. */
  async start(res: Response, req: Request, userId: number, passwordHash: string): Promise<{ token: string; expiresAt: Date }> {
    const nowS = Math.floor(this.now().getTime() / 1000)
    const exp = nowS + this.ttlSeconds
    const token = await new SignJWT({ st: passwordStamp(passwordHash) })
      .setProtectedHeader({ alg: algorithm, typ: type })
      .setIssuer(issuer)
      .setAudience(audience)
      .setSubject(String(userId))
      .setJti(randomUUID())
      .setIssuedAt(nowS)
      .setExpirationTime(exp)
      .sign(this.key)
    res.cookie(sessionCookie, token, {
      httpOnly: true,
      sameSite: 'lax',
      secure: req.secure,
      path: '/',
      maxAge: this.ttlSeconds * 1000,
    })
    return { token, expiresAt: new Date(exp * 1000) }
  }

  /** Ends the session of this request (if any) and clears the cookie. */
  async end(req: Request, res: Response): Promise<void> {
    const token = readCookie(req, sessionCookie)
    const known = token && token.length <= 2048 ? await this.verify(token) : null
    if (known) this.signedOut.set(known.jti, known.exp)
    if (token) this.verified.delete(token)
    res.clearCookie(sessionCookie, { httpOnly: true, sameSite: 'lax', secure: req.secure, path: '/' })
  }

  private async verify(token: string): Promise<{ sub: number; jti: string; st: string; exp: number } | null> {
    const nowS = Math.floor(this.now().getTime() / 1000)
    const cached = this.verified.get(token)
    if (cached) return cached.exp > nowS ? cached : null
    try {
      const { payload } = await jwtVerify(token, this.key, {
        algorithms: [algorithm],
        issuer,
        audience,
        typ: type,
        requiredClaims: ['exp', 'sub', 'jti', 'iat'],
        currentDate: this.now(),
      })
      const sub = Number(payload.sub)
      if (!Number.isSafeInteger(sub) || typeof payload.st !== 'string' || typeof payload.jti !== 'string') return null
      const claims = { sub, jti: payload.jti, st: payload.st, exp: payload.exp! }
      if (this.verified.size > 10_000) this.verified.clear()
      this.verified.set(token, claims)
      return claims
    } catch {
      return null
    }
  }

  /** The signed-in user of this request, or null (no cookie, bad or expired token, disabled account, password changed). */
  async read(req: Request): Promise<SignedIn | null> {
    return this.readToken(readCookie(req, sessionCookie))
  }

  /** The signed-in user behind a session token, or null. */
  async readToken(token: string | undefined): Promise<SignedIn | null> {
    if (!token || token.length > 2048) return null
    const claims = await this.verify(token)
    if (!claims) return null
    const out = this.signedOut.get(claims.jti)
    if (out !== undefined) return null
    const version = this.dataVersion.get() as number
    if (version !== this.signedInVersion) {
      this.signedIn.clear()
      this.signedInVersion = version
    }
    const known = this.signedIn.get(token)
    if (known) return known
    const row = this.userById.get(claims.sub)
    if (!row || row.disabled !== 0 || passwordStamp(row.password_hash) !== claims.st) return null
    const grants = row.role === 'client' ? this.grants.all(row.id, row.organization_id) : []
    const signedIn: SignedIn = {
      tokenId: claims.jti,
      expiresAt: new Date(claims.exp * 1000),
      viewer: {
        userId: row.id,
        organizationId: row.organization_id,
        role: row.role,
        farmIds: new Set(grants.map((g) => g.farm_id)),
      },
      user: () => ({
        email: row.email,
        name: row.name,
        role: row.role,
        organization: { code: row.org_code, name: row.org_name },
        farms: row.role === 'advisor' ? this.allFarmCodes.all(row.organization_id).map((f) => f.code) : grants.map((g) => g.code),
      }),
    }
    if (this.signedIn.size > 10_000) this.signedIn.clear()
    this.signedIn.set(token, signedIn)
    return signedIn
  }

  /** Like read, but throws `unauthorized` when nobody is signed in. */
  async require(req: Request): Promise<SignedIn> {
    const signedIn = await this.read(req)
    if (!signedIn) throw new AppError('unauthorized', 'not signed in (or the session has ended); sign in again')
    return signedIn
  }

  /** Forgets signed-out tokens once they have expired anyway. */
  sweep(): void {
    const nowS = Math.floor(this.now().getTime() / 1000)
    for (const [jti, exp] of this.signedOut) if (exp <= nowS) this.signedOut.delete(jti)
  }
}

/** The value of one cookie from the Cookie header (no cookie parser needed for one cookie). */
export function readCookie(req: Request, name: string): string | undefined {
  const header = req.headers.cookie
  if (!header) return undefined
  for (const part of header.split(';')) {
    const eq = part.indexOf('=')
    if (eq < 0) continue
    if (part.slice(0, eq).trim() === name) {
      const value = part.slice(eq + 1).trim()
      try {
        return decodeURIComponent(value)
      } catch {
        return undefined
      }
    }
  }
  return undefined
}
