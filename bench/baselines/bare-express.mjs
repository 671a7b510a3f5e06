// The practical limit for a JSON API route on this machine: a bare Express 5 app answering a small
// constant JSON body. Usage: node bench/baselines/bare-express.mjs <port>
import express from 'express'

const port = Number(process.argv[2] ?? 0)
const app = express()
const body = { id: 1, farm: 'F0001', season: 2027, fields: 50, ok: true }
app.get('/constant', (_req, res) => {
  res.json(body)
})
const server = app.listen(port, '127.0.0.1', () => {
  process.stdout.write(`listening on ${server.address().port}\n`)
})
server.keepAliveTimeout = 65_000
process.on('SIGTERM', () => process.exit(0))
