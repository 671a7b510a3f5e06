import { describe, expect, it } from 'vitest'
import { hashPassword, needsRehash, verifyPassword } from '../../shared/db/passwords.ts'

describe('password hashing', () => {
  it('stores scrypt at N=2^17, r=8, p=1 with a 16-byte salt in a self-describing string', async () => {
    // OWASP Password Storage Cheat Sheet (2024), "scrypt": N=2^17 (128 MiB), r=8, p=1
    const encoded = await hashPassword('pitside-demo')
    const [scheme, params, salt, key] = encoded.split('$')
    expect(scheme).toBe('scrypt')
    expect(params).toBe('N=131072,r=8,p=1')
    expect(Buffer.from(salt!, 'base64url')).toHaveLength(16)
    expect(Buffer.from(key!, 'base64url')).toHaveLength(32)
    expect(needsRehash(encoded)).toBe(false)
  })

  it('accepts the right password and refuses a wrong one, a near miss and a malformed hash', async () => {
    const encoded = await hashPassword('correct horse battery')
    expect(await verifyPassword('correct horse battery', encoded)).toBe(true)
    expect(await verifyPassword('correct horse batterY', encoded)).toBe(false)
    expect(await verifyPassword('', encoded)).toBe(false)
    expect(await verifyPassword('correct horse battery', 'plain-text')).toBe(false)
    expect(await verifyPassword('correct horse battery', encoded.replace('N=131072', 'N=1024'))).toBe(false)
  })

  it('salts every hash, so the same password never gives the same string', async () => {
    const [a, b] = await Promise.all([hashPassword('same password'), hashPassword('same password')])
    expect(a).not.toBe(b)
  })
})
