import fc from 'fast-check'
import { createRequire } from 'node:module'
import { describe, expect, it } from 'vitest'
import { isAppError } from './errors.ts'
import type { RateCase } from './rate-case.ts'
import { computeRate } from './rate.ts'
import { galPerAcreToLPerHa, kgPerHaToLbPerAcre, lbPerAcreToKgPerHa, tonPerAcreToTPerHa, usGalPerAcreInch } from './units.ts'

/** Published tables round their figures; agree within one unit of the last published digit. */
function expectWithinRounding(actual: number, published: number, decimals: number) {
  expect(Math.abs(actual - published)).toBeLessThanOrEqual(10 ** -decimals + 1e-9)
}

const Qty = createRequire(import.meta.url)('js-quantities') as (q: string) => { to(u: string): { scalar: number } }

/** Montana State Univ. Extension, CNMP Step 5 ("Land application on set crop acreage"), example information. */
const montana: RateCase = {
  manure: { form: 'solid', species: 'beef', units: 'lb_per_ton', basis: 'as_is', total_n: 21, ammonium_n: 8, p2o5: 18, k2o: 26 },
  application: { method: 'broadcast', ammonium_retention: 0.66, organic_n_release: 0.25, p2o5_availability: 1, k2o_availability: 1 },
  need: { n: 160, p2o5: 50, k2o: 75 },
  basis: 'n',
  units: 'us',
}

