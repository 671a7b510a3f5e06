import { Router } from 'express'
import type { Kysely } from 'kysely'
import type { FarmsResponse } from '../../shared/api-types.ts'
import type { Database } from '../../shared/db/schema.ts'
import { findFarmDetail, findVisibleFarms } from '../../shared/db/viewer-queries.ts'
import { AppError } from '../../shared/errors.ts'
import type { Sessions } from '../auth.ts'

export function farmRoutes({ db, sessions }: { db: Kysely<Database>; sessions: Sessions }): Router {
  const router = Router()

  router.get('/', async (req, res) => {
    const { viewer } = await sessions.require(req)
    const body: FarmsResponse = { farms: await findVisibleFarms(db, viewer) }
    res.set('Cache-Control', 'private, no-cache').json(body)
  })

  router.get('/:code', async (req, res) => {
    const { viewer } = await sessions.require(req)
    const code = req.params.code
    // a farm the viewer may not see answers exactly like one that does not exist
    const farm = code.length <= 64 ? await findFarmDetail(db, viewer, code) : undefined
    if (!farm) throw new AppError('not_found', `no farm ${code.slice(0, 64)}`)
    res.set('Cache-Control', 'private, no-cache').json(farm)
  })

  return router
}
