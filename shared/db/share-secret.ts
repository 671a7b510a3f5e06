import { randomBytes, hkdfSync } from 'node:crypto'
import { chmodSync, closeSync, openSync, readFileSync, statSync, writeSync } from 'node:fs'
import { AppError } from '../errors.ts'

/** The signing keys of the viewer, each derived from one master secret for one purpose. */
export interface SigningKeys {
  /** Signs the viewer's session cookies. */
  session: Uint8Array
  /** Signs share links (`pitside share` and the viewer must hold the same key). */
  share: Uint8Array
  /** Where the master secret came from, for messages: `PITSIDE_SECRET` or the key file's path. */
  source: string
}

export const minSecretBytes = 32 // 256 bits

/** The key file used when PITSIDE_SECRET is not set: `<database>.key`, beside the database. */
export function keyFileFor(dbFile: string): string {
  return `${dbFile}.key`
}

/**
 * Decodes PITSIDE_SECRET: hex (64+ digits) or base64/base64url (43+ characters), at least 256 bits.
 * Throws a `config` AppError saying how to make a good one.
 */
export function decodeSecret(text: string, where = 'PITSIDE_SECRET'): Uint8Array {
  const t = text.trim()
  let bytes: Buffer | null = null
  if (/^[0-9a-fA-F]+$/.test(t) && t.length % 2 === 0) bytes = Buffer.from(t, 'hex')
  else if (/^[A-Za-z0-9+/_-]+={0,2}$/.test(t)) bytes = Buffer.from(t.replace(/=+$/, ''), 'base64url')
  if (!bytes) {
    throw new AppError('config', `${where}: expected hex or base64 text, found other characters (make one with \`openssl rand -base64 32\`)`)
  }
  if (bytes.length < minSecretBytes) {
    throw new AppError(
      'config',
      `${where}: expected at least ${minSecretBytes * 8} bits, found ${bytes.length * 8} (make one with \`openssl rand -base64 32\`)`,
    )
  }
  return new Uint8Array(bytes)
}

function readKeyFile(file: string): Uint8Array {
  const mode = statSync(file).mode & 0o777
  if ((mode & 0o077) !== 0) {
    throw new AppError('config', `${file}: the key file must be readable by its owner only (found mode ${mode.toString(8)}; run \`chmod 600 ${file}\`)`)
  }
  return decodeSecret(readFileSync(file, 'utf8'), file)
}

/**
 * The master secret: PITSIDE_SECRET when set, else the key file beside the database, created on
 * first use with 256 random bits and mode 0600 (exclusive create, so the CLI and the server racing
 * each other end up with the same key). Throws `config` or `io` AppErrors.
 */
export function loadMasterSecret({ envSecret, dbFile }: { envSecret?: string; dbFile: string }): { secret: Uint8Array; source: string } {
  if (envSecret !== undefined && envSecret !== '') return { secret: decodeSecret(envSecret), source: 'PITSIDE_SECRET' }
  const file = keyFileFor(dbFile)
  try {
    return { secret: readKeyFile(file), source: file }
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code !== 'ENOENT') {
      if (error instanceof AppError) throw error
      throw new AppError('io', `cannot read the key file ${file}: ${(error as Error).message}`)
    }
  }
  const fresh = randomBytes(minSecretBytes).toString('base64url')
  try {
    const fd = openSync(file, 'wx', 0o600)
    try {
      writeSync(fd, fresh + '\n')
    } finally {
      closeSync(fd)
    }
    chmodSync(file, 0o600)
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code !== 'EEXIST') {
      throw new AppError('io', `cannot create the key file ${file}: ${(error as Error).message}`)
    }
  }
  return { secret: readKeyFile(file), source: file }
}

/** Derives one key per purpose from the master secret (HKDF-SHA256), so a session key never verifies a share link. */
export function deriveSigningKeys(secret: Uint8Array, source: string): SigningKeys {
  const derive = (info: string) => new Uint8Array(hkdfSync('sha256', secret, 'pitside', info, 32))
  return { session: derive('pitside viewer session v1'), share: derive('pitside share link v1'), source }
}

/** The signing keys from PITSIDE_SECRET or the database's key file. */
export function loadSigningKeys(options: { envSecret?: string; dbFile: string }): SigningKeys {
  const { secret, source } = loadMasterSecret(options)
  return deriveSigningKeys(secret, source)
}
