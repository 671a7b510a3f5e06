import { randomBytes, scrypt, timingSafeEqual, type ScryptOptions } from 'node:crypto'

// scrypt at OWASP's Password Storage Cheat Sheet parameters: N=2^17, r=8, p=1.
// Memory needed is 128 × N × r bytes = 128 MiB, above Node's 32 MiB default maxmem, hence the raised limit.
const params = { N: 2 ** 17, r: 8, p: 1 } as const
const saltBytes = 16
const keyBytes = 32
const maxmemBytes = 256 * 1024 * 1024
const prefix = 'scrypt'

function derive(plain: string, salt: Buffer, keylen: number, options: ScryptOptions): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    scrypt(plain.normalize('NFKC'), salt, keylen, { ...options, maxmem: maxmemBytes }, (error, key) =>
      error ? reject(error) : resolve(key),
    )
  })
}

/**
 * Hashes a password with scrypt (N=2^17, r=8, p=1) and a fresh 16-byte random salt.
 * Returns a self-describing string: `scrypt$N=131072,r=8,p=1$<salt base64url>$<key base64url>`,
 * so the parameters can be raised later without breaking stored hashes.
 */
export async function hashPassword(plain: string): Promise<string> {
  const salt = randomBytes(saltBytes)
  const key = await derive(plain, salt, keyBytes, params)
  return `${prefix}$N=${params.N},r=${params.r},p=${params.p}$${salt.toString('base64url')}$${key.toString('base64url')}`
}

interface Decoded {
  N: number
  r: number
  p: number
  salt: Buffer
  key: Buffer
}

function decode(encoded: string): Decoded | null {
  const parts = encoded.split('$')
  if (parts.length !== 4 || parts[0] !== prefix) return null
  const m = /^N=(\d+),r=(\d+),p=(\d+)$/.exec(parts[1]!)
  if (!m) return null
  const [N, r, p] = [Number(m[1]), Number(m[2]), Number(m[3])]
  // refuse parameters this module would never write, so a tampered row cannot make us burn memory
  if (N < 2 ** 14 || N > 2 ** 20 || (N & (N - 1)) !== 0 || r < 1 || r > 32 || p < 1 || p > 16) return null
  const salt = Buffer.from(parts[2]!, 'base64url')
  const key = Buffer.from(parts[3]!, 'base64url')
  if (salt.length < 16 || key.length < 16 || key.length > 64) return null
  return { N, r, p, salt, key }
}

/** True when the password matches the encoded hash; compares in constant time. A malformed hash is false. */
export async function verifyPassword(plain: string, encoded: string): Promise<boolean> {
  const decoded = decode(encoded)
  if (!decoded) return false
  const key = await derive(plain, decoded.salt, decoded.key.length, { N: decoded.N, r: decoded.r, p: decoded.p })
  return timingSafeEqual(key, decoded.key)
}

/** True when the hash was made with weaker parameters than the current ones (rehash at the next change). */
export function needsRehash(encoded: string): boolean {
  const d = decode(encoded)
  return !d || d.N < params.N || d.r < params.r || d.p < params.p
}
