import request from 'supertest'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mkdirSync, writeFileSync } from 'node:fs'
import { pagePreloads, readPageModules } from '../../server/static.ts'
import { makeTempDir } from '../helpers/temp-db.ts'
import { makeViewerFixture, type ViewerFixture } from '../helpers/viewer-app.ts'

// The page answers name the API answers the page asks for first, so that a browser fetches them
// while it loads the code (a Link header with rel=preload; the page's own fetch takes the answer).
let fx: ViewerFixture
beforeAll(async () => {
  fx = await makeViewerFixture()
})
afterAll(async () => {
  await fx.close()
})

const preload = (url: string) => `<${url}>; rel=preload; as=fetch; crossorigin=anonymous`

describe('page preloads', () => {
  it('names the session and the plan on a plan page, and the farm on a farm page', async () => {
    const plan = await request(fx.app).get('/plans/12')
    expect(plan.status).toBe(200)
    expect(plan.headers['content-type']).toMatch(/text\/html/)
    expect(plan.headers.link).toBe(`${preload('/api/session')}, ${preload('/api/plans/12')}`)
    const farm = await request(fx.app).get('/farms/QBF')
    expect(farm.headers.link).toBe(`${preload('/api/session')}, ${preload('/api/farms/QBF')}`)
    const farms = await request(fx.app).get('/farms')
    expect(farms.headers.link).toBe(`${preload('/api/session')}, ${preload('/api/farms')}`)
  })

  it('names nothing on the sign-in and share pages, nor for paths that are not pages of the viewer', async () => {
    expect((await request(fx.app).get('/sign-in')).headers.link).toBeUndefined()
    expect((await request(fx.app).get('/s/some-token')).headers.link).toBeUndefined()
    for (const path of ['/plans/0', '/plans/12/x', '/plans/abc', '/farms/a%20b', '/farms/QBF/extra', `/farms/${'x'.repeat(41)}`]) {
      expect(pagePreloads(path), path).toBeNull()
    }
  })

  it("names each page's own code as modulepreload, from the build's manifest, without the entry script", () => {
    const tmp = makeTempDir('pitside-manifest-')
    try {
      mkdirSync(tmp.path('.vite'), { recursive: true })
      // the shape `vite build --manifest` writes
      const manifest = {
        'index.html': { file: 'assets/index-A1.js', isEntry: true, dynamicImports: ['src/routes/plan.tsx', 'src/routes/farm.tsx', 'src/routes/farms.tsx'] },
        '_charts-C3.js': { file: 'assets/charts-C3.js', imports: ['index.html', '_query-problem-Q2.js'] },
        '_query-problem-Q2.js': { file: 'assets/query-problem-Q2.js', imports: ['index.html'] },
        'src/routes/plan.tsx': { file: 'assets/plan-P4.js', isDynamicEntry: true, imports: ['index.html', '_query-problem-Q2.js', '_charts-C3.js'], dynamicImports: ['src/components/what-if.tsx'] },
        'src/components/what-if.tsx': { file: 'assets/what-if-W5.js', isDynamicEntry: true, imports: ['index.html'] },
        'src/routes/farms.tsx': { file: 'assets/farms-F6.js', isDynamicEntry: true, imports: ['index.html', '_query-problem-Q2.js'] },
      }
      writeFileSync(tmp.path('.vite/manifest.json'), JSON.stringify(manifest))
      const modules = readPageModules(tmp.dir)
      expect(modules).toEqual({ plan: ['/assets/plan-P4.js', '/assets/query-problem-Q2.js', '/assets/charts-C3.js'], farms: ['/assets/farms-F6.js', '/assets/query-problem-Q2.js'] })
      expect(pagePreloads('/plans/12', modules)).toBe(
        `${preload('/api/session')}, ${preload('/api/plans/12')}, </assets/plan-P4.js>; rel=modulepreload, </assets/query-problem-Q2.js>; rel=modulepreload, </assets/charts-C3.js>; rel=modulepreload`,
      )
      expect(pagePreloads('/farms/QBF', modules)).toBe(`${preload('/api/session')}, ${preload('/api/farms/QBF')}`)
      expect(pagePreloads('/', modules)).toBe(preload('/api/session'))
      // no manifest, or one that is not JSON: the API answers only
      writeFileSync(tmp.path('.vite/manifest.json'), '{ not json')
      expect(readPageModules(tmp.dir)).toEqual({})
      expect(readPageModules(tmp.path('missing'))).toEqual({})
    } finally {
      tmp.cleanup()
    }
  })
})