describe('published worked examples', () => {
  it('reproduces Montana State CNMP Step 5: 8.53 lb available N/ton; 18.8, 2.8 and 2.9 t/ac by N, P2O5 and K2O', () => {
    const r = computeRate(montana)
    expect(r.analysis.organic_n).toBe(13) // "21 – (8 + 0) = 13 lb organic N/ton"
    expect(r.available.n).toBeCloseTo(8.53, 2) // "3.25 + (8 x 0.66) + 0 = 8.53"
    expect(r.rates.n).toBeCloseTo(18.8, 1) // "160 divided by 8.53 = 18.8 tons/ac"
    expect(r.rates.p2o5).toBeCloseTo(2.8, 1) // "50 lb divided by 18 = 2.8"
    expect(r.rates.k2o).toBeCloseTo(2.9, 1) // "75 lb divided by 26 = 2.9"
    expect(r.rate).toBeCloseTo(18.8, 1)
    expect(r.limited_by).toBe('n')
  })

  it('reproduces Montana State CNMP Step 5 with basis lowest: the P2O5 rate, 2.8 t/ac', () => {
    const r = computeRate({ ...montana, basis: 'lowest' })
    expect(r.rate).toBeCloseTo(2.8, 1)
    expect(r.limited_by).toBe('p2o5')
    expect(r.supplemental.n).toBeCloseTo(160 - 2.7778 * 8.53, 0)
  })

  it('reproduces Cornell CSS 412: 10 t/ac of 6 % DM cow manure with 5 lb organic N/ton gives 35 %, then 12 % and 5 %', () => {
    // Cornell CSS 412 Module 2, "Release rate for organic N in manure": cows < 18 % DM 35 / 12 / 5 %
    const r = computeRate({
      manure: { form: 'solid', species: 'dairy', units: 'lb_per_ton', basis: 'as_is', dry_matter_pct: 6, total_n: 5, ammonium_n: 0, p2o5: 0, k2o: 0 },
      application: { method: 'broadcast', ammonium_retention: 0, organic_n_release: 0.35 },
      need: { n: 100 },
      basis: 'n',
      fixed_rate: 10,
      units: 'us',
      reference_set: 'alberta-retention-release',
    })
    expect(r.supplied.n).toBeCloseTo(17.5, 2) // 10 t × 5 lb × 35 %
    expect(r.residual_n.year2).toBeCloseTo(6, 2) // 10 t × 5 lb × 12 %
    expect(r.residual_n.year3).toBeCloseTo(2.5, 2) // 10 t × 5 lb × 5 %
    expect(r.limited_by).toBe('fixed_rate')
  })

  it('reproduces OMAFRA Publication 811, Ch. 9: 45,000 L/ha of hog manure supplying 285 kg/ha total N credits 57 kg/ha at 0.2', () => {
    // OMAFRA Agronomy Guide for Field Crops (Pub. 811), text of Table 9-12 (read in a reprint)
    const r = computeRate({
      manure: { form: 'liquid', species: 'swine', units: 'kg_per_m3', basis: 'as_is', total_n: 285 / 45, ammonium_n: 3, p2o5: 2, k2o: 2 },
      application: { method: 'broadcast', n_availability: 0.2 },
      need: { n: 100 },
      basis: 'n',
      fixed_rate: 45000,
      units: 'metric',
    })
    expect(r.applied.n).toBeCloseTo(285, 0)
    expect(r.supplied.n).toBeCloseTo(57, 0)
    expect(r.rate_unit).toBe('L/ha')
    // the example's "4,000 gal/acre" is Canadian (imperial) gallons: 4000 imp gal/ac ≈ 45,000 L/ha (OMAFRA 13-043)
    expect((4000 * Qty('1 gallon-imp').to('l').scalar) / Qty('1 acre').to('hectare').scalar).toBeCloseTo(45000, -3)
  })

  const clemsonSolid = [
    // Clemson Univ., "Solid manure application rates (tons/acre) based on PAN and crop needs"
    { panPerTon: 10, needN: 150, tons: 15 },
    { panPerTon: 20, needN: 175, tons: 8.8 },
    { panPerTon: 35, needN: 100, tons: 2.9 },
    { panPerTon: 50, needN: 200, tons: 4.0 },
  ]
  it.each(clemsonSolid)('reproduces Clemson: $panPerTon lb PAN/ton and $needN lb N/ac need $tons t/ac', ({ panPerTon, needN, tons }) => {
    const r = computeRate({
      manure: { form: 'solid', species: 'poultry', units: 'lb_per_ton', basis: 'as_is', total_n: panPerTon, ammonium_n: 0, p2o5: 0, k2o: 0 },
      application: { method: 'broadcast', n_availability: 1 },
      need: { n: needN },
      basis: 'n',
      units: 'us',
    })
    expectWithinRounding(r.rate, tons, 1)
  })

  const clemsonLiquid = [
    // Clemson Univ., "Lagoon effluent and slurry application rates (inches/crop or year) based on PAN and crop needs"
    { panPer1000: 1, needN: 100, inches: 3.68 },
    { panPer1000: 5, needN: 150, inches: 1.11 },
    { panPer1000: 12, needN: 200, inches: 0.62 },
    { panPer1000: 21, needN: 50, inches: 0.09 },
  ]
  it.each(clemsonLiquid)('reproduces Clemson: $panPer1000 lb PAN/1000 gal and $needN lb N/ac need $inches acre-inches', ({ panPer1000, needN, inches }) => {
    const r = computeRate({
      manure: { form: 'liquid', species: 'swine', units: 'lb_per_1000gal', basis: 'as_is', total_n: panPer1000, ammonium_n: 0, p2o5: 0, k2o: 0 },
      application: { method: 'irrigated', n_availability: 1 },
      need: { n: needN },
      basis: 'n',
      units: 'us',
    })
    expectWithinRounding(r.rate / usGalPerAcreInch, inches, 2)
  })
})

