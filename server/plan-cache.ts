import { createHash } from 'node:crypto'
import { gzipSync } from 'node:zlib'
import type { Kysely } from 'kysely'
import type { Database } from '../shared/db/schema.ts'
import { findPlanView, type PlanOwner } from '../shared/db/viewer-queries.ts'

export interface CachedPlan {
  owner: PlanOwner
  /** The PlanView serialized once: plans are never updated, so the text stays right. */
  json: string
  /** The same text gzipped once, for clients that accept it (a 200-field plan shrinks about tenfold). */
  gzip: Buffer
  etag: string
}

/** Serialized plans by id. Plans are immutable (a new run inserts a new version), so entries never go stale. */
export class PlanCache {
  private readonly entries = new Map<number, CachedPlan>()
  private readonly loading = new Map<number, Promise<CachedPlan | undefined>>()
  constructor(
    private readonly db: Kysely<Database>,
    private readonly maxEntries = 2000,
  ) {}

  async get(planId: number): Promise<CachedPlan | undefined> {
    const hit = this.entries.get(planId)
    if (hit) return hit
    let pending = this.loading.get(planId)
    if (!pending) {
      pending = this.load(planId).finally(() => this.loading.delete(planId))
      this.loading.set(planId, pending)
    }
    return pending
  }

  private async load(planId: number): Promise<CachedPlan | undefined> {
    const found = await findPlanView(this.db, planId)
    if (!found) return undefined // not cached: the plan may be written later
    const { owner, ...view } = found
    const json = JSON.stringify(view)
    const entry = { owner, json, gzip: gzipSync(json), etag: `"p${planId}-${createHash('sha1').update(json).digest('base64url').slice(0, 16)}"` }
    if (this.entries.size >= this.maxEntries) this.entries.delete(this.entries.keys().next().value!)
    this.entries.set(planId, entry)
    return entry
  }
}
