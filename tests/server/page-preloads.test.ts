import request from 'supertest'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { pagePreloads } from '../../server/static.ts'
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
})
