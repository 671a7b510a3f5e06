import { mkdirSync } from 'node:fs'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import type { Browser, BrowserContext, Page } from 'playwright-core'
import { chromium } from 'playwright-core'
import { execSync } from 'node:child_process'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { buildViewerDemoDatabase, type ViewerDemo } from '../helpers/viewer-demo.ts'
import { spawnServe, type ServeProcess } from '../helpers/viewer-server.ts'

// The plan page as `pitside serve` sends it to a signed-in reader (rendered on the server) and as
// the browser then hydrates it. Runs against the BUILT app (npm run build).
const artifacts = fileURLToPath(new URL('../artifacts/', import.meta.url))
mkdirSync(artifacts, { recursive: true })

let tmp: TempDir
let demo: ViewerDemo
let server: ServeProcess
let browser: Browser

beforeAll(async () => {
  tmp = makeTempDir('pitside-ssr-')
  demo = await buildViewerDemoDatabase(tmp)
  server = await spawnServe(demo.dbFile)
  browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? execSync('command -v chromium').toString().trim(),
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  })
})

afterAll(async () => {
  await browser?.close()
  await server?.stop()
  tmp?.cleanup()
})

/** A fresh context signed in as the advisor (through the API, as the sign-in form does). */
async function signedInContext(options: Parameters<Browser['newContext']>[0] = {}): Promise<BrowserContext> {
  const context = await browser.newContext({ viewport: { width: 1280, height: 800 }, ...options })
  const r = await context.request.post(`${server.url}/api/session`, { data: { email: demo.advisor, password: demo.password } })
  expect(r.status()).toBe(200)
  return context
}

/** Every console error and uncaught error of the page (React reports a hydration mismatch there). */
function collectErrors(page: Page): string[] {
  const errors: string[] = []
  page.on('console', (m) => {
    if (m.type() === 'error') errors.push(m.text())
  })
  page.on('pageerror', (e) => errors.push(String(e)))
  return errors
}

/**
 * Marks the rate rows as the parser left them, before any script of the page has run: the
 * document becomes "interactive" when parsing ends, before module scripts run.
 */
async function markServerRows(page: Page) {
  await page.addInitScript(() => {
    document.addEventListener('readystatechange', () => {
      if (document.readyState !== 'interactive') return
      const rows = [...document.querySelectorAll('section[aria-labelledby="rates-title"] tbody tr')]
      for (const r of rows) (r as HTMLElement & { fromServer?: boolean }).fromServer = true
      const w = window as unknown as { serverRows: number; hadData: boolean }
      w.serverRows = rows.length
      w.hadData = document.getElementById('pitside-page-data') !== null
    })
  })
}

const ratesRows = 'section[aria-labelledby="rates-title"] tbody tr'

