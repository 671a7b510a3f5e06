// `npm run dev`: the API server over the demo database (built CLI) plus Vite's dev server, which reloads
// the pages on every change and proxies /api to the API server. Ctrl-C stops both.
import { spawn, spawnSync } from 'node:child_process'
import { existsSync } from 'node:fs'

const db = process.env.PITSIDE_DB ?? 'demo/pitside-demo.db'
const apiPort = process.env.PITSIDE_API_PORT ?? '8080'

if (!existsSync('dist/cli/main.js')) {
  const r = spawnSync('npm', ['run', 'build:node', '--silent'], { stdio: 'inherit' })
  if (r.status !== 0) process.exit(r.status ?? 1)
}
if (!existsSync(db)) {
  process.stderr.write(`${db} does not exist: run \`npm start\` once to create the demo database\n`)
  process.exit(1)
}

const children = [
  spawn('node', ['bin/pitside.js', '--db', db, 'serve', '--port', apiPort], { stdio: 'inherit' }),
  spawn('npx', ['vite', '--host', '127.0.0.1'], {
    stdio: 'inherit',
    env: { ...process.env, PITSIDE_API_PORT: apiPort },
  }),
]
const stop = () => {
  for (const c of children) c.kill('SIGTERM')
}
process.on('SIGINT', stop)
process.on('SIGTERM', stop)
for (const c of children) c.on('exit', (code) => {
  stop()
  process.exitCode = code ?? 0
})
