import { describe, expect, it } from 'vitest'
import { mergeOverrides, parseFieldCsv } from './field-csv.ts'

const required = 'farm,field,acres,season,crop,yield_goal,previous_crop,soil_test_p_ppm,soil_test_p_method,soil_test_k_ppm,storage,method,incorporated_within_hours'

describe('parseFieldCsv', () => {
  it('reads a field season with its soil test, storage, method and overrides', () => {
    const text = `${required},basis,n_need,ammonium_retention,max_rate,applicator_capacity,soil_test_date\n` +
      'QBF,F01,40.3,2027,corn_grain,187,soybean,47,mehlich3,191,P1,broadcast_incorporated,24,p2o5,,0.9,5000,6000,2025-10-11\n'
    const { rows, problems } = parseFieldCsv(text)
    expect(problems).toEqual([])
    expect(rows[0]).toMatchObject({
      farmCode: 'QBF',
      code: 'F01',
      acres: 40.3,
      season: 2027,
      crop: 'corn_grain',
      yieldGoal: 187,
      previousCrop: 'soybean',
      soilTest: { sampledOn: '2025-10-11', pPpm: 47, pMethod: 'mehlich3', kPpm: 191 },
      storageCode: 'P1',
      method: 'broadcast_incorporated',
      incorporatedWithinHours: 24,
      overrides: { basis: 'p2o5', n_need: null, ammonium_retention: 0.9, max_rate: 5000, applicator_capacity: 6000 },
    })
  })

  it('reads the previous crop in the legume-credit vocabulary (corn, alfalfa_second_year, none)', () => {
    const rows = parseFieldCsv(
      `${required}\nA,1,10,2027,corn_silage,22,corn_grain,,,,,,\nA,2,10,2027,corn_grain,180,alfalfa_second_year,,,,,,\nA,3,10,2027,soybean,55,fallow,,,,,,\n`,
    ).rows
    expect(rows.map((r) => r.previousCrop)).toEqual(['corn', 'alfalfa_second_year', 'none'])
    expect(rows[0]!.soilTest).toBeNull()
  })

  it.each([
    ['A,1,10,2027,rice,5,,,,,,,', 'crop', /expected one of corn_grain, corn_silage, soybean, wheat, alfalfa, grass_hay; found "rice"/],
    ['A,1,0,2027,wheat,80,,,,,,,', 'acres', /expected a number above 0, found 0/],
    ['A,1,10,27,wheat,80,,,,,,,', 'season', /expected at least 1990, found 27/],
    ['A,1,10,2027,wheat,80,,30,,,,,', 'soil_test_p_method', /needs its method: bray1, olsen or mehlich3/],
    ['A,1,10,2027,wheat,80,,,,,P1,,', 'method', /manure from storage P1 needs a method/],
    ['A,1,10,2027,wheat,80,,,,,P1,broadcast_incorporated,', 'incorporated_within_hours', /needs the hours from spreading to incorporation/],
    ['A,1,10,2027,wheat,80,,,,,P1,injected,24', 'incorporated_within_hours', /is only for broadcast_incorporated, but the method is injected/],
    ['A,1,10,2027,wheat,"1,234",,,,,,,', 'yield_goal', /ambiguous/],
  ])('refuses %s (%s)', (row, column, message) => {
    const { rows, problems } = parseFieldCsv(`${required}\n${row}\n`)
    expect(rows).toEqual([])
    expect(problems.find((p) => p.column === column)?.message).toMatch(message)
  })

  it('refuses an availability override written as a percentage', () => {
    const { problems } = parseFieldCsv(`${required},n_availability\nA,1,10,2027,wheat,80,,,,,,,,45\n`)
    expect(problems[0]).toMatchObject({ line: 2, column: 'n_availability', message: 'expected at most 1, found 45 (a fraction: write 0.75 for 75 %)' })
  })

  it('warns about a yield goal that looks like the wrong unit', () => {
    const { rows, problems } = parseFieldCsv(`${required}\nA,1,10,2027,corn_silage,180,,,,,,,\n`)
    expect(rows).toHaveLength(1)
    expect(problems[0]).toMatchObject({ severity: 'warning', column: 'yield_goal' })
    expect(problems[0]!.message).toMatch(/180 ton\/ac for corn_silage is outside 5–40/)
  })

  it('accepts one row per season and refuses season rows of a field that disagree', () => {
    const ok = parseFieldCsv(`${required}\nA,1,10,2026,soybean,55,corn,30,bray1,150,,,\nA,1,10,2027,corn_grain,190,soybean,30,bray1,150,,,\n`)
    expect(ok.problems).toEqual([])
    expect(ok.rows.map((r) => r.season)).toEqual([2026, 2027])
    const bad = parseFieldCsv(`${required}\nA,1,10,2026,soybean,55,corn,,,,,,\nA,1,12,2027,corn_grain,190,soybean,,,,,,\nA,1,10,2027,wheat,80,soybean,,,,,,\n`)
    expect(bad.problems.map((p) => `${p.line}:${p.column}:${p.code}`)).toEqual(['3:acres:field_rows_disagree', '4:season:duplicate_row'])
  })

  it('merges overrides: a given value sets, a blank cell removes, a missing column keeps', () => {
    expect(mergeOverrides({ basis: 'n', max_rate: 6000, n_need: 120 }, { basis: 'p2o5', max_rate: null })).toEqual({ basis: 'p2o5', n_need: 120 })
  })
})
