// `npm start`: build, create the demo database, run the job end to end on it, then start the viewer.
// Each step is the real CLI, exactly as an advisor would type it.
import { execFileSync, spawnSync } from 'node:child_process'
import { existsSync, mkdirSync } from 'node:fs'

const db = process.env.PITSIDE_DB ?? 'demo/pitside-demo.db'
mkdirSync('demo', { recursive: true })

function step(title, command, args) {
  process.stderr.write(`\n── ${title}\n$ ${[command, ...args].join(' ')}\n`)
  const r = spawnSync(command, args, { stdio: 'inherit' })
  if (r.status !== 0) {
    process.stderr.write(`\nstep failed: ${title} (exit ${r.status})\n`)
    process.exit(r.status ?? 1)
  }
}

function pitside(...args) {
  return ['bin/pitside.js', '--db', db, ...args]
}

step('build the CLI, the server and the viewer', 'npm', ['run', 'build', '--silent'])
step('create or upgrade the database', 'node', pitside('init'))

const help = execFileSync('node', ['bin/pitside.js', '--help']).toString()
if (/\bdemo\b/.test(help)) step('load the invented demo scenario', 'node', pitside('demo'))
if (/\bserve\b/.test(help)) step('start the viewer', 'node', pitside('serve'))
else if (!existsSync(db)) process.exit(1)
