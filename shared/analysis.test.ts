import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import {
  fromMetricAnalysis,
  normalizeAnalysis,
  toMetricAnalysis,
  toReportedUnits,
  type AnalysisInput,
} from './analysis.ts'
import { k2oToK, kToK2o, p2o5ToP, pToP2o5 } from './units.ts'

const liquid = (over: Partial<AnalysisInput>): AnalysisInput => ({ form: 'liquid', units: 'lb_per_1000gal', basis: 'as_is', totalN: 40, ...over })
const solid = (over: Partial<AnalysisInput>): AnalysisInput => ({ form: 'solid', units: 'lb_per_ton', basis: 'as_is', totalN: 20, ...over })

describe('normalizeAnalysis', () => {
  const conversions = [
    // LPELC, Common Manure Test Results Conversions: % as-is × 20 = lb/ton
    { input: solid({ units: 'pct', totalN: 0.5 }), totalN: 10, source: 'LPELC conversions: % × 20 = lb/ton' },
    // LPELC: ppm ÷ 500 = lb/ton (arithmetic on 2000 lb/ton)
    { input: solid({ units: 'ppm', totalN: 5000 }), totalN: 10, source: 'LPELC conversions: ppm ÷ 500 = lb/ton' },
    // kg/t is a mass fraction ×1000; lb/ton is ×2000 (arithmetic)
    { input: solid({ units: 'kg_per_t', totalN: 5 }), totalN: 10, source: 'arithmetic: 1 kg/t = 2 lb/ton' },
    // LPELC: % × 8.34 lb/gal × 10 = lb/1000 gal for water-like liquid manure
    { input: liquid({ units: 'pct', totalN: 0.5 }), totalN: 41.7, source: 'LPELC conversions: % × 83.4 = lb/1000 gal' },
    // LPELC: the density can be measured; 8.5 lb/gal gives % × 85
    { input: liquid({ units: 'pct', totalN: 0.5, densityLbPerGal: 8.5 }), totalN: 42.5, source: 'LPELC conversions: % × density × 10' },
    // sources.md: mg/L × 0.0083454 = lb/1000 gal
    { input: liquid({ units: 'mg_per_l', totalN: 5000 }), totalN: 41.727, source: 'arithmetic: 8.3454 lb water per US gal' },
    // 1 g/L = 1 kg/m³ = 8.3454 lb/1000 gal
    { input: liquid({ units: 'g_per_l', totalN: 5 }), totalN: 41.727, source: 'arithmetic: 1 kg/m³ = 8.3454 lb/1000 gal' },
    { input: liquid({ units: 'kg_per_m3', totalN: 5 }), totalN: 41.727, source: 'arithmetic: 1 kg/m³ = 8.3454 lb/1000 gal' },
    // ppm is a mass fraction: 5000 ppm × 8.34 lb/gal × 1000 gal ÷ 1e6 = 41.7
    { input: liquid({ units: 'ppm', totalN: 5000 }), totalN: 41.7, source: 'LPELC conversions (ppm × density / 1000)' },
    // LPELC: dry basis × dry-matter fraction = as-is; 2 % N on a dry basis at 25 % DM = 0.5 % as-is = 10 lb/ton
    { input: solid({ units: 'pct', basis: 'dry', dryMatterPct: 25, totalN: 2 }), totalN: 10, source: 'LPELC conversions: dry × DM fraction' },
  ]
  it.each(conversions)('converts $input.totalN $input.units ($input.form, $input.basis) to $totalN as-is ($source)', ({ input, totalN }) => {
    const { value, problems } = normalizeAnalysis(input)
    expect(problems).toEqual([])
    expect(value!.totalN).toBeCloseTo(totalN, 2)
    expect(value!.per).toBe(input.form === 'liquid' ? '1000gal' : 'ton')
  })

  it('computes organic N as total N minus ammonium-N', () => {
    const { value } = normalizeAnalysis(liquid({ totalN: 42, ammoniumN: 30 }))
    expect(value!.organicN).toBe(12)
    expect(value!.ammoniumN).toBe(30)
  })

  it('converts elemental P and K to P2O5 and K2O (Virginia Tech SPES-201NP, Table 1: 2.291 and 1.205)', () => {
    const { value } = normalizeAnalysis(solid({ p: 10, k: 10 }))
    expect(value!.p2o5).toBeCloseTo(22.91, 1)
    expect(value!.k2o).toBeCloseTo(12.05, 1)
  })

  it('leaves absent nutrients null, not zero', () => {
    const { value } = normalizeAnalysis(solid({}))
    expect(value).toMatchObject({ ammoniumN: null, organicN: null, p2o5: null, k2o: null, sulfur: null, dryMatterPct: null })
  })

  const refused: { input: AnalysisInput; column: string; code: string }[] = [
    { input: liquid({ totalN: -1 }), column: 'total_n', code: 'negative' },
    { input: liquid({ totalN: 41, ammoniumN: 52 }), column: 'ammonium_n', code: 'ammonium_above_total' },
    { input: liquid({ dryMatterPct: 120 }), column: 'dry_matter_pct', code: 'dry_matter_range' },
    { input: liquid({ dryMatterPct: -2 }), column: 'dry_matter_pct', code: 'dry_matter_range' },
    { input: liquid({ units: 'lb_per_acre' as never }), column: 'units', code: 'unknown_unit' },
    { input: solid({ units: 'pct', basis: 'dry' }), column: 'dry_matter_pct', code: 'missing_dry_matter' },
    { input: solid({ units: 'mg_per_l' }), column: 'units', code: 'volume_unit_for_solid' },
    { input: liquid({ basis: 'dry', dryMatterPct: 5 }), column: 'basis', code: 'dry_basis_volume_unit' },
    { input: liquid({ p: 3, p2o5: 7 }), column: 'p', code: 'conflicting_fields' },
    { input: liquid({ k: 3, k2o: 7 }), column: 'k', code: 'conflicting_fields' },
    { input: liquid({ totalN: Number.NaN }), column: 'total_n', code: 'not_a_number' },
    { input: liquid({ densityLbPerGal: 0 }), column: 'density_lb_per_gal', code: 'invalid_density' },
    { input: liquid({ form: 'slurry' as never }), column: 'form', code: 'unknown_form' },
    { input: liquid({ basis: 'wet' as never }), column: 'basis', code: 'unknown_basis' },
  ]
  it.each(refused)('refuses $code naming the field $column', ({ input, column, code }) => {
    const { value, problems } = normalizeAnalysis(input)
    expect(value).toBeUndefined()
    expect(problems).toContainEqual(expect.objectContaining({ code, column }))
    for (const p of problems) expect(p.message.length).toBeGreaterThan(10)
  })

  it('says what was expected and what was found for ammonium-N above total N', () => {
    const { problems } = normalizeAnalysis(liquid({ totalN: 41, ammoniumN: 52 }))
    expect(problems[0]!.message).toBe('52 is larger than total_n 41 (ammonium-N is part of total N)')
  })
})

