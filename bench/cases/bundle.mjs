// bundle_gzip_kb: gzip size of the JavaScript the built index.html loads before the first page can
// run (its module scripts and module preloads), from the production build in dist/web.
import { existsSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { gzipSync } from 'node:zlib'
import { webDir } from '../lib/context.mjs'

/** The script and module-preload URLs of a built index.html, in document order. */
export function firstPageScripts(html) {
  const urls = []
  for (const m of html.matchAll(/<script\b[^>]*\bsrc="([^"]+)"[^>]*>/g)) urls.push(m[1])
  for (const m of html.matchAll(/<link\b[^>]*\brel="modulepreload"[^>]*>/g)) {
    const href = /\bhref="([^"]+)"/.exec(m[0])
    if (href) urls.push(href[1])
  }
  return [...new Set(urls)]
}

export function gzipKb(bytes) {
  return gzipSync(bytes, { level: 9 }).length / 1024
}

export async function benchBundle(ctx) {
  const index = join(webDir, 'index.html')
  if (!existsSync(index)) throw new Error(`${index} is missing: run \`npm run build\` first`)
  const html = readFileSync(index, 'utf8')
  const files = firstPageScripts(html).map((url) => {
    const path = join(webDir, url.replace(/^\//, ''))
    const bytes = readFileSync(path)
    return { url, rawKb: bytes.length / 1024, gzipKb: gzipKb(bytes) }
  })
  const total = files.reduce((a, f) => a + f.gzipKb, 0)
  const raw = files.reduce((a, f) => a + f.rawKb, 0)
  ctx.log(`bundle: ${files.map((f) => `${f.url} ${f.gzipKb.toFixed(1)} kB`).join(', ')}`)
  const one = { median: total, min: total, max: total, spread: 0, n: 1 }
  return {
    keys: { bundle_gzip_kb: Math.round(total * 10) / 10, bundle_raw_kb: Math.round(raw * 10) / 10, bundle_files: files.length },
    table: [{ key: 'bundle_gzip_kb', summary: one, goal: '≤ 180', met: total <= 180, note: `${files.length} file(s) loaded by index.html, gzip -9; ${raw.toFixed(0)} kB before compression` }],
  }
}
