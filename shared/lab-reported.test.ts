import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { normalizeAnalysis } from './analysis.ts'
import { parseLabCsv } from './lab-csv.ts'
import { canonicalDecimal, reportedCells, storedAsReported } from './lab-reported.ts'

const header = 'report_id,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o,sulfur,ph'

/** What the import stores for one parsed row of a liquid storage (shared/db/lab-write.ts). */
function stored(line: string, form: 'liquid' | 'solid' = 'liquid') {
  const r = parseLabCsv(`${header}\n${line}\n`, { today: '2026-11-30' })
  expect(r.problems).toEqual([])
  const row = r.rows[0]!
  const normalized = normalizeAnalysis({
    form, units: row.units, basis: row.basis, dryMatterPct: row.dryMatterPct ?? undefined, totalN: row.totalN,
    ammoniumN: row.ammoniumN ?? undefined, p2o5: row.p2o5 ?? undefined, k2o: row.k2o ?? undefined, sulfur: row.sulfur ?? undefined,
  })
  expect(normalized.problems).toEqual([])
  const a = normalized.value!
  const tidy = (x: number | null) => (x === null ? null : Math.round(x * 1e9) / 1e9)
  return {
    row,
    cells: {
      form, units: row.units, basis: row.basis,
      reported: storedAsReported(form, row.units, row.basis) ? row.reportedOdd : row.reported,
      dry_matter_pct: tidy(a.dryMatterPct), total_n: tidy(a.totalN), ammonium_n: tidy(a.ammoniumN), p2o5: tidy(a.p2o5),
      k2o: tidy(a.k2o), sulfur: tidy(a.sulfur), ph: row.ph,
    },
  }
}

describe('the cells of a stored lab result', () => {
  it('leaves canonical decimals out of what is stored when the lab reported in the stored units, as-is', () => {
    const { row, cells } = stored('CRA-26-00001,S1,2026-07-09,F1,BASIN,liquid,dairy,as_is,lb_per_1000gal,5.24,28.71,13.7,15.85,28.48,3.92,7.7')
    expect(JSON.parse(row.reportedOdd)).toEqual({})
    expect(reportedCells(cells)).toEqual(JSON.parse(row.reported))
  })

  it('keeps cells whose text String(value) would not give back: trailing zeros, qualifiers', () => {
    const { row, cells } = stored('CRA-26-00001,S1,2026-07-09,F1,BASIN,liquid,dairy,as_is,lb_per_1000gal,5.20,28.71,<0.1,015.85,28.48,3.92,7')
    expect(JSON.parse(row.reportedOdd)).toEqual({ dry_matter_pct: '5.20', ammonium_n: '<0.1', p2o5: '015.85' })
    expect(reportedCells(cells)).toEqual(JSON.parse(row.reported))
  })

  it('keeps every cell as written when the lab reported in other units or on a dry basis', () => {
    for (const [line, form] of [
      ['CRA-26-00001,S1,2026-07-09,F1,STACK,solid,beef,dry,pct,31.5,2.1,0.4,1.3,2.2,0.4,7.9', 'solid'],
      ['CRA-26-00001,S1,2026-07-09,F1,STACK,solid,beef,as_is,pct,31.5,0.66,0.13,0.41,0.69,0.12,7.9', 'solid'],
    ] as const) {
      const { row, cells } = stored(line, form)
      expect(cells.reported).toBe(row.reported)
      expect(reportedCells(cells)).toEqual(JSON.parse(row.reported))
    }
  })

  it('gives back every cell of any row of plain decimals (property, 500 rows)', () => {
    const decimal = fc.tuple(fc.integer({ min: 0, max: 999 }), fc.integer({ min: 0, max: 3 }), fc.integer({ min: 0, max: 999 })).map(([i, d, f]) =>
      d === 0 ? String(i) : `${i}.${String(f).padStart(3, '0').slice(0, d)}`,
    )
    fc.assert(
      fc.property(fc.array(decimal, { minLength: 6, maxLength: 6 }), ([dm, tn, p, k, s, ph]) => {
        const nh4 = '0' // never above total N
        const line = `CRA-26-00001,S1,2026-07-09,F1,BASIN,liquid,dairy,as_is,lb_per_1000gal,${Math.min(Number(dm), 99)},${tn},${nh4},${p},${k},${s},${Math.min(Number(ph), 14)}`
        const { row, cells } = stored(line)
        expect(reportedCells(cells)).toEqual(JSON.parse(row.reported))
      }),
      { numRuns: 500 },
    )
  })

  it('calls canonical only the texts String(Number(text)) writes back', () => {
    for (const t of ['0', '7', '28.71', '0.05', '123456.1234567']) expect([t, canonicalDecimal.test(t), String(Number(t))]).toEqual([t, true, t])
    for (const t of ['5.20', '015', '1.', '.5', '1e3', '+1', '1234567', '0.000000001']) expect([t, canonicalDecimal.test(t)]).toEqual([t, false])
  })
})
