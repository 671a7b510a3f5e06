import type { Kysely, Selectable } from 'kysely'
import { AppError } from '../errors.ts'
import { hashPassword } from './passwords.ts'
import type { Database } from './schema.ts'

export type Role = 'advisor' | 'client'
export const roles: readonly Role[] = ['advisor', 'client']

/** A viewer account as the rest of the code sees it (never carries the password hash). */
export interface User {
  id: number
  organizationId: number
  organizationCode: string
  email: string
  name: string
  role: Role
  disabled: boolean
  /** Farm codes granted to a client; empty for advisors, who see every farm of their organization. */
  farmCodes: string[]
  createdAt: string
  updatedAt: string
}

export interface Organization {
  id: number
  code: string
  name: string
}

export const minPasswordLength = 8
export const maxPasswordLength = 256

/** Lower-cases and trims an e-mail address; the form in which addresses are stored and looked up. */
export function normalizeEmail(email: string): string {
  return email.trim().toLowerCase()
}

const emailPattern = /^[^\s@]+@[^\s@]+\.[^\s@]+$/

/** Throws `invalid_input` unless the password has an acceptable length. */
export function checkPassword(password: string): void {
  if (password.length < minPasswordLength) {
    throw new AppError(
      'invalid_input',
      `password: expected at least ${minPasswordLength} characters, found ${password.length}`,
    )
  }
  if (password.length > maxPasswordLength) {
    throw new AppError('invalid_input', `password: expected at most ${maxPasswordLength} characters, found ${password.length}`)
  }
}

function toUser(row: Selectable<Database['users']> & { organization_code: string }, farmCodes: string[]): User {
  return {
    id: row.id,
    organizationId: row.organization_id,
    organizationCode: row.organization_code,
    email: row.email,
    name: row.name,
    role: row.role,
    disabled: row.disabled !== 0,
    farmCodes,
    createdAt: row.created_at,
    updatedAt: row.updated_at,
  }
}

export async function findOrganizationByCode(db: Kysely<Database>, code: string): Promise<Organization | undefined> {
  return db.selectFrom('organizations').select(['id', 'code', 'name']).where('code', '=', code).executeTakeFirst()
}

/**
 * The organization a new account belongs to: the one named by `code`; or, without a code, the only
 * organization in the database. Creates it only when `createName` is given. Throws `not_found` or
 * `usage` with a message listing the organizations that exist.
 */
export async function resolveOrganization(
  db: Kysely<Database>,
  { code, createName }: { code?: string; createName?: string },
): Promise<Organization> {
  const all = await db.selectFrom('organizations').select(['id', 'code', 'name']).orderBy('code').execute()
  const known = all.length ? all.map((o) => o.code).join(', ') : 'none'
  if (code) {
    const found = all.find((o) => o.code === code)
    if (found) return found
    if (createName) {
      const inserted = await db
        .insertInto('organizations')
        .values({ code, name: createName })
        .returning(['id', 'code', 'name'])
        .executeTakeFirstOrThrow()
      return inserted
    }
    throw new AppError(
      'not_found',
      `organization ${code} does not exist (known: ${known}); add --org-name <name> to create it`,
    )
  }
  if (createName) throw new AppError('usage', '--org-name needs --org <code> for the new organization')
  if (all.length === 1) return all[0]!
  if (all.length === 0) {
    throw new AppError('not_found', 'there is no organization yet; give --org <code> --org-name <name> to create one')
  }
  throw new AppError('usage', `several organizations exist (${known}); choose one with --org <code>`)
}

export interface NewUser {
  /** Organization code; defaults to the only organization in the database. */
  organizationCode?: string
  /** Creates the organization when it does not exist yet. */
  organizationName?: string
  email: string
  name: string
  role: Role
  /** The plain password (hashed here), or an already encoded scrypt hash. */
  password?: string
  passwordHash?: string
  /** Farms a client may see, by code, in the same organization. Must be empty for advisors. */
  farmCodes?: readonly string[]
}

/**
 * Inserts a viewer account and its farm grants in one transaction. Throws `invalid_input` for a bad
 * e-mail, role, name or password, `conflict` when the e-mail is taken, `not_found` for an unknown
 * farm or organization.
 */
