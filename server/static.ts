import { existsSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import express, { Router } from 'express'
import { shareHeaders } from './routes/share.ts'

/** The built client: dist/web beside the compiled server, or under the repository when run from source. */
export function findWebDir(): string | null {
  for (const candidate of ['../web', '../dist/web']) {
    const dir = fileURLToPath(new URL(candidate, import.meta.url))
    if (existsSync(join(dir, 'index.html'))) return dir
  }
  return null
}

const notBuilt = `<!doctype html><meta charset="utf-8"><title>Pitside</title>
<p>The viewer's pages are not built yet. Run <code>npm run build</code>, then start <code>pitside serve</code> again.</p>`

/** Serves the client: hashed assets cached for a year, every other path answered by index.html (client routing). */
export function webRoutes(webDir: string | null): Router {
  const router = Router()
  if (!webDir) {
    router.get('/{*splat}', (_req, res) => {
      res.status(503).type('html').send(notBuilt)
    })
    return router
  }
  const index = readFileSync(join(webDir, 'index.html'))
  router.use(
    '/assets',
    express.static(join(webDir, 'assets'), { immutable: true, maxAge: '365d', index: false, fallthrough: false }),
  )
  router.use(express.static(webDir, { index: false, maxAge: '1h' }))
  const sendIndex: express.RequestHandler = (_req, res) => {
    if (!res.get('Cache-Control')) res.set('Cache-Control', 'no-cache')
    res.type('html').send(index)
  }
  router.get('/s/{*splat}', shareHeaders, sendIndex)
  router.get('/{*splat}', sendIndex)
  return router
}
