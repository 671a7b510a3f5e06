import { randomUUID } from 'node:crypto'
import type { Kysely } from 'kysely'
import { z } from 'zod'
import { openWriter } from '../../shared/db/open-database.ts'
import type { Database } from '../../shared/db/schema.ts'
import { loadSigningKeys, type SigningKeys } from '../../shared/db/share-secret.ts'
import { insertShareLink, listShareLinks, revokeShareLink, type ShareLink } from '../../shared/db/share-links.ts'
import { signShareToken } from '../../shared/db/share-tokens.ts'
import { normalizeEmail } from '../../shared/db/users.ts'
import { AppError } from '../../shared/errors.ts'
import type { ActionModule } from '../lazy.ts'
import { note, printJson, printTable } from '../output.ts'
import { parseMailEnv, sendMail, type MailEnv } from './share-mail.ts'

const publicUrlSchema = z
  .string()
  .url()
  .refine((u) => /^https?:\/\//.test(u), 'expected an http:// or https:// address')
  .default('http://127.0.0.1:8080')

/** The viewer's base URL from PITSIDE_PUBLIC_URL, without a trailing slash. Throws `config`. */
export function parsePublicUrl(value: string | undefined): string {
  const parsed = publicUrlSchema.safeParse(value === '' ? undefined : value)
  if (!parsed.success) throw new AppError('config', `PITSIDE_PUBLIC_URL: ${parsed.error.issues[0]!.message}, found "${value}"`)
  return parsed.data.replace(/\/+$/, '')
}

/** The link a recipient opens: the viewer's base URL, then `/s/`, then the token as the last path segment. */
export function shareUrl(publicUrl: string, token: string): string {
  return `${publicUrl}/s/${token}`
}

const durationUnitsMs: Record<string, number> = { m: 60_000, h: 3_600_000, d: 86_400_000, w: 7 * 86_400_000 }
const maxDurationMs = 365 * 86_400_000

/** Parses `90m`, `12h`, `30d`, `8w` to milliseconds; throws `usage` outside 1 minute … 365 days. */
export function parseDurationMs(text: string): number {
  const m = /^\s*(\d+)\s*([mhdw])\s*$/.exec(text)
  if (!m) throw new AppError('usage', `--expires: expected a number and a unit (m, h, d, w) such as 30d, found "${text}"`)
  const ms = Number(m[1]) * durationUnitsMs[m[2]!]!
  if (ms < 60_000 || ms > maxDurationMs) throw new AppError('usage', `--expires: expected between 1m and 365d, found "${text}"`)
  return ms
}

export interface ShareDeps {
  db: Kysely<Database>
  keys: SigningKeys
  mail: MailEnv
  publicUrl: string
  now?: () => Date
}

export interface CreatedShare {
  link: ShareLink
  url: string
  outboxFile: string | null
}

// One plain address: no characters that address lists, comments, display names or headers give meaning to
// (a comma or parentheses would make the mailer read a list or a name instead of what was stored).
const emailPattern = /^[^\s@,;:<>()[\]"\\\x00-\x1f\x7f]+@[^\s@,;:<>()[\]"\\\x00-\x1f\x7f]+\.[^\s@,;:<>()[\]"\\\x00-\x1f\x7f]+$/

/** Creates a share link to one plan and e-mails it. The link row is removed again if the mail cannot be sent. */
export async function createShare(
  deps: ShareDeps,
  /** `createdBy` names who shares (stored and shown in the e-mail); default: the farm's organization. */
  input: { planId: number; to: string; expiresInMs: number; createdBy?: string },
): Promise<CreatedShare> {
  const now = deps.now?.() ?? new Date()
  const to = normalizeEmail(input.to)
  if (!emailPattern.test(to)) throw new AppError('usage', `--to: expected an e-mail address, found "${input.to}"`)
  const plan = await deps.db
    .selectFrom('plans')
    .innerJoin('farms', 'farms.id', 'plans.farm_id')
    .innerJoin('organizations', 'organizations.id', 'farms.organization_id')
    .select(['plans.id', 'plans.season', 'plans.version', 'farms.code', 'farms.name', 'organizations.name as organization_name'])
    .where('plans.id', '=', input.planId)
    .executeTakeFirst()
  if (!plan) throw new AppError('not_found', `no plan ${input.planId} (see \`pitside plans list\`)`)

  const createdBy = input.createdBy?.trim() || plan.organization_name
  const id = randomUUID()
  const expiresAt = new Date(Math.floor((now.getTime() + input.expiresInMs) / 1000) * 1000)
  const token = await signShareToken(deps.keys.share, { id, planId: plan.id, expiresAt }, now)
  const url = shareUrl(deps.publicUrl, token)
  const link = await insertShareLink(deps.db, { id, planId: plan.id, recipientEmail: to, createdBy, expiresAt })
  try {
    const sent = await sendMail(deps.mail, { id, to, ...composeShareMail({ url, expiresAt, farmName: plan.name, season: plan.season, version: plan.version, from: createdBy }) }, now)
    return { link, url, outboxFile: sent.outboxFile }
  } catch (error) {
    await deps.db.deleteFrom('share_links').where('id', '=', id).execute()
    throw error
  }
}

function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)
}

const cautionLines = [
  'Manure gases, above all hydrogen sulfide, can kill within minutes around storages and during agitation. Never enter a manure storage; keep people and animals away while agitating and pumping.',
  'Keep the required setbacks from wells, tile inlets, sinkholes and surface water.',
  'Follow the local rules for frozen or snow-covered ground.',
  'This plan is advisory: local regulations and certified practice take precedence.',
]

