import { verifyPassword } from '../../shared/db/passwords.ts'
import { AppError } from '../../shared/errors.ts'
import { startServer, type RunningServer } from '../../server/main.ts'
import type { ActionModule } from '../lazy.ts'
import { note } from '../output.ts'

const demoOrganization = 'loamridge'
const demoPassword = 'pitside-demo'

/** The demo accounts, when this database is the demo and its advisor still has the demo password. */
async function demoSignIns(server: RunningServer): Promise<{ email: string; role: string; farms: string }[]> {
  const rows = server.database.sqlite
    .prepare(
      `select u.email, u.role, u.password_hash, coalesce(group_concat(f.code, ' '), '') as farms
         from users u join organizations o on o.id = u.organization_id
         left join user_farms uf on uf.user_id = u.id left join farms f on f.id = uf.farm_id
        where o.code = ? and u.disabled = 0 group by u.id order by u.role, u.email`,
    )
    .all(demoOrganization) as { email: string; role: string; password_hash: string; farms: string }[]
  const first = rows[0]
  if (!first || !(await verifyPassword(demoPassword, first.password_hash))) return []
  return rows.map(({ email, role, farms }) => ({ email, role, farms }))
}

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  const port = Number(options.port)
  if (!Number.isInteger(port) || port < 0 || port > 65535) {
    throw new AppError('usage', `--port: expected a whole number from 0 to 65535, found "${options.port}"`)
  }
  const server = await startServer({ dbFile: g.db, host: options.host, port, env: process.env })
  // the URL is the command's result; everything else is a note
  process.stdout.write(`${server.url}\n`)
  note(g, `Pitside viewer on ${server.url} (database ${g.db}, read-only); stop with Ctrl-C`)
  if (!server.webBuilt) note(g, 'the pages are not built: run `npm run build` first (the API works without them)')
  if (!['127.0.0.1', 'localhost', '::1'].includes(options.host)) {
    note(g, 'listening beyond this machine: put it behind https (a reverse proxy) so that passwords and cookies are not sent in the clear')
  }
  const demo = await demoSignIns(server)
  if (demo.length) {
    note(g, `demo sign-ins (password ${demoPassword}, demo only):`)
    for (const a of demo) note(g, `  ${a.email.padEnd(28)} ${a.role}${a.farms ? ` (${a.farms})` : ''}`)
  }
  await new Promise<void>((resolve) => {
    const stop = () => {
      process.off('SIGINT', stop)
      process.off('SIGTERM', stop)
      void server.close().then(resolve)
    }
    process.on('SIGINT', stop)
    process.on('SIGTERM', stop)
  })
}
