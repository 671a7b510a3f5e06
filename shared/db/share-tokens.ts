import { errors, jwtVerify, SignJWT } from 'jose'
import { AppError } from '../errors.ts'

// Pinned on both sides (RFC 8725): one algorithm, our issuer, the share audience, an explicit type.
export const shareTokenAlgorithm = 'HS256'
export const shareTokenIssuer = 'pitside'
export const shareTokenAudience = 'pitside:share'
export const shareTokenType = 'pitside-share+jwt'

export interface ShareClaims {
  /** The share link's id (the token's `jti`, the `share_links` primary key). */
  id: string
  planId: number
  expiresAt: Date
}

/** Signs a share-link token for one plan; `exp`, `jti` and `sub` (the plan id) are always set. */
export async function signShareToken(key: Uint8Array, claims: ShareClaims, now = new Date()): Promise<string> {
  return new SignJWT({})
    .setProtectedHeader({ alg: shareTokenAlgorithm, typ: shareTokenType })
    .setIssuer(shareTokenIssuer)
    .setAudience(shareTokenAudience)
    .setSubject(String(claims.planId))
    .setJti(claims.id)
    .setIssuedAt(Math.floor(now.getTime() / 1000))
    .setExpirationTime(Math.floor(claims.expiresAt.getTime() / 1000))
    .sign(key)
}

export type ShareTokenFailure = 'expired' | 'invalid'

/** Thrown by verifyShareToken; `reason` tells an expired link from one that is not ours or was altered. */
export class ShareTokenError extends AppError {
  readonly reason: ShareTokenFailure
  constructor(reason: ShareTokenFailure) {
    super('unauthorized', reason === 'expired' ? 'this share link has expired' : 'this share link is not valid')
    this.reason = reason
  }
}

/**
 * Verifies a share-link token (signature, algorithm, issuer, audience, type, and a required `exp`,
 * `jti` and numeric `sub`). Returns its claims or throws a ShareTokenError. Does not look at the
 * database: the caller checks that the link exists, matches the plan and is not revoked.
 */
export async function verifyShareToken(key: Uint8Array, token: string, now = new Date()): Promise<ShareClaims> {
  if (token.length > 2048) throw new ShareTokenError('invalid')
  try {
    const { payload } = await jwtVerify(token, key, {
      algorithms: [shareTokenAlgorithm],
      issuer: shareTokenIssuer,
      audience: shareTokenAudience,
      typ: shareTokenType,
      requiredClaims: ['exp', 'jti', 'sub', 'iat'],
      currentDate: now,
    })
    const planId = Number(payload.sub)
    if (!Number.isSafeInteger(planId) || planId <= 0 || typeof payload.jti !== 'string') throw new ShareTokenError('invalid')
    return { id: payload.jti, planId, expiresAt: new Date(payload.exp! * 1000) }
  } catch (error) {
    if (error instanceof ShareTokenError) throw error
    if (error instanceof errors.JWTExpired) throw new ShareTokenError('expired')
    throw new ShareTokenError('invalid')
  }
}