export async function insertUser(db: Kysely<Database>, input: NewUser): Promise<User> {
  const email = normalizeEmail(input.email)
  if (!emailPattern.test(email)) throw new AppError('invalid_input', `email: expected an address like name@example.org, found "${input.email}"`)
  const name = input.name.trim()
  if (!name) throw new AppError('invalid_input', 'name: expected the person\'s name, found an empty value')
  if (!roles.includes(input.role)) {
    throw new AppError('invalid_input', `role: expected advisor or client, found "${input.role}"`)
  }
  const farmCodes = [...new Set(input.farmCodes ?? [])]
  if (input.role === 'advisor' && farmCodes.length > 0) {
    throw new AppError('usage', 'an advisor sees every farm of the organization; --farm is only for clients')
  }
  if (input.role === 'client' && farmCodes.length === 0) {
    throw new AppError('usage', 'a client needs at least one --farm <code> to see')
  }
  if (input.passwordHash === undefined && input.password !== undefined) checkPassword(input.password)
  // every check that can fail runs before the slow password hash, and again inside the transaction
  const checkAgainstStore = async (trx: Kysely<Database>, create: boolean) => {
    const org = create
      ? await resolveOrganization(trx, { code: input.organizationCode, createName: input.organizationName })
      : await resolveOrganizationReadOnly(trx, input.organizationCode, input.organizationName)
    const taken = await trx.selectFrom('users').select('id').where('email', '=', email).executeTakeFirst()
    if (taken) throw new AppError('conflict', `an account for ${email} already exists; use \`pitside users passwd\` to change its password`)
    const farms = farmCodes.length && org.id >= 0
      ? await trx
          .selectFrom('farms')
          .select(['id', 'code'])
          .where('organization_id', '=', org.id)
          .where('code', 'in', farmCodes)
          .execute()
      : []
    const missing = farmCodes.filter((c) => !farms.some((f) => f.code === c))
    if (missing.length) {
      throw new AppError('not_found', `farm ${missing.join(', ')} not found in organization ${org.code}`)
    }
    return { org, farms }
  }
  await checkAgainstStore(db, false)

  let passwordHash = input.passwordHash
  if (passwordHash === undefined) {
    if (input.password === undefined) throw new AppError('usage', 'a new account needs a password')
    checkPassword(input.password)
    passwordHash = await hashPassword(input.password)
  }
  const hash = passwordHash

  return db.transaction().execute(async (trx) => {
    const { org, farms } = await checkAgainstStore(trx, true)
    const { id } = await trx
      .insertInto('users')
      .values({ organization_id: org.id, email, name, role: input.role, password_hash: hash })
      .returning('id')
      .executeTakeFirstOrThrow()
    if (farms.length) {
      await trx.insertInto('user_farms').values(farms.map((f) => ({ user_id: id, farm_id: f.id }))).execute()
    }
    const user = await findUserById(trx, id)
    return user!
  })
}

/** Like resolveOrganization, but never creates: an organization still to be created has id -1. */
async function resolveOrganizationReadOnly(db: Kysely<Database>, code: string | undefined, createName: string | undefined): Promise<Organization> {
  if (code && createName && !(await findOrganizationByCode(db, code))) return { id: -1, code, name: createName }
  return resolveOrganization(db, { code, createName: code ? undefined : createName })
}

function selectUsers(db: Kysely<Database>) {
  return db
    .selectFrom('users')
    .innerJoin('organizations', 'organizations.id', 'users.organization_id')
    .selectAll('users')
    .select('organizations.code as organization_code')
}

async function farmCodesOf(db: Kysely<Database>, userIds: number[]): Promise<Map<number, string[]>> {
  const map = new Map<number, string[]>()
  if (userIds.length === 0) return map
  const rows = await db
    .selectFrom('user_farms')
    .innerJoin('farms', 'farms.id', 'user_farms.farm_id')
    .select(['user_farms.user_id', 'farms.code'])
    .where('user_farms.user_id', 'in', userIds)
    .orderBy('farms.code')
    .execute()
  for (const r of rows) map.set(r.user_id, [...(map.get(r.user_id) ?? []), r.code])
  return map
}

export async function findUserById(db: Kysely<Database>, id: number): Promise<User | undefined> {
  const row = await selectUsers(db).where('users.id', '=', id).executeTakeFirst()
  if (!row) return undefined
  return toUser(row, (await farmCodesOf(db, [id])).get(id) ?? [])
}

export async function findUserByEmail(db: Kysely<Database>, email: string): Promise<User | undefined> {
  const row = await selectUsers(db).where('users.email', '=', normalizeEmail(email)).executeTakeFirst()
  if (!row) return undefined
  return toUser(row, (await farmCodesOf(db, [row.id])).get(row.id) ?? [])
}

/** The stored scrypt hash of an account, for sign-in only. */
export async function findPasswordHash(db: Kysely<Database>, email: string): Promise<{ id: number; passwordHash: string; disabled: boolean } | undefined> {
  const row = await db
    .selectFrom('users')
    .select(['id', 'password_hash', 'disabled'])
    .where('email', '=', normalizeEmail(email))
    .executeTakeFirst()
  return row && { id: row.id, passwordHash: row.password_hash, disabled: row.disabled !== 0 }
}

export async function listUsers(db: Kysely<Database>): Promise<User[]> {
  const rows = await selectUsers(db).orderBy('organizations.code').orderBy('users.email').execute()
  const farms = await farmCodesOf(db, rows.map((r) => r.id))
  return rows.map((r) => toUser(r, farms.get(r.id) ?? []))
}

async function requireUser(db: Kysely<Database>, email: string): Promise<User> {
  const user = await findUserByEmail(db, email)
  if (!user) throw new AppError('not_found', `no account for ${normalizeEmail(email)} (see \`pitside users list\`)`)
  return user
}

/** Replaces an account's password (hashing it here). Throws `not_found` or `invalid_input`. */
export async function updateUserPassword(db: Kysely<Database>, email: string, password: string): Promise<User> {
  const user = await requireUser(db, email)
  checkPassword(password)
  const hash = await hashPassword(password)
  await db
    .updateTable('users')
    .set({ password_hash: hash, updated_at: new Date().toISOString() })
    .where('id', '=', user.id)
    .execute()
  return (await findUserById(db, user.id))!
}

/** Disables (or re-enables) an account; a disabled account cannot sign in and its sessions stop working. */
export async function updateUserDisabled(db: Kysely<Database>, email: string, disabled: boolean): Promise<User> {
  const user = await requireUser(db, email)
  await db
    .updateTable('users')
    .set({ disabled: disabled ? 1 : 0, updated_at: new Date().toISOString() })
    .where('id', '=', user.id)
    .execute()
  return (await findUserById(db, user.id))!
}
