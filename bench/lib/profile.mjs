// Reading V8 CPU profiles (node --cpu-prof): where the time goes, by function and by file.
import { readdirSync, readFileSync } from 'node:fs'
import { join, relative } from 'node:path'
import { repoRoot } from './context.mjs'

function where(url) {
  if (!url) return '(native)'
  const path = url.startsWith('file://') ? new URL(url).pathname : url
  const rel = relative(repoRoot, path)
  return rel.startsWith('..') ? path : rel
}

/**
 * Self time per function and per file of one .cpuprofile, biggest first, in milliseconds and as a
 * share of the sampled time. `top` limits each list.
 */
export function summarizeCpuProfile(file, top = 15) {
  const profile = JSON.parse(readFileSync(file, 'utf8'))
  const byId = new Map(profile.nodes.map((n) => [n.id, n]))
  const hits = new Map()
  const dts = profile.timeDeltas
  for (let i = 0; i < profile.samples.length; i++) {
    const id = profile.samples[i]
    hits.set(id, (hits.get(id) ?? 0) + (dts[i] ?? 0))
  }
  const totalUs = [...hits.values()].reduce((a, b) => a + b, 0)
  const fns = new Map()
  const files = new Map()
  for (const [id, us] of hits) {
    const n = byId.get(id)
    const cf = n.callFrame
    const name = cf.functionName || '(anonymous)'
    const loc = where(cf.url)
    const key = `${name} ${loc}${cf.url ? `:${cf.lineNumber + 1}` : ''}`
    fns.set(key, (fns.get(key) ?? 0) + us)
    const fileKey = cf.url ? loc : name
    files.set(fileKey, (files.get(fileKey) ?? 0) + us)
  }
  const list = (m) =>
    [...m.entries()]
      .sort((a, b) => b[1] - a[1])
      .slice(0, top)
      .map(([what, us]) => ({ what, ms: Math.round(us / 100) / 10, share: Math.round((us / totalUs) * 1000) / 10 }))
  return { totalMs: Math.round(totalUs / 1000), functions: list(fns), files: list(files) }
}

/** The newest .cpuprofile in a directory. */
export function newestProfile(dir) {
  const files = readdirSync(dir).filter((f) => f.endsWith('.cpuprofile')).sort()
  return files.length ? join(dir, files[files.length - 1]) : null
}

export function formatProfile(title, summary) {
  const lines = [`${title}: ${summary.totalMs} ms sampled`]
  lines.push('  self time by file:')
  for (const f of summary.files.slice(0, 10)) lines.push(`    ${String(f.share).padStart(5)} %  ${String(f.ms).padStart(8)} ms  ${f.what}`)
  lines.push('  self time by function:')
  for (const f of summary.functions) lines.push(`    ${String(f.share).padStart(5)} %  ${String(f.ms).padStart(8)} ms  ${f.what}`)
  return lines.join('\n')
}
