import { existsSync, readdirSync, readFileSync } from 'node:fs'
import { extname, join } from 'node:path'
import { gzipSync } from 'node:zlib'
import { fileURLToPath } from 'node:url'
import express, { Router } from 'express'
import { findServerEntry, planPageRenderer, type PlanPageDeps } from './plan-page.ts'
import { acceptsGzip } from './routes/plans.ts'
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

interface Asset {
  type: string
  body: Buffer
  gzip: Buffer | null
}

/** The code of each page beyond the entry script (its route chunk and the chunks that one imports), as /assets/ paths. */
export type PageModules = Partial<Record<'plan' | 'farm' | 'farms', string[]>>

const pageSources = { plan: 'src/routes/plan.tsx', farm: 'src/routes/farm.tsx', farms: 'src/routes/farms.tsx' } as const

/**
 * Each page's code from the build's manifest (`.vite/manifest.json`, written by `vite build`): the
 * page's chunk and, transitively, the chunks it imports, without the entry script that index.html
 * loads anyway. Empty when there is no manifest or it cannot be read (the pages still load their code).
 */
export function readPageModules(webDir: string): PageModules {
  type Chunk = { file: string; isEntry?: boolean; imports?: string[] }
  let manifest: Record<string, Chunk>
  try {
    manifest = JSON.parse(readFileSync(join(webDir, '.vite', 'manifest.json'), 'utf8')) as Record<string, Chunk>
  } catch {
    return {}
  }
  const out: PageModules = {}
  for (const [page, source] of Object.entries(pageSources) as [keyof PageModules, string][]) {
    if (!manifest[source]) continue
    const files: string[] = []
    const visit = (key: string) => {
      const chunk = manifest[key]
      if (!chunk || chunk.isEntry || files.includes(`/${chunk.file}`)) return
      files.push(`/${chunk.file}`)
      for (const i of chunk.imports ?? []) visit(i)
    }
    visit(source)
    out[page] = files
  }
  return out
}

/**
 * What a page asks for first, as a Link header: the API answers (rel=preload) and the page's own
 * code (rel=modulepreload), so that the browser fetches them while it loads the entry script
 * instead of one after the other; the page's own fetch and import then take what is already there.
 * The API paths are the ones the client's route loaders prefetch (src/main.tsx).
 */
export function pagePreloads(path: string, modules: PageModules = {}): string | null {
  let urls: string[]
  let page: keyof PageModules | null = null
  const plan = /^\/plans\/([1-9]\d{0,11})$/.exec(path)
  const farm = /^\/farms\/([A-Za-z0-9][A-Za-z0-9_.-]{0,39})$/.exec(path)
  if (plan) [urls, page] = [['/api/session', `/api/plans/${plan[1]}`], 'plan']
  else if (farm) [urls, page] = [['/api/session', `/api/farms/${farm[1]}`], 'farm']
  else if (path === '/farms') [urls, page] = [['/api/session', '/api/farms'], 'farms']
  else if (path === '/') urls = ['/api/session']
  else return null
  const links = urls.map((u) => `<${u}>; rel=preload; as=fetch; crossorigin=anonymous`)
  for (const file of page ? (modules[page] ?? []) : []) links.push(`<${file}>; rel=modulepreload`)
  return links.join(', ')
}

/**
 * The Link header of a plan page the server rendered: the figures' typeface (so that the first
 * layout of the rate tables is done with it, not done again when it arrives: one layout of a
 * 200-field plan's tables costs 250-400 ms here). Neither the page's code nor the plan's answer
 * it hydrates from: both are asked for after the first paint (server/plan-page.ts, afterPaint),
 * and fetching, decoding and compiling them earlier would compete with the first layout.
 */
export function renderedPagePreloads(fonts: string[] = []): string | null {
  const links = fonts.map((f) => `<${f}>; rel=preload; as=font; type="font/woff2"; crossorigin=anonymous`)
  return links.length > 0 ? links.join(', ') : null
}

const compressible = new Set(['.js', '.css', '.svg', '.json', '.html', '.map', '.txt'])

/** The hashed build output, held in memory with a gzipped copy of each text file (they never change while serving). */
function loadAssets(dir: string): Map<string, Asset> {
  const out = new Map<string, Asset>()
  if (!existsSync(dir)) return out
  for (const name of readdirSync(dir)) {
    const body = readFileSync(join(dir, name))
    const ext = extname(name)
    out.set(name, { type: ext || 'application/octet-stream', body, gzip: compressible.has(ext) ? gzipSync(body, { level: 9 }) : null })
  }
  return out
}

/**
 * Serves the client: hashed assets cached for a year, every other path answered by index.html
 * (client routing). With `planPage`, a signed-in plan page comes rendered (server/plan-page.ts).
 */
export function webRoutes(webDir: string | null, planPage?: PlanPageDeps): Router {
  const router = Router()
  if (!webDir) {
    router.get('/{*splat}', (_req, res) => {
      res.status(503).type('html').send(notBuilt)
    })
    return router
  }
  const index = readFileSync(join(webDir, 'index.html'))
  const assets = loadAssets(join(webDir, 'assets'))
  const modules = readPageModules(webDir)
  // the figures' typeface, regular and semibold: a rendered page lays its tables out once with it
  const fonts = [...assets.keys()].filter((n) => /^jetbrains-mono-latin-(400|600)-normal-[\w-]+\.woff2$/.test(n)).map((n) => `/assets/${n}`)
  // static files, like express.static: middleware rather than a route of the API
  router.use('/assets', (req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') return next()
    const asset = assets.get(req.path.slice(1))
    if (!asset) return next()
    res.set('Cache-Control', 'public, max-age=31536000, immutable').set('Vary', 'Accept-Encoding').type(asset.type)
    if (asset.gzip && acceptsGzip(req.headers['accept-encoding'])) res.set('Content-Encoding', 'gzip').send(asset.gzip)
    else res.send(asset.body)
  })
  router.use('/assets', (_req, res) => {
    res.status(404).type('text').send('not found')
  })
  router.use(express.static(webDir, { index: false, maxAge: '1h' }))
  const sendIndex: express.RequestHandler = (_req, res) => {
    if (!res.get('Cache-Control')) res.set('Cache-Control', 'no-cache')
    res.type('html').send(index)
  }
  const renderPlanPage = planPage ? planPageRenderer(planPage, { index, entryFile: findServerEntry(webDir) }) : null
  const sendPage: express.RequestHandler = async (req, res, next) => {
    const plan = /^\/plans\/([1-9]\d{0,11})$/.exec(req.path)
    // the same address answers differently with and without a session
    if (plan) res.set('Vary', 'Cookie')
    const rendered = plan && renderPlanPage ? await renderPlanPage(req, plan[1]!) : null
    if (plan && rendered) {
      const links = renderedPagePreloads(fonts)
      if (links) res.set('Link', links)
      // one user's page: never stored by a browser's or a proxy's cache
      res.set('Cache-Control', 'private, no-store').set('Vary', 'Cookie, Accept-Encoding').type('html')
      if (acceptsGzip(req.headers['accept-encoding'])) res.set('Content-Encoding', 'gzip').send(rendered.gzip)
      else res.send(rendered.body)
      return
    }
    const preloads = pagePreloads(req.path, modules)
    if (preloads) res.set('Link', preloads)
    sendIndex(req, res, next)
  }
  router.get('/s/{*splat}', shareHeaders, sendIndex)
  router.get('/{*splat}', sendPage)
  return router
}
