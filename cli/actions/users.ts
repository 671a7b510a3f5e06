import type { Kysely } from 'kysely'
import { openWriter } from '../../shared/db/open-database.ts'
import type { Database } from '../../shared/db/schema.ts'
import {
  insertUser,
  listUsers,
  updateUserDisabled,
  updateUserPassword,
  type Role,
  type User,
} from '../../shared/db/users.ts'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'

export interface UsersDeps {
  db: Kysely<Database>
}

export interface AddUserInput {
  email: string
  name: string
  role: Role
  password: string
  farmCodes?: readonly string[]
  organizationCode?: string
  organizationName?: string
}

/** The core of `pitside users add`, callable in-process (the demo creates its accounts with it). */
export async function addUser({ db }: UsersDeps, input: AddUserInput): Promise<User> {
  return insertUser(db, input)
}

/** The core of `pitside users passwd`. */
export async function changePassword({ db }: UsersDeps, email: string, password: string): Promise<User> {
  return updateUserPassword(db, email, password)
}

/** The JSON form of an account printed by `--json`. */
export function userJson(u: User) {
  return {
    email: u.email,
    name: u.name,
    role: u.role,
    organization: u.organizationCode,
    farms: u.farmCodes,
    disabled: u.disabled,
    created_at: u.createdAt,
    updated_at: u.updatedAt,
  }
}

async function readPasswordFromStdin(given: boolean): Promise<string> {
  if (!given) {
    throw new AppError('usage', 'give the password on standard input with --password-stdin (e.g. `printf %s "$PW" | pitside users add … --password-stdin`)')
  }
  const chunks: Buffer[] = []
  for await (const chunk of process.stdin) chunks.push(chunk as Buffer)
  // one trailing newline is what `echo` adds, not part of the password
  return Buffer.concat(chunks).toString('utf8').replace(/\r?\n$/, '')
}

async function withDb<T>(file: string, body: (deps: UsersDeps) => Promise<T>): Promise<T> {
  const { db, close } = openWriter(file)
  try {
    return await body({ db })
  } finally {
    await close()
  }
}

export const runAdd: ActionModule['run'] = async ({ options, globals: g }) => {
  const password = await readPasswordFromStdin(options.passwordStdin)
  const user = await withDb(g.db, (deps) =>
    addUser(deps, {
      email: options.email,
      name: options.name,
      role: options.role,
      password,
      farmCodes: options.farm,
      organizationCode: options.org,
      organizationName: options.orgName,
    }),
  )
  if (g.json) printJson(userJson(user))
  else
    note(g, `added ${user.role} ${user.email} (${user.name}) in ${user.organizationCode}` +
      (user.farmCodes.length ? `; sees farm ${user.farmCodes.join(', ')}` : '; sees every farm of the organization'))
}

export const runPasswd: ActionModule['run'] = async ({ args, options, globals: g }) => {
  const password = await readPasswordFromStdin(options.passwordStdin)
  const user = await withDb(g.db, (deps) => changePassword(deps, String(args[0]), password))
  if (g.json) printJson(userJson(user))
  else note(g, `changed the password of ${user.email}; its open sessions have ended`)
}

function runSetDisabled(disabled: boolean): ActionModule['run'] {
  return async ({ args, globals: g }) => {
    const user = await withDb(g.db, ({ db }) => updateUserDisabled(db, String(args[0]), disabled))
    if (g.json) printJson(userJson(user))
    else note(g, disabled ? `disabled ${user.email}: it can no longer sign in` : `enabled ${user.email}`)
  }
}
export const runDisable = runSetDisabled(true)
export const runEnable = runSetDisabled(false)


export async function runList({ globals: g }: Parameters<ActionModule['run']>[0]): Promise<void> {
  const users = await withDb(g.db, ({ db }) => listUsers(db))
  if (g.json) return printJson({ users: users.map(userJson) })
  if (users.length === 0) return note(g, 'no accounts yet; add one with `pitside users add`')
  printTable(users, [
    { header: 'email', value: (u) => u.email },
    { header: 'name', value: (u) => u.name },
    { header: 'role', value: (u) => u.role },
    { header: 'organization', value: (u) => u.organizationCode },
    { header: 'farms', value: (u) => (u.role === 'advisor' ? '(all)' : u.farmCodes.join(' ')) },
    { header: 'status', value: (u) => (u.disabled ? 'disabled' : 'active') },
  ])
}
