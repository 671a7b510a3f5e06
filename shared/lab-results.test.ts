import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { normalizeAnalysis, type AnalysisBasis, type AnalysisUnits } from './analysis.ts'
import type { Problem } from './errors.ts'
import { bookValuesForStorage } from './lab-book-values.ts'
import type { LabRow } from './lab-csv.ts'
import { checkLabRow, emptyLabResultValues, type LabCheckContext, type LabStorage } from './lab-results.ts'

// invented farms and storages
const storageList: LabStorage[] = [
  { id: 1, farmCode: 'QBF', code: 'P1', kind: 'earthen_basin', species: 'dairy', form: 'liquid' },
  { id: 2, farmCode: 'QBF', code: 'STACK', kind: 'stack', species: 'beef', form: 'solid' },
]
function context(): LabCheckContext {
  return {
    storages: new Map(storageList.map((s) => [s.farmCode.toLowerCase() + '\u0000' + s.code.toLowerCase(), s])),
    farms: new Map([['qbf', { code: 'QBF', storages: ['P1', 'STACK'] }]]),
    history: () => undefined,
    bookValues: bookValuesForStorage(),
  }
}

function labRow(r: Partial<LabRow>): LabRow {
  return {
    line: 2, reportId: 'R1', sampleId: 'S1', sampledOn: '2026-03-01', farm: 'QBF', storage: 'P1', form: null, species: null,
    basis: 'as_is', units: 'lb_per_1000gal', lab: null, notes: null, dryMatterPct: null, totalN: 0, ammoniumN: null, p2o5: null,
    p: null, k2o: null, k: null, sulfur: null, ph: null, reported: '{}', reportedOdd: '{}', qualifiers: null, warnings: null, ...r,
  }
}

const tidy = (x: number | null | undefined) => (x === null || x === undefined ? null : Math.round(x * 1e9) / 1e9)
const amount = fc.oneof(
  { weight: 3, arbitrary: fc.constant(null) },
  { weight: 8, arbitrary: fc.double({ min: 0, max: 120, noNaN: true }) },
  { weight: 1, arbitrary: fc.constantFrom(-0, -1, 101, Number.NaN, Number.POSITIVE_INFINITY) },
)
const rareAmount = fc.oneof({ weight: 6, arbitrary: fc.constant(null) }, { weight: 1, arbitrary: amount })
const row = fc.record({
  storage: fc.constantFrom('P1', 'STACK'),
  basis: fc.constantFrom<AnalysisBasis>('as_is', 'as_is', 'dry'),
  units: fc.constantFrom<AnalysisUnits>('lb_per_1000gal', 'lb_per_ton', 'pct', 'ppm', 'kg_per_t'),
  dryMatterPct: amount,
  totalN: fc.oneof(fc.double({ min: 0, max: 120, noNaN: true }), fc.constantFrom(-1, Number.NaN)),
  ammoniumN: amount,
  p2o5: amount,
  p: rareAmount,
  k2o: amount,
  k: rareAmount,
  sulfur: amount,
})

describe('checkLabRow', () => {
  it('stores what normalizeAnalysis gives for the storage form, and refuses what it refuses, with the row line', () => {
    const ctx = context()
    let stored = 0
    fc.assert(
      fc.property(row, (r) => {
        const form = r.storage === 'P1' ? 'liquid' : 'solid'
        const expected = normalizeAnalysis({
          form, units: r.units, basis: r.basis, dryMatterPct: r.dryMatterPct ?? undefined, totalN: r.totalN,
          ammoniumN: r.ammoniumN ?? undefined, p2o5: r.p2o5 ?? undefined, p: r.p ?? undefined, k2o: r.k2o ?? undefined,
          k: r.k ?? undefined, sulfur: r.sulfur ?? undefined,
        })
        const problems: Problem[] = []
        const out = emptyLabResultValues()
        const ok = checkLabRow(labRow({ ...r, line: 7 }), ctx, problems, out)
        expect(ok).toBe(expected.value !== undefined)
        if (!expected.value) {
          expect(problems).toEqual(expected.problems.map((p) => ({ ...p, line: 7 })))
          return
        }
        stored++
        const a = expected.value
        expect(out).toMatchObject({ storageId: r.storage === 'P1' ? 1 : 2, form, perUnit: a.per })
        for (const key of ['dryMatterPct', 'totalN', 'ammoniumN', 'organicN', 'p2o5', 'k2o', 'sulfur'] as const) {
          expect(Object.is(out[key], tidy(a[key])), key).toBe(true)
        }
      }),
      { numRuns: 4000 },
    )
    expect(stored).toBeGreaterThan(200)
  })

  it('resolves the same codes to the storage of each context when contexts take turns', () => {
    const a = context()
    const b: LabCheckContext = { ...context(), storages: new Map([['qbf\u0000p1', { ...storageList[0]!, id: 41 }]]) }
    const empty: LabCheckContext = { ...context(), farms: new Map(), storages: new Map() }
    const out = emptyLabResultValues()
    const ids: (number | string)[] = []
    for (const ctx of [a, b, empty, a, empty, b, b, a]) {
      const problems: Problem[] = []
      ids.push(checkLabRow(labRow({ totalN: 20 }), ctx, problems, out) ? out.storageId : problems[0]!.code)
    }
    expect(ids).toEqual([1, 41, 'unknown_farm', 1, 'unknown_farm', 41, 41, 1])
  })
})
