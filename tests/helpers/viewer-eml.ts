import { readFileSync } from 'node:fs'

/**
 * The text of an .eml file with its transfer encoding undone (quoted-printable soft line breaks and
 * `=XX` escapes, or base64 parts), enough to find the link a recipient would click.
 */
export function readEmlText(file: string): string {
  const raw = readFileSync(file, 'utf8')
  const parts = raw.split(/\r?\n--[^\r\n]+\r?\n/)
  return parts
    .map((part) => {
      const [head = '', ...rest] = part.split(/\r?\n\r?\n/)
      const body = rest.join('\n\n')
      if (/content-transfer-encoding:\s*quoted-printable/i.test(head)) {
        const unfolded = body.replace(/=\r?\n/g, '')
        return Buffer.from(unfolded.replace(/=([0-9A-F]{2})/gi, (_, h: string) => String.fromCharCode(parseInt(h, 16))), 'latin1').toString('utf8')
      }
      if (/content-transfer-encoding:\s*base64/i.test(head)) return Buffer.from(body.replace(/\s+/g, ''), 'base64').toString('utf8')
      return part
    })
    .join('\n')
}

/** The first share link (`…/s/<token>`) in an .eml file. */
export function findShareUrl(file: string): string | null {
  return /https?:\/\/[^\s"<>]+\/s\/[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+\.[A-Za-z0-9_-]+/.exec(readEmlText(file))?.[0] ?? null
}
