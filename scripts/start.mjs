// `npm start`: build, create the demo database, run the job end to end on it (imports, checks, plans),
// e-mail one share link to the demo outbox, then start the viewer. Each step is the real CLI, exactly as
// an advisor would type it.
import { execFileSync, spawnSync } from 'node:child_process'
import { mkdirSync } from 'node:fs'

const db = process.env.PITSIDE_DB ?? 'demo/pitside-demo.db'
const port = process.env.PITSIDE_PORT ?? '8080'
const baseUrl = `http://127.0.0.1:${port}`
const env = {
  ...process.env,
  PITSIDE_OUTBOX: process.env.PITSIDE_OUTBOX ?? 'demo/outbox',
  PITSIDE_PUBLIC_URL: process.env.PITSIDE_PUBLIC_URL ?? baseUrl,
}
mkdirSync('demo', { recursive: true })

function show(title, args) {
  process.stderr.write(`\n── ${title}\n$ pitside ${args.join(' ')}\n`)
}

function step(title, command, args, shown = args) {
  show(title, shown)
  const r = spawnSync(command, args, { stdio: 'inherit', env })
  if (r.status !== 0) {
    process.stderr.write(`\nstep failed: ${title} (exit ${r.status})\n`)
    process.exit(r.status ?? 1)
  }
}

const pitside = (...args) => ['bin/pitside.js', '--db', db, ...args]
const json = (...args) => JSON.parse(execFileSync('node', pitside('--json', ...args), { env }).toString())

process.stderr.write('── build the CLI, the server and the viewer\n$ npm run build\n')
const built = spawnSync('npm', ['run', 'build', '--silent'], { stdio: ['ignore', 'ignore', 'inherit'] })
if (built.status !== 0) process.exit(built.status ?? 1)

step('create or upgrade the database', 'node', pitside('init'), ['--db', db, 'init'])
step('load the invented demo: farms, accounts, storages, fields, samples, lab files, applications, plans', 'node', pitside('demo'), ['--db', db, 'demo'])
step('the plans for season 2027', 'node', pitside('plans', 'list', '--season', '2027'), ['--db', db, 'plans', 'list', '--season', '2027'])
step('check the database', 'node', pitside('check'), ['--db', db, 'check'])

// One share link for a client, e-mailed to the local outbox (no mail leaves this machine).
if (json('share', 'list').links.length === 0) {
  const plan = json('plans', 'list', '--farm', 'QBF', '--season', '2027').plans[0]
  if (plan) {
    show('share the Quillback Finishing plan with its operator', ['--db', db, 'share', String(plan.id), '--to', 'qbf@farm.example'])
    const link = json('share', String(plan.id), '--to', 'qbf@farm.example')
    process.stderr.write(`share link: ${link.url}\ne-mail written to ${link.outbox_file}\n`)
  }
} else {
  process.stderr.write(`\nshare links already made: see \`pitside --db ${db} share list\` and ${env.PITSIDE_OUTBOX}/\n`)
}

step('start the viewer (Ctrl-C stops it)', 'node', pitside('serve', '--port', port), ['--db', db, 'serve', '--port', port])
