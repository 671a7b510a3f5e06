import { parseRateCase } from '../../shared/rate-case.ts'
import { computeRate, type RateResult } from '../../shared/rate.ts'
import type { ActionModule } from '../lazy.ts'
import { formatTable, printJson } from '../output.ts'
import { inputName, readInputText, readReferenceFile, refuse } from './calc-input.ts'
import { cautions, fmt } from './calc-format.ts'

export const run: ActionModule['run'] = async ({ options, globals: g }) => {
  const file = inputName(options.input as string)
  const own = options.referenceFile ? [await readReferenceFile(options.referenceFile as string)] : []
  const text = await readInputText(options.input as string)
  const { value, problems } = parseRateCase(text, { referenceSets: own })
  if (!value) refuse(file, problems)
  const set = own.find((s) => s.name === value.reference_set)
  const result = computeRate(value, set ? { referenceSet: set } : {})
  if (g.json) printJson(result)
  else process.stdout.write(formatRateSummary(result, file) + '\n')
  if (!g.json && !g.quiet && result.warnings.length > 0) {
    process.stderr.write(`${file}: ${result.warnings.length} warning(s), listed in the summary\n`)
  }
}

/** The readable summary of one result. */
export function formatRateSummary(r: RateResult, file: string): string {
  const us = r.units === 'us'
  const area = us ? 'ac' : 'ha'
  const mass = us ? 'lb' : 'kg'
  const per = { '1000gal': '1000 gal', ton: 'ton', m3: 'm³', t: 't' }[r.analysis.per]
  const lines: string[] = []
  lines.push(`${file}: reference set ${r.reference_set.name} ${r.reference_set.version}, ${us ? 'US' : 'metric'} units`)
  lines.push('')
  const by = r.limited_by === null ? 'no nutrient need' : r.limited_by === 'max_rate' ? 'the rate cap' : r.limited_by === 'fixed_rate' ? 'fixed rate, as given' : `limited by ${label(r.limited_by)}`
  lines.push(`Rate: ${fmt(r.rate, r.rate >= 100 ? 0 : 2)} ${r.rate_unit} (${by})`)
  if (r.total_manure !== null) lines.push(`Total manure: ${fmt(r.total_manure, 0)} ${r.total_manure_unit}`)
  if (r.loads) {
    lines.push(`Loads: ${fmt(r.loads.per_area)} per ${area} of ${fmt(r.loads.capacity)} ${r.total_manure_unit}${r.loads.field === null ? '' : `; ${r.loads.field} for the field`}`)
  }
  lines.push('')
  type Row = { label: string; n: string; p2o5: string; k2o: string }
  const triple = (labelText: string, t: { n: number | null; p2o5: number | null; k2o: number | null }, digits = 1): Row => ({
    label: labelText,
    n: fmt(t.n, digits),
    p2o5: fmt(t.p2o5, digits),
    k2o: fmt(t.k2o, digits),
  })
  const rows: Row[] = [
    triple(`analysis, ${mass}/${per}`, { n: r.analysis.total_n, p2o5: r.analysis.p2o5, k2o: r.analysis.k2o }, 2),
    triple(`available, ${mass}/${per}`, r.available, 2),
    triple(`need, ${mass}/${area}`, r.need),
    triple(`rate by nutrient, ${r.rate_unit}`, r.rates, r.rate >= 100 ? 0 : 2),
    triple(`applied (total), ${mass}/${area}`, r.applied),
    triple(`supplied (available), ${mass}/${area}`, r.supplied),
    triple(`balance (supplied − need), ${mass}/${area}`, r.balance),
    triple(`fertilizer still needed, ${mass}/${area}`, r.supplemental),
  ]
  lines.push(
    formatTable(rows, [
      { header: '', value: (x) => x.label },
      { header: 'N', value: (x) => x.n, align: 'right' },
      { header: 'P2O5', value: (x) => x.p2o5, align: 'right' },
      { header: 'K2O', value: (x) => x.k2o, align: 'right' },
    ]),
  )
  lines.push(`Ammonium-N ${fmt(r.analysis.ammonium_n)} and organic N ${fmt(r.analysis.organic_n)} ${mass}/${per}.`)
  const f = r.factors
  const nParts =
    f.n_model === 'pct_of_total'
      ? 'from the share-of-total-N table'
      : `ammonium-N × ${fmt(f.ammonium_retention, 2)} + organic N × ${fmt(f.organic_n_release, 2)}`
  lines.push(
    `Factors: first-season N ${fmt(f.n_first_year_fraction * 100, 1)} % of total N (${f.n_model === 'override' && f.overridden.includes('n_availability') ? 'given' : nParts}); P2O5 ${fmt(f.p2o5_availability * 100, 0)} %, K2O ${fmt(f.k2o_availability * 100, 0)} % available${f.overridden.length ? `; overridden: ${f.overridden.join(', ')}` : ''}.`,
  )
  if (f.n_need) {
    lines.push(`N need: ${fmt(f.n_need.gross, 0)} less credits legume ${fmt(f.n_need.legume_credit, 0)}, earlier manure ${fmt(f.n_need.manure_credit, 0)}, other ${fmt(f.n_need.other_credit, 0)} ${mass}/${area}.`)
  }
  if (f.soil_test_p_class || f.soil_test_k_class) {
    lines.push(`Soil test: P ${f.soil_test_p_class?.replace('_', ' ') ?? '—'}, K ${f.soil_test_k_class?.replace('_', ' ') ?? '—'}.`)
  }
  lines.push(`Residual N from this application: ${fmt(r.residual_n.year2, 1)} ${mass}/${area} next season, ${fmt(r.residual_n.year3, 1)} the season after.`)
  if (r.p_budget) {
    const b = r.p_budget
    lines.push(
      `P budget: ${fmt(b.supplied_p2o5, 1)} ${mass} P2O5/${area} supplied covers ${b.seasons_covered} of ${b.seasons.length} planned season(s) of removal (${b.seasons.map((s) => `${s.crop} ${fmt(s.removal_p2o5, 0)}`).join(', ')}); ${fmt(b.removal_ratio, 1)}× this season's removal.`,
    )
  }
  if (r.warnings.length) {
    lines.push('', 'Warnings:')
    for (const w of r.warnings) lines.push(`  - ${w.message}`)
  }
  lines.push('', 'Sources:')
  for (const s of r.sources) lines.push(`  - ${s.title}. ${s.publisher}${s.year ? `, ${s.year}` : ''}${s.where ? `, ${s.where}` : ''} [${s.confidence}]`)
  lines.push('')
  for (const c of cautions) lines.push(c)
  return lines.join('\n')
}

function label(k: 'n' | 'p2o5' | 'k2o'): string {
  return k === 'n' ? 'N' : k === 'p2o5' ? 'P2O5' : 'K2O'
}