describe('computeRate', () => {
  it('caps the rate at max_rate and says so', () => {
    const r = computeRate({ ...montana, max_rate: 10 })
    expect(r.rate).toBe(10)
    expect(r.limited_by).toBe('max_rate')
    expect(r.supplemental.n).toBeCloseTo(160 - 85.3, 1)
  })

  it('answers what a given rate supplies with fixed_rate', () => {
    const r = computeRate({ ...montana, fixed_rate: 5 })
    expect(r.rate).toBe(5)
    expect(r.supplied).toEqual({ n: 42.65, p2o5: 90, k2o: 130 })
    expect(r.applied).toEqual({ n: 105, p2o5: 90, k2o: 130 })
    expect(r.balance.p2o5).toBe(40)
  })

  it('gives total manure and loads for the field', () => {
    const r = computeRate({ ...montana, basis: 'p2o5', acres: 40, applicator_capacity: 10 })
    expect(r.total_manure).toBeCloseTo(111.11, 2)
    expect(r.loads).toEqual({ capacity: 10, per_area: 0.28, field: 12 })
  })

  it('gives null rates where a nutrient has no need', () => {
    const r = computeRate({ ...montana, need: { n: 160 } })
    expect(r.rates).toEqual({ n: 18.76, p2o5: null, k2o: null })
    expect(r.balance.p2o5).toBeNull()
  })

  it('computes the N need from the yield goal less credits (Stanford 1.2 lb N/bu; soybean credit 30, Missouri EQ392)', () => {
    const r = computeRate({
      ...montana,
      need: undefined,
      crop: { name: 'corn_grain', yield_goal: 180, previous_crop: 'soybean', credits: { manure_n: 20, other_n: 10 } },
      reference_set: 'alberta-retention-release',
    } as RateCase)
    expect(r.factors.n_need).toEqual({ gross: 216, legume_credit: 30, manure_credit: 20, other_credit: 10 })
    expect(r.need.n).toBe(156)
  })

  it('uses the fixed N rate that already includes the soybean effect (UMN: 150 lb N/ac after soybean)', () => {
    const r = computeRate({ ...montana, need: undefined, crop: { name: 'corn_grain', yield_goal: 180, previous_crop: 'soybean' }, reference_set: 'umn-pct-total-n' } as RateCase)
    expect(r.factors.n_need).toMatchObject({ gross: 150, legume_credit: 0 })
    expect(r.need.n).toBe(150)
  })

  it('lets one application carry the P2O5 removal of up to four seasons and states the seasons covered', () => {
    const base = {
      ...montana,
      need: undefined,
      basis: 'p2o5',
      crop: { name: 'corn_grain', yield_goal: 200, soil_test_p_ppm: 30, soil_test_p_method: 'mehlich3' },
      following_crops: [{ name: 'soybean', yield_goal: 60 }, { name: 'corn_grain', yield_goal: 200 }, { name: 'soybean', yield_goal: 60 }],
    } as RateCase
    const r = computeRate(base)
    // OMAFRA 2025 midpoints: corn 0.405 lb P2O5/bu × 200 = 81; soybean 0.84 × 60 = 50.4
    expect(r.p_budget!.seasons.map((s) => s.removal_p2o5)).toEqual([81, 50.4, 81, 50.4])
    expect(r.need.p2o5).toBeCloseTo(262.8, 1)
    expect(r.p_budget!.seasons_covered).toBe(4)
    expect(r.rate).toBeCloseTo(262.8 / 18, 2)
    const one = computeRate({ ...base, following_crops: undefined })
    expect(one.p_budget!.seasons_covered).toBe(1)
    expect(one.rate).toBeCloseTo(81 / 18, 2)
  })

  it('holds a several-season P application to the N-based rate of this season', () => {
    const r = computeRate({
      ...montana,
      need: { n: 40 },
      basis: 'p2o5',
      crop: { name: 'corn_grain', yield_goal: 200, soil_test_p_ppm: 30, soil_test_p_method: 'mehlich3' },
      following_crops: [{ name: 'soybean', yield_goal: 60 }],
    } as RateCase)
    expect(r.limited_by).toBe('n')
    expect(r.rate).toBeCloseTo(40 / 8.53, 2)
    expect(r.warnings.map((w) => w.code)).toContain('p_budget_capped_by_n')
  })

  it('gives no P2O5 need above the maintenance limit (Tri-State 2020: above 50 ppm Mehlich-3)', () => {
    const r = computeRate({ ...montana, need: { n: 160 }, crop: { name: 'corn_grain', yield_goal: 180, soil_test_p_ppm: 60, soil_test_p_method: 'mehlich3' } } as RateCase)
    expect(r.need.p2o5).toBe(0)
    expect(r.rates.p2o5).toBeNull()
    expect(r.factors.soil_test_p_class).toBe('no_need')
  })

  it('warns that no manure is recommended at 100 ppm Olsen P or more (Utah State CNMP Step 5.1)', () => {
    const r = computeRate({ ...montana, crop: { name: 'corn_grain', yield_goal: 180, soil_test_p_ppm: 120, soil_test_p_method: 'olsen' } } as RateCase)
    expect(r.warnings.map((w) => w.code)).toContain('soil_p_no_manure')
  })

  it('converts a metric case to kg/ha and t/ha with the same result as the US case', () => {
    const us = computeRate(montana)
    const metric = computeRate({
      ...montana,
      units: 'metric',
      need: { n: lbPerAcreToKgPerHa(160), p2o5: lbPerAcreToKgPerHa(50), k2o: lbPerAcreToKgPerHa(75) },
    })
    expect(metric.rate_unit).toBe('t/ha')
    expect(metric.rate).toBeCloseTo(tonPerAcreToTPerHa(us.rate), 1)
    expect(metric.analysis).toMatchObject({ per: 't', total_n: 10.5, ammonium_n: 4 })
    expect(metric.supplied.n).toBeCloseTo(lbPerAcreToKgPerHa(160), 1)
  })

  it('refuses a case that parseRateCase refuses, with the field named', () => {
    try {
      computeRate({ ...montana, manure: { ...montana.manure, ammonium_n: 30 } })
      expect.unreachable()
    } catch (error) {
      expect(isAppError(error) && error.code).toBe('invalid_input')
      expect((error as Error).message).toContain('manure.ammonium_n: 30 is larger than total_n 21')
    }
  })

  it('warns when irrigated manure has no factor in the set and uses broadcast', () => {
    const r = computeRate({ ...montana, application: { method: 'irrigated' }, reference_set: 'umn-pct-total-n' })
    expect(r.warnings.map((w) => w.code)).toContain('irrigation_as_broadcast')
    expect(r.factors.n_first_year_fraction).toBe(0.25) // UMN Table 1, beef, incorporated after more than 96 h
  })

  it('credits sprinkler-irrigated liquid by the depth of one pass (UNL 2022: 80 % of ammonium-N above 0.4 in)', () => {
    const irrigated: RateCase = {
      manure: { form: 'liquid', species: 'swine', units: 'lb_per_1000gal', basis: 'as_is', total_n: 42, ammonium_n: 30, p2o5: 25, k2o: 30 },
      application: { method: 'irrigated', irrigation_depth_in: 0.6 },
      need: { n: 135 },
      basis: 'n',
      units: 'us',
    }
    const deep = computeRate(irrigated)
    // 30 × 0.8 (UNL 2022) + 12 × 0.25 (Alberta NMP Guide p. 214) = 27 lb available N per 1000 gal
    expect(deep.available.n).toBeCloseTo(27, 6)
    expect(deep.rate).toBeCloseTo(5000, 2) // 135 lb ÷ 27 lb per 1000 gal
    expect(deep.sources.map((x) => x.id)).toContain('unl-irrigation-2022')
    const shallow = computeRate({ ...irrigated, application: { method: 'irrigated' } })
    expect(shallow.available.n).toBeCloseTo(30 * 0.4 + 12 * 0.25, 6) // UNL 2022: 40 % at 0.4 in or less
    expect(shallow.warnings.map((w) => w.code)).toContain('irrigation_depth_assumed')
  })

  it('computes the wheat N need from the yield goal instead of requiring need.n (Oklahoma State: 2 lb N/bu)', () => {
    const r = computeRate({ ...montana, need: undefined, crop: { name: 'wheat', yield_goal: 70, previous_crop: 'soybean' } } as RateCase)
    expect(r.need.n).toBeCloseTo(140 - 30, 6) // 70 bu × 2 lb, less the 30 lb soybean credit (Missouri EQ392)
    expect(r.rates.n).toBeCloseTo(110 / 8.53, 1)
    expect(r.warnings.map((w) => w.code)).not.toContain('no_n_guidance')
  })
})

