import { mkdirSync, writeFileSync } from 'node:fs'
import { join, resolve } from 'node:path'
import nodemailer from 'nodemailer'
import { z } from 'zod'
import { AppError } from '../../shared/errors.ts'

/** Mail settings, read once from the environment. Without SMTP_HOST, messages go to the outbox folder. */
export const mailEnvSchema = z.object({
  SMTP_HOST: z.string().min(1).optional(),
  SMTP_PORT: z.coerce.number().int().min(1).max(65535).optional(),
  SMTP_SECURE: z.enum(['true', 'false']).optional(),
  SMTP_REQUIRE_TLS: z.enum(['true', 'false']).optional(),
  SMTP_USER: z.string().min(1).optional(),
  SMTP_PASSWORD: z.string().optional(),
  SMTP_FROM: z.string().min(3).default('Pitside <pitside@localhost>'),
  PITSIDE_OUTBOX: z.string().min(1).default('./outbox'),
})
export type MailEnv = z.infer<typeof mailEnvSchema>

export function parseMailEnv(env: NodeJS.ProcessEnv): MailEnv {
  const parsed = mailEnvSchema.safeParse(emptyToUndefined(env))
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!
    throw new AppError('config', `${issue.path.join('.')}: ${issue.message}`)
  }
  return parsed.data
}

function emptyToUndefined(env: NodeJS.ProcessEnv): Record<string, string | undefined> {
  return Object.fromEntries(Object.entries(env).map(([k, v]) => [k, v === '' ? undefined : v]))
}

export interface OutgoingMail {
  to: string
  subject: string
  text: string
  html: string
  /** Used in the outbox file name. */
  id: string
}

export interface SentMail {
  /** The .eml file written by the local outbox; null when a real SMTP service took the message. */
  outboxFile: string | null
  transport: 'smtp' | 'outbox'
}

function compactTimestamp(now: Date): string {
  return now.toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z')
}

/** Sends one message through SMTP, or writes it as `<timestamp>-<id>.eml` into the outbox. Throws `io` AppErrors. */
export async function sendMail(env: MailEnv, mail: OutgoingMail, now = new Date()): Promise<SentMail> {
  const message = { from: env.SMTP_FROM, to: mail.to, subject: mail.subject, text: mail.text, html: mail.html }
  if (env.SMTP_HOST) {
    const port = env.SMTP_PORT ?? (env.SMTP_SECURE === 'true' ? 465 : 587)
    const transport = nodemailer.createTransport({
      host: env.SMTP_HOST,
      port,
      secure: env.SMTP_SECURE ? env.SMTP_SECURE === 'true' : port === 465,
      requireTLS: env.SMTP_REQUIRE_TLS !== 'false',
      auth: env.SMTP_USER ? { user: env.SMTP_USER, pass: env.SMTP_PASSWORD ?? '' } : undefined,
    })
    try {
      await transport.sendMail(message)
    } catch (error) {
      throw new AppError('io', `cannot send the e-mail through ${env.SMTP_HOST}:${port}: ${(error as Error).message}`)
    } finally {
      transport.close()
    }
    return { outboxFile: null, transport: 'smtp' }
  }
  const transport = nodemailer.createTransport({ streamTransport: true, buffer: true, newline: 'unix' })
  const info = await transport.sendMail(message)
  const dir = resolve(env.PITSIDE_OUTBOX)
  const file = join(dir, `${compactTimestamp(now)}-${mail.id}.eml`)
  try {
    mkdirSync(dir, { recursive: true })
    writeFileSync(file, info.message as Buffer, { mode: 0o600, flag: 'wx' })
  } catch (error) {
    throw new AppError('io', `cannot write the e-mail to the outbox ${dir}: ${(error as Error).message}`)
  }
  return { outboxFile: file, transport: 'outbox' }
}