export function composeShareMail(p: { url: string; expiresAt: Date; farmName: string; season: number; version: number; from: string }) {
  const until = p.expiresAt.toISOString().slice(0, 10)
  const subject = `Manure application plan ${p.season} for ${p.farmName}`
  const text = [
    `${p.from} has shared the ${p.season} manure application plan (version ${p.version}) for ${p.farmName} with you.`,
    '',
    'Open it in a browser (no account needed; the link works until ' + until + '):',
    p.url,
    '',
    'Before spreading:',
    ...cautionLines.map((l) => `- ${l}`),
    '',
    'Do not forward this message: anyone holding the link can read the plan.',
  ].join('\n')
  const html = `<!doctype html><html><body style="font-family: sans-serif; line-height: 1.5; color: #14181f">
<p>${escapeHtml(p.from)} has shared the ${p.season} manure application plan (version ${p.version}) for <strong>${escapeHtml(p.farmName)}</strong> with you.</p>
<p><a href="${escapeHtml(p.url)}">Open the plan</a> (no account needed; the link works until ${until}).</p>
<p><strong>Before spreading:</strong></p>
<ul>${cautionLines.map((l) => `<li>${escapeHtml(l)}</li>`).join('')}</ul>
<p>Do not forward this message: anyone holding the link can read the plan.</p>
</body></html>`
  return { subject, text, html }
}

function linkState(link: ShareLink, now: Date): 'active' | 'expired' | 'revoked' {
  if (link.revokedAt) return 'revoked'
  return new Date(link.expiresAt) <= now ? 'expired' : 'active'
}

function linkJson(link: ShareLink, now: Date) {
  return {
    id: link.id,
    plan_id: link.planId,
    farm: link.farmCode,
    season: link.season,
    version: link.version,
    to: link.recipientEmail,
    created_by: link.createdBy,
    created_at: link.createdAt,
    expires_at: link.expiresAt,
    revoked_at: link.revokedAt,
    state: linkState(link, now),
  }
}

function parsePlanId(value: unknown, what: string): number {
  const id = Number(value)
  if (!Number.isSafeInteger(id) || id <= 0) throw new AppError('usage', `${what}: expected a plan id (a positive whole number), found "${String(value)}"`)
  return id
}

export const runCreate: ActionModule['run'] = async ({ args, options, globals: g }) => {
  if (args[0] === undefined) throw new AppError('usage', 'give the plan to share: `pitside share <plan-id> --to <email>`')
  const planId = parsePlanId(args[0], 'plan-id')
  if (!options.to) throw new AppError('usage', 'give the recipient with --to <email>')
  const expiresInMs = parseDurationMs(options.expires)
  const mail = parseMailEnv(process.env)
  const publicUrl = parsePublicUrl(process.env.PITSIDE_PUBLIC_URL)
  const keys = loadSigningKeys({ envSecret: process.env.PITSIDE_SECRET, dbFile: g.db })
  const { db, close } = openWriter(g.db)
  try {
    const created = await createShare({ db, keys, mail, publicUrl }, {
      planId,
      to: options.to,
      expiresInMs,
      createdBy: options.by ?? process.env.PITSIDE_USER,
    })
    if (g.json) {
      printJson({ id: created.link.id, url: created.url, expires_at: created.link.expiresAt, outbox_file: created.outboxFile })
    } else {
      process.stdout.write(created.url + '\n')
      note(g, created.outboxFile
        ? `share link ${created.link.id} for plan ${planId} (until ${created.link.expiresAt}); no SMTP_HOST set, so the e-mail to ${created.link.recipientEmail} was written to ${created.outboxFile}`
        : `share link ${created.link.id} for plan ${planId} (until ${created.link.expiresAt}) e-mailed to ${created.link.recipientEmail}`)
    }
  } finally {
    await close()
  }
}

export const runList: ActionModule['run'] = async ({ options, globals: g }) => {
  const planId = options.plan === undefined ? undefined : parsePlanId(options.plan, '--plan')
  const { db, close } = openWriter(g.db)
  try {
    const now = new Date()
    const links = await listShareLinks(db, { planId })
    if (g.json) return printJson({ links: links.map((l) => linkJson(l, now)) })
    if (links.length === 0) return note(g, 'no share links yet; create one with `pitside share <plan-id> --to <email>`')
    printTable(links, [
      { header: 'id', value: (l) => l.id },
      { header: 'plan', value: (l) => l.planId, align: 'right' },
      { header: 'farm', value: (l) => l.farmCode },
      { header: 'season', value: (l) => `${l.season} v${l.version}` },
      { header: 'to', value: (l) => l.recipientEmail },
      { header: 'expires (UTC)', value: (l) => l.expiresAt.slice(0, 16).replace('T', ' ') },
      { header: 'state', value: (l) => linkState(l, now) },
    ])
  } finally {
    await close()
  }
}

export const runRevoke: ActionModule['run'] = async ({ args, globals: g }) => {
  const { db, close } = openWriter(g.db)
  try {
    const link = await revokeShareLink(db, String(args[0]))
    if (g.json) printJson(linkJson(link, new Date()))
    else note(g, `revoked share link ${link.id} (plan ${link.planId}, to ${link.recipientEmail}); it no longer opens the plan`)
  } finally {
    await close()
  }
}
