import { describe, expect, it } from 'vitest'
import { normalizeAnalysis } from './analysis.ts'
import { computeAvailability, type ApplicationInput } from './availability.ts'
import type { ApplicationMethod, Species } from './reference-sets/reference-set.ts'
import { findReferenceSet } from './reference-sets/registry.ts'

const umn = findReferenceSet('umn-pct-total-n')
const alberta = findReferenceSet('alberta-retention-release')
const analysis = normalizeAnalysis({ form: 'liquid', units: 'lb_per_1000gal', basis: 'as_is', totalN: 100, ammoniumN: 60, p2o5: 40, k2o: 50 }).value!

describe('computeAvailability, % of total N (UMN Table 1)', () => {
  const rows: { species: Species; method: ApplicationMethod; hours?: number; year1: number; year2: number }[] = [
    // University of Minnesota Extension, "Calculating manure application rates", Table 1
    { species: 'beef', method: 'broadcast', year1: 0.25, year2: 0.25 },
    { species: 'beef', method: 'broadcast_incorporated', hours: 48, year1: 0.45, year2: 0.25 },
    { species: 'beef', method: 'broadcast_incorporated', hours: 6, year1: 0.6, year2: 0.25 },
    { species: 'beef', method: 'injected', year1: 0.5, year2: 0.25 },
    { species: 'dairy', method: 'broadcast_incorporated', hours: 12, year1: 0.55, year2: 0.25 },
    { species: 'dairy', method: 'broadcast_incorporated', hours: 96, year1: 0.4, year2: 0.25 },
    { species: 'swine', method: 'broadcast', year1: 0.35, year2: 0.15 },
    { species: 'swine', method: 'broadcast_incorporated', hours: 120, year1: 0.35, year2: 0.15 },
    { species: 'swine', method: 'injected', year1: 0.7, year2: 0.15 },
    { species: 'poultry', method: 'broadcast_incorporated', hours: 4, year1: 0.7, year2: 0.25 },
  ]
  it.each(rows)('gives $year1 of total N for $species $method $hours h (UMN Table 1)', ({ species, method, hours, year1, year2 }) => {
    const app: ApplicationInput = { method, ...(hours !== undefined && { incorporatedWithinHours: hours }) }
    const r = computeAvailability(analysis, { species, form: 'liquid' }, app, umn)
    expect(r.factors.nFirstYearFraction).toBeCloseTo(year1, 10)
    expect(r.available.n).toBeCloseTo(100 * year1, 10)
    expect(r.factors.nYear2).toBe(year2)
    expect(r.factors.sourceIds).toContain(species === 'poultry' ? 'umn-rates-table1-reprint' : 'umn-rates-table1')
  })

  it('takes P2O5 as 80 % available (UMN, Guidelines for manure application rates)', () => {
    const r = computeAvailability(analysis, { species: 'swine', form: 'liquid' }, { method: 'injected' }, umn)
    expect(r.available.p2o5).toBeCloseTo(32, 10)
  })

  it('uses the lowest value for the method and warns where the table has no row (poultry injection is n/a)', () => {
    const r = computeAvailability(analysis, { species: 'poultry', form: 'liquid' }, { method: 'injected' }, umn)
    expect(r.factors.nFirstYearFraction).toBe(0.5)
    expect(r.warnings[0]!.code).toBe('n_row_missing')
  })

  it('assumes the latest incorporation bracket when the hours are not given, and says so', () => {
    const r = computeAvailability(analysis, { species: 'swine', form: 'liquid' }, { method: 'broadcast_incorporated' }, umn)
    expect(r.factors.nFirstYearFraction).toBe(0.55)
    expect(r.warnings[0]!.code).toBe('incorporation_hours_assumed')
  })
})

