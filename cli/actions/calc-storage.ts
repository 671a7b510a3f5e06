import { computeStorageVolume, type StorageAmount, type StorageGeometry } from '../../shared/storage.ts'
import type { ActionModule } from '../lazy.ts'
import { formatTable, printJson } from '../output.ts'
import { cautions, fmt } from './calc-format.ts'
import { inputName, parseJsonInput, readInputText, storageFileSchema } from './calc-input.ts'

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  const file = inputName(options.input as string)
  const s = parseJsonInput(await readInputText(options.input as string), file, storageFileSchema)
  const geometry: StorageGeometry =
    s.shape === 'rectangular'
      ? { shape: 'rectangular', length: s.length, width: s.width, depth: s.depth }
      : s.shape === 'circular'
        ? { shape: 'circular', diameter: s.diameter, depth: s.depth }
        : { shape: 'basin', topLength: s.top_length, topWidth: s.top_width, depth: s.depth, sideSlope: s.side_slope, ...(s.end_slope !== undefined && { endSlope: s.end_slope }) }
  const v = computeStorageVolume({
    geometry,
    units: s.units,
    ...(s.freeboard !== undefined && { freeboard: s.freeboard }),
    ...(s.manure_depth !== undefined && { manureDepth: s.manure_depth }),
    ...(s.bulk_density !== undefined && { bulkDensity: s.bulk_density }),
  })
  const out = (a: StorageAmount | null) =>
    a && { ft3: round(a.ft3), gal: round(a.gal), m3: round(a.m3, 3), litres: round(a.litres), mass: a.mass === null ? null : round(a.mass) }
  if (g.json) {
    printJson({ shape: s.shape, units: s.units, total: out(v.total), usable: out(v.usable), contents: out(v.contents), mass_unit: v.massUnit, warnings: v.warnings })
    return
  }
  const rows = [
    { label: 'total (to the top)', a: v.total },
    { label: `usable (below ${fmt(s.freeboard ?? 0)} ${s.units === 'us' ? 'ft' : 'm'} freeboard)`, a: v.usable },
    ...(v.contents ? [{ label: `contents at ${fmt(s.manure_depth)} ${s.units === 'us' ? 'ft' : 'm'}`, a: v.contents }] : []),
  ]
  const lines = [`${file}: ${s.shape} storage`, '']
  lines.push(
    formatTable(rows, [
      { header: '', value: (r) => r.label },
      ...(s.units === 'us'
        ? [
            { header: 'ft³', value: (r: (typeof rows)[number]) => fmt(r.a.ft3, 0), align: 'right' as const },
            { header: 'US gal', value: (r: (typeof rows)[number]) => fmt(r.a.gal, 0), align: 'right' as const },
          ]
        : [
            { header: 'm³', value: (r: (typeof rows)[number]) => fmt(r.a.m3, 1), align: 'right' as const },
            { header: 'L', value: (r: (typeof rows)[number]) => fmt(r.a.litres, 0), align: 'right' as const },
          ]),
      ...(v.massUnit ? [{ header: v.massUnit === 'ton' ? 'tons' : 't', value: (r: (typeof rows)[number]) => fmt(r.a.mass, 1), align: 'right' as const }] : []),
    ]),
  )
  for (const w of v.warnings) lines.push(`Warning: ${w}`)
  lines.push('', cautions[1]!)
  process.stdout.write(lines.join('\n') + '\n')
}

function round(x: number, digits = 1) {
  const f = 10 ** digits
  return Math.round(x * f) / f
}
