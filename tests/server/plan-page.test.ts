import request from 'supertest'
import { existsSync, readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { PlanView } from '../../shared/api-types.ts'
import { makeViewerFixture, type ViewerFixture } from '../helpers/viewer-app.ts'
import { seedPassword } from '../helpers/viewer-seed.ts'
import { pageDataScript } from '../../src/page-data.ts'

// The plan page comes rendered on the server for a signed-in reader (server/plan-page.ts with the
// built server entry dist/ssr/entry-server.js, beside the built client dist/web); every other
// request for it gets the page the browser renders itself. Needs `npm run build` (npm test builds).
const webDir = fileURLToPath(new URL('../../dist/web/', import.meta.url))
const serverEntry = fileURLToPath(new URL('../../dist/ssr/entry-server.js', import.meta.url))
const dataElement = /<script type="application\/json" id="pitside-page-data">([^<]*)<\/script>/

let fx: ViewerFixture
let index: string
beforeAll(async () => {
  if (!existsSync(serverEntry) || !existsSync(`${webDir}/index.html`)) throw new Error('dist/web or dist/ssr is missing: run `npm run build` first')
  index = readFileSync(`${webDir}/index.html`, 'utf8')
  fx = await makeViewerFixture({ webDir })
})
afterAll(async () => {
  await fx.close()
})

const cookies = new Map<string, string>()
async function signIn(email: string): Promise<string> {
  const known = cookies.get(email)
  if (known) return known
  const r = await request(fx.app).post('/api/session').send({ email, password: seedPassword })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  const cookie = String(r.headers['set-cookie']![0]).split(';')[0]!
  cookies.set(email, cookie)
  return cookie
}

/** Every <script> element of a page: each must load a file or be inert JSON (the CSP allows no inline script). */
function scriptTags(html: string): string[] {
  return [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0])
}

async function apiPlan(id: number, cookie: string): Promise<PlanView> {
  const r = await request(fx.app).get(`/api/plans/${id}`).set('Cookie', cookie)
  expect(r.status).toBe(200)
  return r.body as PlanView
}

/** Inserts a new version of a stored plan with its result changed (as the CLI would, while the viewer runs). */
function insertPlanVersion(fromId: number, change: (result: Record<string, unknown>) => Record<string, unknown>): number {
  const sqlite = fx.writer.sqlite
  const row = sqlite.prepare('select * from plans where id = ?').get(fromId) as Record<string, string | number>
  const version = (sqlite.prepare('select max(version) + 1 as v from plans where farm_id = ? and season = ?').get(row.farm_id, row.season) as { v: number }).v
  const result = change(JSON.parse(String(row.result)) as Record<string, unknown>)
  return Number(
    sqlite
      .prepare('insert into plans (farm_id, season, version, reference_set, reference_set_version, basis, as_of, inputs, result, created_by, created_at) values (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)')
      .run(row.farm_id, row.season, version, row.reference_set, row.reference_set_version, row.basis, row.as_of, row.inputs, JSON.stringify(result), row.created_by, row.created_at).lastInsertRowid,
  )
}