describe('invariants (properties)', () => {
  const analysisArb = fc.record({
    total_n: fc.double({ min: 5, max: 80, noNaN: true }),
    ammoniumShare: fc.double({ min: 0, max: 1, noNaN: true }),
    p2o5: fc.double({ min: 2, max: 60, noNaN: true }),
    k2o: fc.double({ min: 2, max: 60, noNaN: true }),
    form: fc.constantFrom<'liquid' | 'solid'>('liquid', 'solid'),
    method: fc.constantFrom<'injected' | 'broadcast'>('injected', 'broadcast'),
    species: fc.constantFrom<'swine' | 'dairy' | 'beef' | 'poultry'>('swine', 'dairy', 'beef', 'poultry'),
    set: fc.constantFrom('umn-pct-total-n', 'alberta-retention-release'),
  })
  const needArb = fc.record({
    n: fc.double({ min: 20, max: 250, noNaN: true }),
    p2o5: fc.double({ min: 10, max: 120, noNaN: true }),
    k2o: fc.double({ min: 10, max: 200, noNaN: true }),
  })
  type Drawn = { total_n: number; ammoniumShare: number; p2o5: number; k2o: number; form: 'liquid' | 'solid'; method: 'injected' | 'broadcast'; species: 'swine' | 'dairy' | 'beef' | 'poultry'; set: string }
  const makeCase = (a: Drawn, need: { n: number; p2o5: number; k2o: number }, basis: RateCase['basis']): RateCase => ({
    manure: {
      form: a.form,
      species: a.species === 'poultry' && a.method === 'injected' ? 'swine' : a.species,
      units: a.form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton',
      basis: 'as_is',
      total_n: a.total_n,
      ammonium_n: a.total_n * a.ammoniumShare,
      p2o5: a.p2o5,
      k2o: a.k2o,
    },
    application: { method: a.method },
    need,
    basis,
    units: 'us',
    reference_set: a.set,
  })

  it('never oversupplies the limiting nutrient, and with basis lowest no nutrient that has a need', () => {
    fc.assert(
      fc.property(analysisArb, needArb, fc.constantFrom<RateCase['basis']>('n', 'p2o5', 'k2o', 'lowest'), (a, need, basis) => {
        const r = computeRate(makeCase(a, need, basis))
        const tol = (x: number) => x * 1e-3 + 0.01
        if (basis !== 'lowest') expect(r.supplied[basis]).toBeLessThanOrEqual(need[basis] + tol(need[basis]))
        else for (const k of ['n', 'p2o5', 'k2o'] as const) expect(r.supplied[k]).toBeLessThanOrEqual(need[k] + tol(need[k]))
        expect(r.supplied[r.limited_by as 'n']).toBeCloseTo(need[r.limited_by as 'n'], 1)
      }),
      { numRuns: 200 },
    )
  })

  it('doubles the rate when every need doubles', () => {
    fc.assert(
      fc.property(analysisArb, needArb, fc.constantFrom<RateCase['basis']>('n', 'p2o5', 'k2o', 'lowest'), (a, need, basis) => {
        const one = computeRate(makeCase(a, need, basis))
        const two = computeRate(makeCase(a, { n: need.n * 2, p2o5: need.p2o5 * 2, k2o: need.k2o * 2 }, basis))
        expect(Math.abs(two.rate - 2 * one.rate)).toBeLessThanOrEqual(0.02 + one.rate * 1e-6)
        expect(two.limited_by).toBe(one.limited_by)
      }),
      { numRuns: 200 },
    )
  })

  it('gives the same rate for a case stated in US and in metric units', () => {
    fc.assert(
      fc.property(analysisArb, needArb, (a, need) => {
        const us = computeRate(makeCase(a, need, 'lowest'))
        const c = makeCase(a, { n: lbPerAcreToKgPerHa(need.n), p2o5: lbPerAcreToKgPerHa(need.p2o5), k2o: lbPerAcreToKgPerHa(need.k2o) }, 'lowest')
        const metric = computeRate({ ...c, units: 'metric' })
        const expected = a.form === 'liquid' ? galPerAcreToLPerHa(us.rate) : tonPerAcreToTPerHa(us.rate)
        expect(Math.abs(metric.rate - expected)).toBeLessThanOrEqual(expected * 1e-3 + 0.05)
        expect(kgPerHaToLbPerAcre(metric.supplied.n)).toBeCloseTo(us.supplied.n, 0)
      }),
      { numRuns: 150 },
    )
  })

  it('prints as JSON exactly what it returns (the --json output)', () => {
    const r = computeRate(montana)
    expect(JSON.parse(JSON.stringify(r))).toEqual(r)
  })
})
