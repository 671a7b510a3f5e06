import { Router } from 'express'
import type { Kysely } from 'kysely'
import type { PlanVersionsResponse } from '../../shared/api-types.ts'
import type { Database } from '../../shared/db/schema.ts'
import { canSeeFarm, findPlanVersions, type Viewer } from '../../shared/db/viewer-queries.ts'
import { AppError } from '../../shared/errors.ts'
import type { Sessions } from '../auth.ts'
import type { CachedPlan, PlanCache } from '../plan-cache.ts'

/** True when the client takes gzip (and has not refused it with q=0). */
export function acceptsGzip(header: string | undefined): boolean {
  if (!header) return false
  return header.split(',').some((part) => {
    const [coding, ...params] = part.trim().split(';')
    if (coding!.trim().toLowerCase() !== 'gzip') return false
    const q = params.map((p) => p.trim()).find((p) => p.startsWith('q='))
    return q === undefined || Number(q.slice(2)) > 0
  })
}

/** A plan id from the path; anything else is simply a plan that does not exist. */
export function parsePlanId(text: string): number | null {
  return /^[1-9]\d{0,11}$/.test(text) ? Number(text) : null
}

/**
 * The plan with this id from the path, when this viewer may read it: the one rule for a plan's API
 * answers and its server-rendered page (server/plan-page.ts). Throws `not_found` otherwise.
 */
export async function findVisiblePlan(plans: PlanCache, id: string, viewer: Viewer): Promise<CachedPlan> {
  const planId = parsePlanId(id)
  const plan = planId === null ? undefined : await plans.get(planId)
  // another farm's plan answers exactly like a missing one
  if (!plan || !canSeeFarm(viewer, { id: plan.owner.farmId, organizationId: plan.owner.organizationId })) {
    throw new AppError('not_found', `no plan ${id.slice(0, 24)}`)
  }
  return plan
}

export function planRoutes({ db, sessions, plans }: { db: Kysely<Database>; sessions: Sessions; plans: PlanCache }): Router {
  const router = Router()
  const visiblePlan = (id: string, viewer: Viewer) => findVisiblePlan(plans, id, viewer)

  router.get('/:id', async (req, res) => {
    const { viewer } = await sessions.require(req)
    const plan = await visiblePlan(req.params.id, viewer)
    res.set('Cache-Control', 'private, no-cache').set('ETag', plan.etag).set('Vary', 'Accept-Encoding, Cookie')
    if (req.headers['if-none-match'] === plan.etag) {
      res.status(304).end()
      return
    }
    res.type('application/json')
    if (acceptsGzip(req.headers['accept-encoding'])) res.set('Content-Encoding', 'gzip').send(plan.gzip)
    else res.send(plan.json)
  })

  router.get('/:id/versions', async (req, res) => {
    const { viewer } = await sessions.require(req)
    const plan = await visiblePlan(req.params.id, viewer)
    const body: PlanVersionsResponse = { versions: await findPlanVersions(db, plan.owner) }
    res.set('Cache-Control', 'private, no-cache').json(body)
  })

  return router
}
