import Database from 'better-sqlite3'
import { mkdirSync } from 'node:fs'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import type { BrowserContext, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'
import { findShareUrl } from '../helpers/viewer-eml.ts'
import { launchBrowser, spawnServe, type ServeProcess } from '../helpers/viewer-server.ts'
import { buildViewerDemoDatabase, type ViewerDemo } from '../helpers/viewer-demo.ts'

// Runs against the BUILT app (npm run build) served by the real `pitside serve`.
const artifacts = fileURLToPath(new URL('../artifacts/', import.meta.url))
mkdirSync(artifacts, { recursive: true })
const shot = (page: Page, name: string, fullPage = true) => page.screenshot({ path: join(artifacts, name), fullPage })

let tmp: TempDir
let demo: ViewerDemo
let server: ServeProcess
let browser: { context: BrowserContext; close(): Promise<void> }

beforeAll(async () => {
  tmp = makeTempDir('pitside-browser-')
  demo = await buildViewerDemoDatabase(tmp)
  server = await spawnServe(demo.dbFile, { PITSIDE_OUTBOX: tmp.path('outbox') })
  browser = await launchBrowser()
})

afterAll(async () => {
  await browser?.close()
  await server?.stop()
  tmp?.cleanup()
})

async function freshPage(): Promise<Page> {
  await browser.context.clearCookies()
  const page = await browser.context.newPage()
  page.on('pageerror', (e) => {
    throw e
  })
  return page
}

async function signIn(page: Page, email: string, screenshot?: string) {
  await page.goto(`${server.url}/`)
  await page.waitForURL(/\/sign-in/)
  if (screenshot) await shot(page, screenshot)
  await page.getByLabel('E-mail address').fill(email)
  await page.getByLabel('Password').fill(demo.password)
  await page.getByRole('button', { name: 'Sign in' }).click()
}

describe('the viewer in a browser', () => {
  it('lets an advisor sign in, browse the farms and open a plan', async () => {
    const page = await freshPage()
    await signIn(page, demo.advisor, 'sign-in.png')
    await page.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
    const rows = page.locator('table tbody tr')
    expect(await rows.count()).toBe(demo.advisorFarms.length)
    await shot(page, 'farms-advisor.png')
    await page.getByRole('link', { name: demo.farmName }).click()
    await page.getByRole('heading', { name: 'Storages' }).waitFor()
    await page.locator('svg[role="img"]').first().waitFor()
    await shot(page, 'farm-advisor.png')
    await page.getByRole('link', { name: /Season \d{4}, version \d+/ }).first().click()
    await page.getByRole('heading', { name: 'Field rates' }).waitFor()
    expect(await page.getByText(/hydrogen sulfide/i).count()).toBeGreaterThan(0)
    expect(await page.getByRole('heading', { name: 'Versions' }).count()).toBe(1)
    await shot(page, 'plan-advisor.png')

    // the sandbox recomputes the planned field with the same engine, then another rate
    const planId = Number(/\/plans\/(\d+)/.exec(page.url())![1])
    const storedFields = await page.evaluate(async (id) => (await (await fetch(`/api/plans/${id}`)).json()).result.fields, planId)
    const stored = storedFields[0]
    // one row per planned field, its figures as stored
    const rateRows = page.locator('section[aria-labelledby="rates-title"] table tbody tr')
    expect(await rateRows.count()).toBe(storedFields.length)
    const rateCell = await page.evaluate((code) => {
      const rows = [...document.querySelectorAll('section[aria-labelledby="rates-title"] tbody tr')] as HTMLTableRowElement[]
      return rows.find((r) => r.cells[0]!.firstChild!.textContent === code)!.cells[4]!.textContent
    }, stored.field)
    const digits = String(stored.rate_unit).startsWith('ton') ? 1 : 0
    expect(rateCell).toBe(stored.rate.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits }))
    const sandbox = page.getByRole('region', { name: 'Try another rate' })
    await sandbox.getByText(/^At /).waitFor()
    const fmt = (x: number, d: number) => x.toLocaleString('en-US', { minimumFractionDigits: d, maximumFractionDigits: d })
    expect(await sandbox.getByText(/^At /).textContent()).toContain(`At ${fmt(stored.rate, digits)} ${stored.rate_unit}`)
    await sandbox.getByLabel(/^Rate/).fill('2500')
    await sandbox.getByText(`At ${fmt(2500, digits)} ${stored.rate_unit}`, { exact: false }).waitFor()
    await sandbox.getByLabel('Method').selectOption('broadcast')
    await sandbox.getByText(/broadcast\)/).waitFor()
    await sandbox.screenshot({ path: join(artifacts, 'plan-what-if.png') })
    const factors = page.getByRole('region', { name: 'Factors and sources' })
    await factors.locator('summary').first().click()
    await factors.getByRole('heading', { name: 'Sources' }).first().waitFor()
    await factors.screenshot({ path: join(artifacts, 'plan-factors.png') })
    await page.setViewportSize({ width: 390, height: 844 })
    await shot(page, 'plan-phone.png')
    await page.evaluate(() => window.scrollTo(0, 0))
    await shot(page, 'plan-phone-top.png', false)
    await page.getByRole('heading', { name: 'Field rates' }).scrollIntoViewIfNeeded()
    await shot(page, 'plan-phone-rates.png', false)
    await page.getByRole('heading', { name: 'Supply against need' }).scrollIntoViewIfNeeded()
    await shot(page, 'plan-phone-chart.png', false)
    await page.setViewportSize({ width: 1280, height: 800 })
    await page.close()
  })

  it("shows a client only their own farm, and another farm's page as not found", async () => {
    const page = await freshPage()
    await signIn(page, demo.client)
    await page.waitForURL(new RegExp(`/farms/${demo.clientFarm}$`))
    await page.getByRole('heading', { name: 'Storages' }).waitFor()
    await page.goto(`${server.url}/farms`)
    await page.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
    expect(await page.locator('table tbody tr').count()).toBe(1)
    await shot(page, 'farms-client.png')
    await page.goto(`${server.url}/farms/${demo.otherFarm}`)
    await page.getByRole('heading', { name: 'Not found' }).waitFor()
    await page.goto(`${server.url}/plans/${demo.otherPlanId}`)
    await page.getByRole('heading', { name: 'Not found' }).waitFor()
    await shot(page, 'other-plan-client.png')
    await page.close()
  })

  it('opens the plan behind the share link in the outbox e-mail, without an account', async () => {
    const r = await runCli(['--db', demo.dbFile, '--json', 'share', String(demo.planId), '--to', `${demo.clientFarm.toLowerCase()}@farm.example`, '--expires', '7d'], {
      env: { PITSIDE_OUTBOX: tmp.path('outbox'), PITSIDE_PUBLIC_URL: server.url },
    })
    expect(r.exitCode, String(r.stderr)).toBe(0)
    const created = JSON.parse(String(r.stdout)) as { id: string; url: string; expires_at: string; outbox_file: string }
    const link = findShareUrl(created.outbox_file)
    expect(link).toBe(created.url)
    const page = await freshPage()
    await page.goto(link!)
    await page.getByRole('heading', { name: 'Field rates' }).waitFor()
    expect(await page.getByText('Shared plan, read only').count()).toBe(1)
    expect(await page.getByText(/hydrogen sulfide/i).count()).toBeGreaterThan(0)
    expect(await page.getByRole('button', { name: 'Sign out' }).count()).toBe(0)
    await shot(page, 'share.png')
    const tampered = link!.slice(0, -4) + (link!.endsWith('AAAA') ? 'BBBB' : 'AAAA')
    await page.goto(tampered)
    await page.getByRole('heading', { name: 'This link cannot be opened' }).waitFor()
    await shot(page, 'share-tampered.png')
    await page.close()
  })

  it('prints the applicator sheet within the width of letter and A4 paper', async () => {
    const page = await freshPage()
    await signIn(page, demo.advisor)
    await page.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
    await page.goto(`${server.url}/plans/${demo.planId}`)
    await page.getByRole('heading', { name: 'Field rates' }).waitFor()
    await page.emulateMedia({ media: 'print' })
    await page.getByRole('heading', { name: /application sheet/ }).waitFor()
    expect(await page.getByRole('heading', { name: /application sheet/ }).isVisible()).toBe(true)
    expect(await page.locator('table.sheet tbody tr').count()).toBe(await page.locator('section[aria-labelledby="rates-title"] table tbody tr').count())
    expect(await page.getByRole('heading', { name: 'Field rates' }).isVisible()).toBe(false)
    expect(await page.locator('#cautions-title').isVisible()).toBe(true)
    expect(await page.locator('#cautions-top-title').isVisible()).toBe(false)
    // printable width at 12 mm margins, in CSS pixels (96 per inch): A4 186 mm, letter 191.9 mm
    for (const [paper, widthPx] of [['a4', 703], ['letter', 725]] as const) {
      await page.setViewportSize({ width: widthPx, height: 1000 })
      const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)
      expect(overflow, paper).toBeLessThanOrEqual(0)
      await shot(page, `print-${paper}.png`)
    }
    const pdf = await page.pdf({ format: 'A4', margin: { top: '12mm', bottom: '12mm', left: '12mm', right: '12mm' } })
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
    await page.close()
  })

  it('builds the applicator sheet once the page is idle after its first paint, and at once for a print that comes earlier', async () => {
    const page = await freshPage()
    await signIn(page, demo.advisor)
    await page.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
    await page.goto(`${server.url}/plans/${demo.planId}`)
    await page.getByRole('heading', { name: 'Field rates' }).waitFor()
    const rates = page.locator('section[aria-labelledby="rates-title"] table tbody tr')
    // built without any print, so that printing to PDF (which announces nothing) has it too
    await page.locator('table.sheet').first().waitFor({ state: 'attached' })
    expect(await page.locator('table.sheet tbody tr').count()).toBe(await rates.count())
    expect(await page.getByRole('heading', { name: /application sheet/ }).isVisible()).toBe(false)
    const pdf = await page.pdf({ format: 'Letter' })
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
    await page.close()

    // a page whose idle time never comes: the sheet waits for the print, then is there for its layout
    const busy = await freshPage()
    await busy.addInitScript(() => {
      window.requestIdleCallback = () => 0
    })
    await signIn(busy, demo.advisor)
    await busy.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
    await busy.goto(`${server.url}/plans/${demo.planId}`)
    await busy.getByRole('heading', { name: 'Factors and sources' }).waitFor()
    // window.print() (what Ctrl+P and the print button do) returns with the sheet already in the page
    const printed = await busy.evaluate(() => {
      const before = document.querySelectorAll('table.sheet tbody tr').length
      window.print()
      return { before, after: document.querySelectorAll('table.sheet tbody tr').length }
    })
    const fields = await busy.locator('section[aria-labelledby="rates-title"] table tbody tr').count()
    expect(printed).toEqual({ before: 0, after: fields })
    await busy.close()
  })

  it('lists the cited sources once, and shows an older plan that repeats them in every field the same way', async () => {
    // an older stored plan: the same plan with the full sources in every field instead of their ids
    const sqlite = new Database(demo.dbFile)
    let oldId: number
    try {
      const row = sqlite.prepare('select * from plans where id = ?').get(demo.planId) as Record<string, unknown>
      const result = JSON.parse(String(row.result))
      const byId = new Map(result.sources.map((s: { id: string }) => [s.id, s]))
      const { sources: _listed, ...rest } = result
      const older = { ...rest, fields: result.fields.map(({ source_ids, ...f }: { source_ids: string[] }) => ({ ...f, sources: source_ids.map((id) => byId.get(id)) })) }
      const version = (sqlite.prepare('select max(version) + 1 as v from plans where farm_id = ? and season = ?').get(row.farm_id, row.season) as { v: number }).v
      oldId = Number(
        sqlite
          .prepare('insert into plans (farm_id, season, version, reference_set, reference_set_version, basis, as_of, inputs, result, created_by, created_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)')
          .run(row.farm_id, row.season, version, row.reference_set, row.reference_set_version, row.basis, row.as_of, row.inputs, JSON.stringify(older), row.created_by, row.created_at).lastInsertRowid,
      )
    } finally {
      sqlite.close()
    }
    const page = await freshPage()
    await signIn(page, demo.advisor)
    await page.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
    const seen: Record<string, { listed: string[]; firstField: string[] }> = {}
    for (const [name, id] of [['current', demo.planId], ['older', oldId]] as const) {
      await page.goto(`${server.url}/plans/${id}`)
      const factors = page.getByRole('region', { name: 'Factors and sources' })
      await factors.getByRole('heading', { name: 'Sources cited in this plan' }).waitFor()
      const listed = await factors.locator('h3:text("Sources cited in this plan") + ul > li').allTextContents()
      await factors.locator('summary').first().click()
      await factors.getByRole('heading', { name: 'Sources', exact: true }).first().waitFor()
      const firstField = await factors.locator('details[open] h4 + ul > li').allTextContents()
      seen[name] = { listed, firstField }
      if (name === 'current') await factors.screenshot({ path: join(artifacts, 'plan-sources.png') })
    }
    expect(seen.current!.listed.length).toBeGreaterThan(0)
    expect(new Set(seen.current!.listed).size).toBe(seen.current!.listed.length)
    expect(seen.current!.firstField.length).toBeGreaterThan(0)
    for (const s of seen.current!.firstField) expect(seen.current!.listed).toContain(s)
    expect(seen.older).toEqual(seen.current)
    await page.close()
  })

  it("shows each warning that several fields of a rate table share once above it, and keeps every field's warnings reachable from its row", async () => {
    // a version of the demo plan whose fields carry a warning for all of them, one for two of them and one for a single field
    const sqlite = new Database(demo.dbFile)
    let planId: number
    let fields: { field: string; storage?: string; warnings?: unknown[] }[]
    try {
      const row = sqlite.prepare('select * from plans where id = ?').get(demo.planId) as Record<string, unknown>
      const result = JSON.parse(String(row.result))
      const storage = result.fields[0].storage
      let n = 0
      fields = result.fields.map((f: { field: string; storage?: string; warnings?: unknown[] }) => {
        if (f.storage !== storage) return f
        n++
        const extra: unknown[] = [{ code: 'test_all', message: 'every field of this storage gets this' }]
        if (n <= 2) extra.push({ code: 'test_two', message: 'the first two fields get this' })
        if (n === 1) extra.push('only the first field gets this')
        return { ...f, warnings: [...(f.warnings ?? []), ...extra] }
      })
      expect(n).toBeGreaterThan(2)
      const version = (sqlite.prepare('select max(version) + 1 as v from plans where farm_id = ? and season = ?').get(row.farm_id, row.season) as { v: number }).v
      planId = Number(
        sqlite
          .prepare('insert into plans (farm_id, season, version, reference_set, reference_set_version, basis, as_of, inputs, result, created_by, created_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)')
          .run(row.farm_id, row.season, version, row.reference_set, row.reference_set_version, row.basis, row.as_of, row.inputs, JSON.stringify({ ...result, fields }), row.created_by, row.created_at).lastInsertRowid,
      )
    } finally {
      sqlite.close()
    }
    const page = await freshPage()
    await signIn(page, demo.advisor)
    await page.getByRole('heading', { name: 'Farms', level: 1 }).waitFor()
    await page.goto(`${server.url}/plans/${planId}`)
    await page.getByRole('heading', { name: 'Field rates' }).waitFor()
    const rates = page.locator('section[aria-labelledby="rates-title"]')
    await rates.locator('tbody tr').first().waitFor()
    const tables = await rates.evaluate((section) =>
      [...section.querySelectorAll('table')].map((t) => {
        // the table is described by the title of the list of its shared warnings
        const notes = t.getAttribute('aria-describedby') ? document.getElementById(t.getAttribute('aria-describedby')!)!.parentElement : null
        return {
          notes: notes ? [...notes.querySelectorAll('li')].map((li) => ({ id: li.id, text: li.textContent ?? '' })) : [],
          rows: [...t.tBodies[0]!.rows].map((r) => ({
            field: r.cells[0]!.firstChild!.textContent ?? '',
            own: [...r.cells[0]!.querySelectorAll('li')].map((li) => li.textContent ?? ''),
            links: [...r.cells[0]!.querySelectorAll('a')].map((a) => a.getAttribute('href')!.slice(1)),
          })),
        }
      }),
    )
    const first = tables[0]!
    expect(first.notes.filter((n) => n.text.startsWith('every field of this storage gets this') && n.text.includes('every field of this table'))).toHaveLength(1)
    const firstTwo = fields.filter((f) => f.storage === fields[0]!.storage).slice(0, 2).map((f) => f.field)
    expect(first.notes.filter((n) => n.text.startsWith('the first two fields get this') && n.text.includes(`2 fields: ${firstTwo.join(', ')}`))).toHaveLength(1)
    expect(first.rows[0]!.own).toContain('⚠ only the first field gets this')
    expect(first.rows.flatMap((r) => r.own).filter((w) => w.includes('fields get this') || w.includes('every field'))).toEqual([])
    // every warning of every field: in its own row, in a note of its table that the row links to, or in one for every field
    const forEvery = first.notes.find((n) => n.text.startsWith('every field of this storage gets this'))!
    expect(first.rows.flatMap((r) => r.links).filter((id) => id === forEvery.id)).toEqual([])
    const byField = new Map(tables.flatMap((t) => t.rows.map((r) => [r.field, { row: r, notes: t.notes }] as const)))
    const warningText = (w: unknown) => (typeof w === 'string' ? w : String((w as { message: unknown }).message))
    let checked = 0
    for (const f of fields) {
      const shown = byField.get(f.field)!
      for (const w of (f.warnings ?? []).map(warningText)) {
        const inNotes = shown.notes.filter((n) => (shown.row.links.includes(n.id) || n.text.includes('(every field of this table')) && n.text.startsWith(w))
        expect(shown.row.own.includes(`⚠ ${w}`) || inNotes.length === 1, `${f.field}: ${w}`).toBe(true)
        checked++
      }
    }
    expect(checked).toBeGreaterThan(fields.length)
    await rates.screenshot({ path: join(artifacts, 'plan-rate-warnings.png') })
    await page.close()
  })
})
