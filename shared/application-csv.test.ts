import { describe, expect, it } from 'vitest'
import { applicationWindow, parseApplicationCsv, seasonOfApplication } from './application-csv.ts'

const header = 'farm,field,applied_on,storage,amount,amount_unit,method,incorporated_within_hours,loads,applicator,notes'

describe('parseApplicationCsv', () => {
  it('reads what was spread: field, day, storage, total amount and unit, method, loads', () => {
    const { rows, problems } = parseApplicationCsv(`${header}\nQBF,F01,2026-04-21,P1,181000,gallons,injected,,31,Tamarack Custom Pumping,\n`, { today: '2026-11-15' })
    expect(problems).toEqual([])
    expect(rows[0]).toMatchObject({ fieldCode: 'F01', appliedOn: '2026-04-21', storageCode: 'P1', amount: 181000, amountUnit: 'gal', method: 'injected', incorporatedWithinHours: null, loads: 31 })
  })

  it.each([
    ['QBF,F01,2026-04-21,P1,0,gal,injected,,,,', 'amount', /expected a number above 0, found 0 \(the total spread on the field\)/],
    ['QBF,F01,2026-04-21,P1,100,litres,injected,,,,', 'amount_unit', /expected one of gal, ton/],
    ['QBF,F01,2026-04-21,P1,100,gal,sprayed,,,,', 'method', /expected one of injected, broadcast, broadcast_incorporated, irrigated/],
    ['QBF,F01,2026-04-21,P1,100,ton,broadcast_incorporated,,,,', 'incorporated_within_hours', /needs the hours/],
    ['QBF,F01,2027-04-21,P1,100,gal,injected,,,,', 'applied_on', /is in the future/],
  ])('refuses %s (%s)', (row, column, message) => {
    const { rows, problems } = parseApplicationCsv(`${header}\n${row}\n`, { today: '2026-11-15' })
    expect(rows).toEqual([])
    expect(problems.find((p) => p.column === column)?.message).toMatch(message)
  })

  it('refuses two records of one field, day and storage (add them up into one row)', () => {
    const { problems } = parseApplicationCsv(`${header}\nQ,F1,2026-04-21,P1,100,gal,injected,,,,\nQ,F1,2026-04-21,P1,200,gal,injected,,,,\n`)
    expect(problems[0]).toMatchObject({ code: 'duplicate_row', line: 3 })
  })
})

describe('seasonOfApplication', () => {
  // common practice: fall spreading feeds the next season's crop
  it.each([
    ['2025-10-20', 2026],
    ['2026-04-21', 2026],
    ['2026-06-30', 2026],
    ['2026-07-01', 2027],
  ])('counts spreading on %s for season %i', (date, season) => {
    expect(seasonOfApplication(date)).toBe(season)
    const w = applicationWindow(season)
    expect(date >= w.from && date <= w.to).toBe(true)
  })
})
