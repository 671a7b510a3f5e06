import { existsSync } from 'node:fs'
import { join } from 'node:path'
import { pathToFileURL } from 'node:url'
import { gzipSync } from 'node:zlib'
import type SQLite from 'better-sqlite3'
import type { Request } from 'express'
import type { Kysely } from 'kysely'
import type { PlanVersionsResponse, SessionResponse } from '../shared/api-types.ts'
import type { Database } from '../shared/db/schema.ts'
import { findPlanVersions } from '../shared/db/viewer-queries.ts'
import { AppError } from '../shared/errors.ts'
import type { Sessions } from './auth.ts'
import type { PlanCache } from './plan-cache.ts'
import { findVisiblePlan } from './routes/plans.ts'

/** What the viewer's pages need to render a plan page on the server (createApp passes them). */
export interface PlanPageDeps {
  db: Kysely<Database>
  sqlite: SQLite.Database
  sessions: Sessions
  plans: PlanCache
  log: (line: string) => void
}

/** The built server entry (src/entry-server.tsx → dist/ssr/entry-server.js); its types live in src/, which the server does not compile. */
interface ServerEntry {
  renderPlanPage(input: {
    url: string
    planId: string
    session: SessionResponse
    planJson: string
    versions: PlanVersionsResponse
  }): Promise<{ head: string; root: string; data: string } | null>
}

export interface RenderedPlanPage {
  body: Buffer
  gzip: Buffer
}

const rootElement = '<div id="root"></div>'
const maxCached = 16

/**
 * index.html with its entry script started once the page has been painted (public/after-paint.js)
 * instead of beside the HTML: a rendered page shows from its markup and style sheet, and the
 * script's decoding, compiling and evaluation would otherwise share the main thread with (or come
 * before) its first layout. `fetchPath`: the API answer the page hydrates from, asked for at the
 * same moment (a preload the page's own fetch takes): asked for beside the HTML, its arrival and
 * decoding (some 0.5 MB of JSON for a 200-field plan) came in the middle of the first layout's
 * wait. Unchanged when index.html has no such tag.
 */
export function afterPaint(index: string, fetchPath?: string): string {
  const fetch = fetchPath ? ` data-fetch="${fetchPath.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;')}"` : ''
  return index.replace(/<script type="module" crossorigin src="(\/assets\/[\w.-]+\.js)"><\/script>/, (_, src: string) => `<script defer src="/after-paint.js" data-entry="${src}"${fetch}></script>`)
}

/** The server entry beside the built client: dist/ssr next to dist/web. */
export function findServerEntry(webDir: string): string {
  return join(webDir, '..', 'ssr', 'entry-server.js')
}

/**
 * Renders a signed-in plan page (`/plans/:id`) on the server: index.html with the page's markup in
 * #root and the answers it was rendered from in a JSON data element, for the browser to hydrate.
 * The session and the plan are read through the same code as `GET /api/plans/:id`
 * (`Sessions.read`, `findVisiblePlan`), so the page shows exactly what the API would answer.
 * Answers null whenever the browser should render the page itself: nobody signed in, a plan that
 * does not exist or that this user may not read, no server entry built, or a render that failed
 * (logged once per message, without a stack). The entry is imported on the first such request,
 * so that `pitside serve` starts as fast as before.
 */
export function planPageRenderer(deps: PlanPageDeps, options: { index: Buffer; entryFile: string }) {
  const template = options.index.toString('utf8')
  const at = template.indexOf(rootElement)
  const headEnd = template.indexOf('</head>')
  const dataVersion = deps.sqlite.prepare<[], number>('pragma data_version').pluck()
  // plans never change and the page shows nothing else that changes without a commit by another
  // connection (PRAGMA data_version); the session's expiry is in the data, hence the token id
  const cache = new Map<string, RenderedPlanPage>()
  const logged = new Set<string>()
  const logOnce = (line: string) => {
    if (logged.has(line) || logged.size > 100) return
    logged.add(line)
    deps.log(line)
  }
  let entry: Promise<ServerEntry | null> | null = null
  const loadEntry = () =>
    (entry ??= (async () => {
      if (!existsSync(options.entryFile)) return null // not built (tests, `npm run dev`): the browser renders
      if (at < 0 || headEnd < 0 || headEnd > at) {
        logOnce(`plan pages are rendered in the browser: index.html has no </head> followed by ${rootElement}`)
        return null
      }
      try {
        const loaded = (await import(pathToFileURL(options.entryFile).href)) as Partial<ServerEntry>
        if (typeof loaded.renderPlanPage !== 'function') throw new Error('it exports no renderPlanPage')
        return loaded as ServerEntry
      } catch (error) {
        logOnce(`plan pages are rendered in the browser: cannot load ${options.entryFile}: ${(error as Error).message}`)
        return null
      }
    })())

  return async function renderPlanPage(req: Request, planId: string): Promise<RenderedPlanPage | null> {
    try {
      const signedIn = await deps.sessions.read(req)
      if (!signedIn) return null
      const plan = await findVisiblePlan(deps.plans, planId, signedIn.viewer)
      const server = await loadEntry()
      if (!server) return null
      const key = `${planId}:${signedIn.tokenId}:${dataVersion.get() as number}`
      const hit = cache.get(key)
      if (hit) return hit
      const session: SessionResponse = { user: signedIn.user(), expires_at: signedIn.expiresAt.toISOString() }
      const versions: PlanVersionsResponse = { versions: await findPlanVersions(deps.db, plan.owner) }
      const page = await server.renderPlanPage({ url: `http://pitside.invalid${req.originalUrl}`, planId, session, planJson: plan.json, versions })
      if (!page) return null
      // the entry script's tag is in the head or after #root: its parts, not the page's markup
      const own = (part: string) => afterPaint(part, `/api/plans/${planId}`)
      const html = `${own(template.slice(0, headEnd))}${page.head}${own(template.slice(headEnd, at))}<div id="root">${page.root}</div>${page.data}${own(template.slice(at + rootElement.length))}`
      const body = Buffer.from(html)
      const rendered = { body, gzip: gzipSync(body) }
      if (cache.size >= maxCached) cache.delete(cache.keys().next().value!)
      cache.set(key, rendered)
      return rendered
    } catch (error) {
      if (error instanceof AppError && error.code === 'not_found') return null
      logOnce(`a plan page is rendered in the browser: the server's rendering failed: ${(error as Error).message ?? String(error)}`)
      return null
    }
  }
}

export type PlanPageRenderer = ReturnType<typeof planPageRenderer>
