import { findReferenceSet, listReferenceSets } from '../../shared/reference-sets/registry.ts'
import type { ActionModule } from '../lazy.ts'
import { printJson } from '../output.ts'
import { readReferenceFile } from './calc-input.ts'

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  const own = options.referenceFile ? [await readReferenceFile(options.referenceFile as string)] : []
  if (options.export !== undefined) {
    printJson(findReferenceSet(options.export as string, own))
    return
  }
  const sets = [...own, ...listReferenceSets()]
  if (g.json) {
    printJson(sets.map((s) => ({ name: s.name, version: s.version, title: s.title, n_model: s.nitrogen.model, sources: s.sources })))
    return
  }
  const lines: string[] = []
  sets.forEach((s, i) => {
    lines.push(`${s.name} ${s.version}${i === (options.referenceFile ? 1 : 0) ? ' (default)' : ''}`)
    lines.push(`  ${s.title}`)
    lines.push(`  N model: ${s.nitrogen.model === 'pct_of_total' ? 'share of total N by species, method and incorporation' : 'ammonium-N retention plus organic-N release'}`)
    lines.push('  Sources:')
    for (const src of s.sources) lines.push(`    - ${src.title}. ${src.publisher}${src.year ? `, ${src.year}` : ''} [${src.confidence}]`)
    lines.push('')
  })
  process.stdout.write(lines.join('\n'))
}
