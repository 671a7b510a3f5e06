import type { Kysely } from 'kysely'
import { AppError } from '../errors.ts'
import type { Database } from './schema.ts'

/** A share link as stored (the token itself is never stored: it can be re-made from these claims and the key). */
export interface ShareLink {
  id: string
  planId: number
  farmCode: string
  season: number
  version: number
  recipientEmail: string
  createdBy: string
  createdAt: string
  expiresAt: string
  revokedAt: string | null
}

function toShareLink(row: {
  id: string
  plan_id: number
  farm_code: string
  season: number
  version: number
  recipient_email: string
  created_by: string
  created_at: string
  expires_at: string
  revoked_at: string | null
}): ShareLink {
  return {
    id: row.id,
    planId: row.plan_id,
    farmCode: row.farm_code,
    season: row.season,
    version: row.version,
    recipientEmail: row.recipient_email,
    createdBy: row.created_by,
    createdAt: row.created_at,
    expiresAt: row.expires_at,
    revokedAt: row.revoked_at,
  }
}

function selectLinks(db: Kysely<Database>) {
  return db
    .selectFrom('share_links')
    .innerJoin('plans', 'plans.id', 'share_links.plan_id')
    .innerJoin('farms', 'farms.id', 'plans.farm_id')
    .selectAll('share_links')
    .select(['farms.code as farm_code', 'plans.season', 'plans.version'])
}

export async function insertShareLink(
  db: Kysely<Database>,
  link: { id: string; planId: number; recipientEmail: string; createdBy: string; expiresAt: Date },
): Promise<ShareLink> {
  await db
    .insertInto('share_links')
    .values({
      id: link.id,
      plan_id: link.planId,
      recipient_email: link.recipientEmail,
      created_by: link.createdBy,
      expires_at: link.expiresAt.toISOString(),
    })
    .execute()
  return (await findShareLink(db, link.id))!
}

export async function findShareLink(db: Kysely<Database>, id: string): Promise<ShareLink | undefined> {
  const row = await selectLinks(db).where('share_links.id', '=', id).executeTakeFirst()
  return row && toShareLink(row)
}

export async function listShareLinks(db: Kysely<Database>, filter: { planId?: number } = {}): Promise<ShareLink[]> {
  let q = selectLinks(db)
  if (filter.planId !== undefined) q = q.where('share_links.plan_id', '=', filter.planId)
  const rows = await q.orderBy('share_links.created_at', 'desc').orderBy('share_links.id').execute()
  return rows.map(toShareLink)
}

/** Revokes a share link (idempotent: a second revoke keeps the first time). Throws `not_found`. */
export async function revokeShareLink(db: Kysely<Database>, id: string, now = new Date()): Promise<ShareLink> {
  const link = await findShareLink(db, id)
  if (!link) throw new AppError('not_found', `no share link ${id} (see \`pitside share list\`)`)
  if (!link.revokedAt) {
    await db.updateTable('share_links').set({ revoked_at: now.toISOString() }).where('id', '=', id).execute()
  }
  return (await findShareLink(db, id))!
}