describe('the server-rendered plan page', () => {
  it("gives a signed-in advisor the page with every field's row and the answers it was rendered from", async () => {
    const cookie = await signIn('maren@loamridge.example')
    const id = fx.seed.plans['QBF-v2']!
    const plan = await apiPlan(id, cookie)
    const r = await request(fx.app).get(`/plans/${id}`).set('Cookie', cookie)
    expect(r.status).toBe(200)
    expect(r.headers['content-type']).toMatch(/^text\/html/)
    expect(r.headers['cache-control']).toBe('private, no-store')
    expect(r.headers.vary).toMatch(/\bCookie\b/)
    const html = r.text
    const root = html.slice(html.indexOf('<div id="root">'), html.search(dataElement))
    const codes = plan.result.fields!.map((f) => f.field)
    expect(codes.length).toBeGreaterThan(2)
    for (const code of codes) expect(root).toContain(`<th class="sticky left-0 bg-surface text-left font-semibold" scope="row">${code}<`)
    expect(root.match(/<th class="sticky left-0[^"]*" scope="row">/g)).toHaveLength(codes.length)
    expect(root).toContain(plan.farm.name)
    expect(root).toContain('Maren Castellano') // the signed-in user in the page's header
    expect(root).toMatch(/hydrogen sulfide/i)
    const data = JSON.parse(dataElement.exec(html)![1]!) as { session: { user: { email: string } }; planId: string; plan?: PlanView; versions: { versions: unknown[] } }
    // the plan is in the markup, not again in the data: the browser fetches it to hydrate, after the first paint
    expect(data.plan).toBeUndefined()
    expect(data.planId).toBe(String(id))
    expect(data.session.user.email).toBe('maren@loamridge.example')
    expect(data.versions).toEqual((await request(fx.app).get(`/api/plans/${id}/versions`).set('Cookie', cookie)).body)
    for (const tag of scriptTags(html)) expect(tag, tag).toMatch(/\bsrc="\/assets\/|^<script defer src="\/after-paint\.js" data-entry="\/assets\/[\w.-]+\.js"( data-fetch="\/api\/plans\/\d+")?>|type="application\/json"/)
    // the figures' typeface is named for the browser; its code and the plan it hydrates from are
    // asked for after the first paint (the small answers are in the page), so they are not named
    const links = String(r.headers.link).split(', ')
    expect(links.filter((l) => /\/api\//.test(l))).toEqual([])
    expect(links.filter((l) => /rel=modulepreload/.test(l))).toEqual([])
    const entry = /<script type="module" crossorigin src="(\/assets\/[\w.-]+\.js)"><\/script>/.exec(index)![1]!
    expect(html).toContain(`<script defer src="/after-paint.js" data-entry="${entry}" data-fetch="/api/plans/${id}"></script>`)
    expect(html).not.toContain(`<script type="module" crossorigin src="${entry}">`)
    expect(links.filter((l) => /^<\/assets\/jetbrains-mono-latin-(400|600)-normal-[\w-]+\.woff2>; rel=preload; as=font; type="font\/woff2"; crossorigin=anonymous$/.test(l))).toHaveLength(2)
  })

  it('renders a client their own farm\'s plan the same way', async () => {
    const cookie = await signIn('qbf@farm.example')
    const r = await request(fx.app).get(`/plans/${fx.seed.plans['QBF-v1']}`).set('Cookie', cookie)
    expect(r.text).toMatch(dataElement)
    expect(r.text).toContain('Ilse Varga')
  })

  it("answers the plain page, with none of the plan's data, without a session, after it expired, for another farm's client and for an unknown plan", async () => {
    const id = fx.seed.plans['QBF-v2']!
    const advisor = await signIn('maren@loamridge.example')
    const plan = await apiPlan(id, advisor)
    const otherClient = await signIn('fcd@farm.example')
    const otherFirm = await signIn('ada@brightwater.example')
    const answers = {
      'no cookie': await request(fx.app).get(`/plans/${id}`),
      'a forged cookie': await request(fx.app).get(`/plans/${id}`).set('Cookie', `${advisor.slice(0, -4)}AAAA`),
      "another farm's client": await request(fx.app).get(`/plans/${id}`).set('Cookie', otherClient),
      'an advisor of another firm': await request(fx.app).get(`/plans/${id}`).set('Cookie', otherFirm),
      'an unknown plan': await request(fx.app).get('/plans/999999').set('Cookie', advisor),
    }
    const saved = fx.clock.now
    fx.clock.now = new Date(saved.getTime() + 13 * 3600_000)
    try {
      Object.assign(answers, { 'an expired session': await request(fx.app).get(`/plans/${id}`).set('Cookie', advisor) })
    } finally {
      fx.clock.now = saved
    }
    for (const [who, r] of Object.entries(answers)) {
      expect(r.status, who).toBe(200)
      expect(r.text, who).toBe(index)
      for (const secret of [plan.farm.name, ...plan.result.fields!.map((f) => `>${f.field}<`)]) expect(r.text, who).not.toContain(secret)
      expect(r.headers['cache-control'], who).toBe('no-cache')
      expect(r.headers.vary, who).toMatch(/\bCookie\b/)
    }
  })

  it('escapes what a plan holds, in the markup and in the data, so that no text can close the script element or add markup', async () => {
    const cookie = await signIn('maren@loamridge.example')
    const hostile = '</script><script>alert(1)</script><!-- & \u2028\u2029 "quoted"'
    const id = insertPlanVersion(fx.seed.plans['QBF-v2']!, (result) => ({
      ...result,
      fields: (result.fields as Record<string, unknown>[]).map((f, i) => (i === 0 ? { ...f, name: hostile, warnings: [hostile] } : f)),
    }))
    const plan = await apiPlan(id, cookie)
    const r = await request(fx.app).get(`/plans/${id}`).set('Cookie', cookie)
    const html = r.text
    expect(html).toMatch(dataElement)
    expect(html).not.toContain('<script>alert(1)')
    expect(html).not.toContain('<!-- &')
    expect(html).toContain('&lt;/script&gt;&lt;script&gt;alert(1)&lt;/script&gt;&lt;!-- &amp;')
    const text = dataElement.exec(html)![1]!
    expect(text).not.toMatch(/[<>&\u2028\u2029]/)
    expect(JSON.parse(text)).toMatchObject({ planId: String(id) })
    // the data element's escaping, with the same text in every part it may hold
    const element = pageDataScript({ session: { user: { name: hostile } }, planId: hostile, versions: { versions: [hostile] }, router: {} } as unknown as Parameters<typeof pageDataScript>[0])
    const inner = /^<script type="application\/json" id="pitside-page-data">([^<]*)<\/script>$/.exec(element)![1]!
    expect(inner).not.toMatch(/[<>&\u2028\u2029]/)
    expect(JSON.parse(inner)).toEqual({ session: { user: { name: hostile } }, planId: hostile, versions: { versions: [hostile] }, router: {} })
    expect(plan.result.fields![0]!.name).toBe(hostile)
    for (const tag of scriptTags(html)) expect(tag, tag).toMatch(/\bsrc="\/assets\/|^<script defer src="\/after-paint\.js" data-entry="\/assets\/[\w.-]+\.js"( data-fetch="\/api\/plans\/\d+")?>|type="application\/json"/)
  })

  it('answers the plain page and logs the failure once when the page cannot be rendered', async () => {
    const cookie = await signIn('maren@loamridge.example')
    // a stored result the page cannot show: its fields are not a list
    const id = insertPlanVersion(fx.seed.plans['QBF-v2']!, (result) => ({ ...result, fields: 5 }))
    const before = fx.logs.length
    for (let i = 0; i < 2; i++) {
      const r = await request(fx.app).get(`/plans/${id}`).set('Cookie', cookie)
      expect(r.status).toBe(200)
      expect(r.text).toBe(index)
    }
    const logged = fx.logs.slice(before)
    expect(logged).toHaveLength(1)
    expect(logged[0]).toMatch(/^a plan page is rendered in the browser: the server's rendering failed: /)
    expect(logged[0]).not.toMatch(/\n\s+at /) // no stack
  })

  it('shows a new version in the list of versions of a page rendered before it was added', async () => {
    const cookie = await signIn('maren@loamridge.example')
    const id = fx.seed.plans['QBF-v2']!
    const versions = async () => (JSON.parse(dataElement.exec((await request(fx.app).get(`/plans/${id}`).set('Cookie', cookie)).text)![1]!) as { versions: { versions: { id: number }[] } }).versions.versions.map((v) => v.id)
    const first = await versions()
    const added = insertPlanVersion(id, (result) => result)
    const after = await versions()
    expect(after).toHaveLength(first.length + 1)
    expect(after).toEqual(expect.arrayContaining([added, ...first]))
  })
})

describe('without a built server entry', () => {
  it('answers the plain page to a signed-in reader (the browser renders it)', async () => {
    const plain = await makeViewerFixture()
    try {
      const r0 = await request(plain.app).post('/api/session').send({ email: 'maren@loamridge.example', password: seedPassword })
      const cookie = String(r0.headers['set-cookie']![0]).split(';')[0]!
      const r = await request(plain.app).get(`/plans/${plain.seed.plans['QBF-v2']}`).set('Cookie', cookie)
      expect(r.status).toBe(200)
      expect(r.text).toBe(readFileSync(`${plain.tmp.path('web')}/index.html`, 'utf8'))
      expect(plain.logs).toEqual([])
    } finally {
      await plain.close()
    }
  })
})