describe('metric analyses', () => {
  it('converts lb/1000 gal to kg/m³ and lb/ton to kg/t (sources.md: × 0.119826 and × 0.5)', () => {
    const l = toMetricAnalysis(normalizeAnalysis(liquid({ totalN: 40, ammoniumN: 30 })).value!)
    expect(l.per).toBe('m3')
    expect(l.totalN).toBeCloseTo(4.793, 3)
    const s = toMetricAnalysis(normalizeAnalysis(solid({ totalN: 20 })).value!)
    expect(s.per).toBe('t')
    expect(s.totalN).toBe(10)
  })
})

describe('round trips (properties)', () => {
  const amount = fc.double({ min: 0, max: 1e5, noNaN: true, noDefaultInfinity: true })
  it('US ↔ metric returns the input', () => {
    fc.assert(
      fc.property(fc.constantFrom<'liquid' | 'solid'>('liquid', 'solid'), amount, amount, (form, n, p) => {
        const a = normalizeAnalysis({ form, units: form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton', basis: 'as_is', totalN: n + p, ammoniumN: n, p2o5: p }).value!
        const back = fromMetricAnalysis(toMetricAnalysis(a))
        expect(back.per).toBe(a.per)
        expect(back.totalN).toBeCloseTo(a.totalN, 6)
        expect(back.ammoniumN!).toBeCloseTo(a.ammoniumN!, 6)
        expect(back.p2o5!).toBeCloseTo(a.p2o5!, 6)
      }),
    )
  })
  it('dry ↔ as-is returns the input', () => {
    fc.assert(
      fc.property(
        fc.constantFrom<'liquid' | 'solid'>('liquid', 'solid'),
        fc.constantFrom('pct', 'ppm', 'lb_per_ton', 'kg_per_t'),
        amount,
        fc.double({ min: 0.1, max: 100, noNaN: true }),
        (form, units, n, dm) => {
          const spec = { form, units: units as AnalysisInput['units'], basis: 'dry' as const, dryMatterPct: dm }
          const a = normalizeAnalysis({ ...spec, totalN: n }).value!
          expect(toReportedUnits(a.totalN, spec)!).toBeCloseTo(n, 6)
        },
      ),
    )
  })
  it('P ↔ P2O5 and K ↔ K2O return the input', () => {
    fc.assert(
      fc.property(amount, amount, (p, k) => {
        const a = normalizeAnalysis(solid({ p, k })).value!
        const b = normalizeAnalysis(solid({ p2o5: a.p2o5!, k2o: a.k2o! })).value!
        expect(b.p2o5!).toBeCloseTo(a.p2o5!, 9)
        expect(b.k2o!).toBeCloseTo(a.k2o!, 9)
        expect(p2o5ToP(a.p2o5!)).toBeCloseTo(p, 6)
        expect(k2oToK(a.k2o!)).toBeCloseTo(k, 6)
        expect(p2o5ToP(pToP2o5(p))).toBeCloseTo(p, 9)
        expect(k2oToK(kToK2o(k))).toBeCloseTo(k, 9)
      }),
    )
  })
})
