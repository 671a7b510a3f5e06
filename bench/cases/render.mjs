// plan_render_ms: time from navigation start until a 200-field plan page has rendered its table, in
// headless Chromium against `pitside serve` and the production build (dist/web). Each run uses a
// fresh browser context (cold cache) with the session cookie already set.
import { execSync } from 'node:child_process'
import { existsSync } from 'node:fs'
import { join } from 'node:path'
import { webDir } from '../lib/context.mjs'
import { round, summarize } from '../lib/stats.mjs'
import { signIn } from '../lib/viewer-db.mjs'
import { startViewer } from './api.mjs'

const launchArgs = [
  '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
]

function chromiumPath() {
  if (process.env.CHROMIUM_PATH) return process.env.CHROMIUM_PATH
  if (existsSync('/usr/bin/chromium')) return '/usr/bin/chromium'
  return execSync('command -v chromium').toString().trim()
}

export async function benchRender(ctx) {
  const { size, log } = ctx
  if (!existsSync(join(webDir, 'index.html'))) throw new Error('dist/web is missing: run `npm run build` first')
  const { chromium } = await import('playwright-core')
  const viewer = await ctx.viewerDb()
  const planId = viewer.planIds[size.renderFields]
  const server = await startViewer(viewer.db)
  const browser = await chromium.launch({ executablePath: chromiumPath(), headless: true, args: launchArgs })
  try {
    const cookie = await signIn(server.url, viewer.email, viewer.password)
    const [name, value] = [cookie.slice(0, cookie.indexOf('=')), cookie.slice(cookie.indexOf('=') + 1)]
    const url = new URL(`/plans/${planId}`, server.url).href
    const runs = size.renderRuns
    const times = []
    log(`render: ${url} (${size.renderFields} fields), ${runs} measured after ${ctx.warmup} warm-up`)
    for (let i = 0; i < ctx.warmup + runs; i++) {
      const context = await browser.newContext({ viewport: { width: 1280, height: 800 } })
      try {
        await context.addCookies([{ name, value, url: server.url }])
        const page = await context.newPage()
        // records when the first frame with every field's row on screen has been painted (ms since
        // navigation start): the rate tables (one per storage) hold one row per field, its code in
        // the first cell. Checked once per frame, so that measuring does not slow the page down.
        await page.addInitScript((rows) => {
          const check = () => {
            const seen = new Set()
            for (const t of document.querySelectorAll('table')) {
              const body = t.tBodies[0]
              if (!body || body.rows.length === 0 || !t.checkVisibility()) continue
              for (const tr of body.rows) {
                const code = tr.cells[0]?.textContent ?? ''
                if (/^FLD-\d+/.test(code)) seen.add(code.slice(0, 7))
              }
            }
            if (seen.size < rows) return requestAnimationFrame(check)
            // a task queued from the frame that has the rows runs once that frame is laid out and painted
            const after = new MessageChannel()
            after.port1.onmessage = () => {
              window.__renderedAt = performance.now()
            }
            after.port2.postMessage(0)
          }
          requestAnimationFrame(check)
        }, size.renderFields)
        await page.goto(url)
        const ms = await page.waitForFunction(() => window.__renderedAt, null, { timeout: 30_000 }).then((h) => h.jsonValue())
        if (i >= ctx.warmup) times.push(ms)
        log(`  ${i < ctx.warmup ? 'warm-up' : `run ${i - ctx.warmup + 1}`}: ${ms.toFixed(0)} ms`)
      } finally {
        await context.close()
      }
    }
    const s = summarize(times)
    return {
      keys: { plan_render_ms: round(s.median, 1) },
      table: [{ key: 'plan_render_ms', summary: s, goal: '≤ 1000', met: s.median <= 1000, note: `${size.renderFields}-field plan page, headless Chromium, cold cache, navigation start → table rendered` }],
    }
  } finally {
    await browser.close()
    await server.stop()
  }
}
