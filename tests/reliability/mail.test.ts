// Share e-mail goes to the named recipient only. OWASP ASVS 5.0 V1.3 / V2.2 (validate and encode
// for the output context: e-mail headers), OWASP "Injection Prevention Cheat Sheet" (mail header
// injection); RFC 5322 §2.2 (a header field is one line; CRLF ends it) and RFC 5321 §3.3 (the
// envelope's RCPT TO decides delivery), checked on a local SMTP sink.
import { readdirSync } from 'node:fs'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { createShare } from '../../cli/actions/share.ts'
import { parseMailEnv, type MailEnv } from '../../cli/actions/share-mail.ts'
import { runCli } from '../helpers/cli.ts'
import { makeSecurityFixture, type SecurityFixture } from './helpers/security-fixture.ts'
import { startSmtpSink, type ReceivedMail } from './helpers/smtp-sink.ts'

let fx: SecurityFixture
let sink: Awaited<ReturnType<typeof startSmtpSink>>
let mail: MailEnv
beforeAll(async () => {
  fx = await makeSecurityFixture()
  sink = await startSmtpSink()
  mail = parseMailEnv({ SMTP_HOST: '127.0.0.1', SMTP_PORT: String(sink.port), SMTP_SECURE: 'false', SMTP_REQUIRE_TLS: 'false', SMTP_FROM: 'Pitside <pitside@loamridge.example>' })
})
afterAll(async () => {
  await sink?.close()
  await fx?.close()
})
beforeEach(() => {
  sink.mails.length = 0
})

const share = (to: string, createdBy = 'Maren Castellano') =>
  createShare({ db: fx.writer.db, keys: fx.keys, mail, publicUrl: 'https://viewer.example', now: () => fx.clock.now }, { planId: fx.planOf.QBF!, to, expiresInMs: 86_400_000, createdBy })

/** The header block of a received message, folded lines joined (RFC 5322 §2.2.3). */
function headers(m: ReceivedMail): string[] {
  const head = m.data.split('\r\n\r\n')[0]!
  return head.replace(/\r\n[ \t]+/g, ' ').split('\r\n')
}

function expectOnlyRecipient(m: ReceivedMail, address: string) {
  expect(m.recipients).toEqual([`<${address}>`])
  const h = headers(m)
  expect(h.filter((l) => /^to:/i.test(l))).toEqual([`To: ${address}`])
  expect(h.filter((l) => /^(cc|bcc|reply-to|x-injected|resent-[a-z]+):/i.test(l))).toEqual([])
}

const injectedAddresses = [
  'victim@farm.example\r\nBcc: evil@attacker.example',
  'victim@farm.example\nBcc: evil@attacker.example',
  'victim@farm.example\rBcc: evil@attacker.example',
  'victim@farm.example%0d%0aBcc:evil@attacker.example',
  'victim@farm.example,evil@attacker.example',
  'victim@farm.example, evil@attacker.example',
  'victim@farm.example;evil@attacker.example',
  'victim@farm.example,attacker.example',
  '"evil@attacker.example" <victim@farm.example>',
  'Victim <victim@farm.example>, evil@attacker.example',
  '<evil@attacker.example>victim@farm.example',
  'victim@farm.example>\r\nRCPT TO:<evil@attacker.example',
  'victim@farm.example\u0000evil@attacker.example',
  'victim@farm.example\u2028Bcc: evil@attacker.example',
  'victim(comment)@farm.example',
  'evil@attacker.example:victim@farm.example',
  'victim@farm.example\tBcc: evil@attacker.example',
  '',
  '@farm.example',
  'victim@',
]

describe('share e-mail', () => {
  it('is delivered to the named recipient only', async () => {
    const created = await share('Client.Person@Farm.Example')
    expect(sink.mails).toHaveLength(1)
    expectOnlyRecipient(sink.mails[0]!, 'client.person@farm.example')
    expect(sink.mails[0]!.data.replace(/=\r\n/g, '')).toContain(created.url.slice(0, 60))
  })

  it(`refuses ${injectedAddresses.length} recipient strings that try to add or swap recipients, and stores no link for them`, async () => {
    const before = (await fx.writer.db.selectFrom('share_links').select('id').execute()).length
    const accepted: string[] = []
    for (const to of injectedAddresses) {
      try {
        await share(to)
        accepted.push(JSON.stringify(to))
      } catch (error) {
        expect((error as { code?: string }).code, JSON.stringify(to)).toBe('usage')
      }
    }
    expect(accepted).toEqual([])
    expect(sink.mails).toEqual([])
    expect((await fx.writer.db.selectFrom('share_links').select('id').execute()).length).toBe(before)
  })

  it('keeps header injection through the farm name and the sharer’s name out of the headers', async () => {
    const injected = 'Quillback\r\nBcc: evil@attacker.example\r\nX-Injected: yes'
    const original = await fx.writer.db.selectFrom('farms').select('name').where('code', '=', 'QBF').executeTakeFirstOrThrow()
    await fx.writer.db.updateTable('farms').set({ name: injected }).where('code', '=', 'QBF').execute()
    try {
      await share('victim@farm.example', 'Maren\r\nBcc: evil2@attacker.example\nCc: evil3@attacker.example')
    } finally {
      await fx.writer.db.updateTable('farms').set({ name: original.name }).where('code', '=', 'QBF').execute()
    }
    expect(sink.mails).toHaveLength(1)
    const m = sink.mails[0]!
    expectOnlyRecipient(m, 'victim@farm.example')
    const subject = headers(m).filter((l) => /^subject:/i.test(l))
    expect(subject).toHaveLength(1)
    expect(headers(m).filter((l) => /^(bcc|cc|x-injected):/i.test(l))).toEqual([])
  })

  it('goes to the named recipient only through the real `pitside share` command too', async () => {
    const db = fx.tmp.path('test.db')
    const env = {
      SMTP_HOST: '127.0.0.1',
      SMTP_PORT: String(sink.port),
      SMTP_SECURE: 'false',
      SMTP_REQUIRE_TLS: 'false',
      PITSIDE_SECRET: Buffer.alloc(32, 5).toString('base64url'),
    }
    const bad = await runCli(['--db', db, 'share', String(fx.planOf.QBF), '--to', 'victim@farm.example,evil@attacker.example'], { env })
    expect(bad.exitCode).toBe(64)
    expect(bad.stderr).toMatch(/--to: expected an e-mail address/)
    const good = await runCli(['--db', db, 'share', String(fx.planOf.QBF), '--to', 'victim@farm.example', '--by', 'Maren\r\nBcc: evil@attacker.example'], { env })
    expect(good.exitCode, String(good.stderr)).toBe(0)
    expect(sink.mails).toHaveLength(1)
    expectOnlyRecipient(sink.mails[0]!, 'victim@farm.example')
    expect(readdirSync(fx.tmp.dir)).not.toContain('outbox')
  })
})