describe('the server-rendered plan page in a browser', () => {
  it('hydrates without an error, keeps the rows the server sent, then adds the chart, the sandbox and the applicator sheet', async () => {
    const context = await signedInContext()
    try {
      const page = await context.newPage()
      const errors = collectErrors(page)
      await markServerRows(page)
      const fields = ((await (await context.request.get(`${server.url}/api/plans/${demo.planId}`)).json()) as { result: { fields: { field: string }[] } }).result.fields
      await page.goto(`${server.url}/plans/${demo.planId}`)
      // the sandbox, chart and factors come a frame after hydration
      const sandbox = page.getByRole('region', { name: 'Try another rate' })
      await sandbox.getByText(/^At /).waitFor()
      await page.getByRole('heading', { name: 'Supply against need' }).waitFor()
      await page.locator('svg[role="img"]').first().waitFor()
      const seen = await page.evaluate((selector) => {
        const w = window as unknown as { serverRows: number; hadData: boolean }
        const rows = [...document.querySelectorAll(selector)] as (HTMLTableRowElement & { fromServer?: boolean })[]
        return { serverRows: w.serverRows, hadData: w.hadData, rows: rows.length, same: rows.filter((r) => r.fromServer === true).length, codes: rows.map((r) => r.cells[0]!.firstChild!.textContent) }
      }, ratesRows)
      expect(seen).toEqual({ serverRows: fields.length, hadData: true, rows: fields.length, same: fields.length, codes: expect.arrayContaining(fields.map((f) => f.field)) })
      // the page works as a page the browser rendered: the sandbox recomputes, a version link navigates
      await sandbox.getByLabel(/^Rate/).fill('2500')
      await sandbox.getByText(/^At 2,500(\.0)? /).waitFor()
      // the applicator sheet is built once the page is idle, and shows on paper
      await page.locator('table.sheet').first().waitFor({ state: 'attached' })
      expect(await page.locator('table.sheet tbody tr').count()).toBe(fields.length)
      await page.emulateMedia({ media: 'print' })
      expect(await page.getByRole('heading', { name: /application sheet/ }).isVisible()).toBe(true)
      await page.emulateMedia({ media: 'screen' })
      await page.getByRole('link', { name: 'Farms' }).first().click()
      await page.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
      expect(errors).toEqual([])
    } finally {
      await context.close()
    }
  })

  it('renders the page itself, saying why, when the plan it would hydrate from cannot be fetched', async () => {
    const context = await signedInContext()
    try {
      const page = await context.newPage()
      const uncaught: string[] = []
      page.on('pageerror', (e) => uncaught.push(String(e)))
      await markServerRows(page)
      // the session ends between the page and the plan's answer (the preload and the fetch alike)
      await page.route(`${server.url}/api/plans/${demo.planId}`, (route) =>
        route.fulfill({ status: 401, contentType: 'application/json', body: JSON.stringify({ code: 'unauthorized', message: 'sign in first' }) }),
      )
      await page.goto(`${server.url}/plans/${demo.planId}`)
      // the server's rows were shown first; the browser then renders the page, which says what happened
      await page.getByText('Your session has ended').waitFor()
      expect(await page.evaluate(() => (window as unknown as { serverRows: number }).serverRows)).toBeGreaterThan(0)
      expect(await page.locator(ratesRows).count()).toBe(0)
      expect(uncaught).toEqual([])
    } finally {
      await context.close()
    }
  })

  it('looks the same before its scripts run as after hydration', async () => {
    const boxes: Record<string, unknown> = {}
    for (const [name, javaScriptEnabled] of [['no-js', false], ['hydrated', true]] as const) {
      const context = await signedInContext({ javaScriptEnabled })
      try {
        const page = await context.newPage()
        const errors = collectErrors(page)
        await page.goto(`${server.url}/plans/${demo.planId}`)
        if (javaScriptEnabled) await page.getByRole('heading', { name: 'Factors and sources' }).waitFor()
        await page.evaluate(() => document.fonts.ready.then(() => undefined)).catch(() => undefined)
        await page.locator(ratesRows).first().waitFor()
        boxes[name] = await page.locator('section[aria-labelledby="rates-title"]').boundingBox()
        await page.screenshot({ path: join(artifacts, `plan-ssr-${name}.png`) })
        await page.locator('section[aria-labelledby="rates-title"]').screenshot({ path: join(artifacts, `plan-ssr-rates-${name}.png`) })
        expect(errors).toEqual([])
      } finally {
        await context.close()
      }
    }
    expect(boxes['no-js']).not.toBeNull()
    expect(boxes.hydrated).toEqual(boxes['no-js'])
  })

  it('hydrates the wide page on a phone, then ends with the cards', async () => {
    const context = await signedInContext({ viewport: { width: 390, height: 844 }, isMobile: true, hasTouch: true })
    try {
      const page = await context.newPage()
      const errors = collectErrors(page)
      await markServerRows(page)
      await page.goto(`${server.url}/plans/${demo.planId}`)
      await page.getByRole('heading', { name: 'Factors and sources' }).waitFor()
      const rates = page.locator('section[aria-labelledby="rates-title"]')
      const w = await page.evaluate(() => (window as unknown as { serverRows: number }).serverRows)
      expect(w).toBeGreaterThan(0) // the server sent the table
      expect(await rates.locator('table').count()).toBe(0)
      expect(await rates.locator('ul > li').count()).toBe(w)
      await page.screenshot({ path: join(artifacts, 'plan-ssr-phone.png'), fullPage: false })
      expect(errors).toEqual([])
    } finally {
      await context.close()
    }
  })
})