describe('computeAvailability, ammonium retention + organic release (Alberta NMP Guide)', () => {
  const rows: { method: ApplicationMethod; hours?: number; conditions?: ApplicationInput['conditions']; retention: number }[] = [
    // Alberta Agriculture, Nutrient Management Planning Guide, Table 4.3.4 (p. 163)
    { method: 'injected', retention: 1.0 },
    { method: 'broadcast_incorporated', hours: 20, retention: 0.75 },
    { method: 'broadcast_incorporated', hours: 20, conditions: 'cool_wet', retention: 0.9 },
    { method: 'broadcast_incorporated', hours: 48, conditions: 'warm_dry', retention: 0.43 },
    { method: 'broadcast_incorporated', hours: 72, retention: 0.65 },
    { method: 'broadcast_incorporated', hours: 90, conditions: 'cool_dry', retention: 0.74 },
    { method: 'broadcast_incorporated', hours: 110, conditions: 'warm_wet', retention: 0.5 },
    { method: 'broadcast', retention: 0.34 },
    { method: 'broadcast', conditions: 'warm_dry', retention: 0 },
    { method: 'broadcast_incorporated', hours: 200, retention: 0.34 },
  ]
  it.each(rows)('keeps $retention of ammonium-N for $method $hours h $conditions (Alberta Table 4.3.4)', ({ method, hours, conditions, retention }) => {
    const app: ApplicationInput = { method, ...(hours !== undefined && { incorporatedWithinHours: hours }), ...(conditions && { conditions }) }
    const r = computeAvailability(analysis, { species: 'dairy', form: 'liquid' }, app, alberta)
    expect(r.factors.ammoniumRetention).toBe(retention)
    // available = NH4 × retention + organic × 0.25 (Alberta NMP Guide p. 214)
    expect(r.available.n).toBeCloseTo(60 * retention + 40 * 0.25, 10)
    expect(r.factors.residualBase).toBe('organic_n')
  })

  it('replaces both parts with n_availability', () => {
    const r = computeAvailability(analysis, { species: 'dairy', form: 'liquid' }, { method: 'broadcast', nAvailability: 0.5 }, alberta)
    expect(r.available.n).toBe(50)
    expect(r.factors.overridden).toEqual(['n_availability'])
  })

  it('lets each factor be overridden per field', () => {
    const r = computeAvailability(analysis, { species: 'dairy', form: 'liquid' }, { method: 'broadcast', ammoniumRetention: 0.66, p2o5Availability: 1, k2oAvailability: 0.95 }, alberta)
    expect(r.available.n).toBeCloseTo(60 * 0.66 + 40 * 0.25, 10)
    expect(r.available.p2o5).toBe(40)
    expect(r.available.k2o).toBeCloseTo(47.5, 10)
    expect(r.factors.overridden).toEqual(['ammonium_retention', 'p2o5_availability', 'k2o_availability'])
  })
})

describe('computeAvailability, sprinkler-irrigated liquid manure (Univ. of Nebraska–Lincoln 2022)', () => {
  const rows = [
    // UNL CropWatch 2022: ammonium-N availability from sprinkler irrigation 80 % above 0.4 in, 40 % at or below
    { depth: 0.75, retention: 0.8, source: 'UNL 2022: more than 0.4 in per pass, 80 %' },
    { depth: 0.41, retention: 0.8, source: 'UNL 2022: more than 0.4 in per pass, 80 %' },
    { depth: 0.4, retention: 0.4, source: 'UNL 2022: 0.4 in or less, 40 %' },
    { depth: 0.2, retention: 0.4, source: 'UNL 2022: 0.4 in or less, 40 %' },
  ]
  it.each(rows)('keeps $retention of ammonium-N at $depth in per pass ($source)', ({ depth, retention }) => {
    const r = computeAvailability(analysis, { species: 'swine', form: 'liquid' }, { method: 'irrigated', irrigationDepthIn: depth }, alberta)
    expect(r.factors.ammoniumRetention).toBe(retention)
    // available = NH4 × retention + organic × 0.25 (Alberta NMP Guide p. 214)
    expect(r.available.n).toBeCloseTo(60 * retention + 40 * 0.25, 10)
    expect(r.factors.sourceIds).toContain('unl-irrigation-2022')
    expect(r.warnings).toEqual([])
  })

  it('assumes the shallow class (40 %) when the depth is not given, and says so', () => {
    const r = computeAvailability(analysis, { species: 'dairy', form: 'liquid' }, { method: 'irrigated' }, alberta)
    expect(r.factors.ammoniumRetention).toBe(0.4)
    expect(r.warnings.map((w) => w.code)).toEqual(['irrigation_depth_assumed'])
    expect(r.warnings[0]!.message).toContain('0.4 in or less')
  })

  it('uses the average factor and warns when a weather class is asked for (the Nebraska factors have none)', () => {
    const r = computeAvailability(analysis, { species: 'dairy', form: 'liquid' }, { method: 'irrigated', irrigationDepthIn: 1, conditions: 'warm_dry' }, alberta)
    expect(r.factors.ammoniumRetention).toBe(0.8)
    expect(r.warnings.map((w) => w.code)).toEqual(['conditions_unused'])
  })

  it('says so when a depth is given to a set with one irrigated factor whatever the depth', () => {
    const own = JSON.parse(JSON.stringify(alberta)) as typeof alberta
    if (own.nitrogen.model !== 'retention_release') throw new Error('expected the retention model')
    own.nitrogen.ammonium_retention = own.nitrogen.ammonium_retention.filter((r) => r.up_to_depth_in === undefined)
    const r = computeAvailability(analysis, { species: 'dairy', form: 'liquid' }, { method: 'irrigated', irrigationDepthIn: 0.3 }, own)
    expect(r.factors.ammoniumRetention).toBe(0.8)
    expect(r.warnings.map((w) => w.code)).toEqual(['irrigation_depth_unused'])
  })

  it('falls back to broadcast without incorporation in a set without irrigated factors (UMN Table 1 has none)', () => {
    const r = computeAvailability(analysis, { species: 'swine', form: 'liquid' }, { method: 'irrigated', irrigationDepthIn: 0.5 }, umn)
    expect(r.factors.nFirstYearFraction).toBe(0.35) // UMN Table 1, swine, incorporated after more than 96 h
    expect(r.warnings.map((w) => w.code)).toContain('irrigation_as_broadcast')
  })
})
