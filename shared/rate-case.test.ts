import { describe, expect, it } from 'vitest'
import { formatProblems } from './errors.ts'
import { parseRateCase } from './rate-case.ts'

const good = {
  manure: { form: 'liquid', species: 'swine', units: 'lb_per_1000gal', basis: 'as_is', total_n: 42, ammonium_n: 30, p2o5: 25, k2o: 30 },
  application: { method: 'broadcast_incorporated', incorporated_within_hours: 24 },
  need: { n: 160, p2o5: 50, k2o: 75 },
  basis: 'lowest',
  units: 'us',
}
const clone = () => JSON.parse(JSON.stringify(good))

describe('parseRateCase', () => {
  it('accepts the documented example case', () => {
    const { value, problems } = parseRateCase(JSON.stringify(good))
    expect(problems).toEqual([])
    expect(value!.basis).toBe('lowest')
  })

  const refused: { name: string; edit: (c: any) => void; path: string; says: string }[] = [
    { name: 'an unknown key', edit: (c) => (c.manure.colour = 'brown'), path: 'manure', says: '"colour"' },
    { name: 'an unknown unit', edit: (c) => (c.manure.units = 'lb_per_acre'), path: 'manure.units', says: 'lb_per_1000gal' },
    { name: 'ammonium-N above total N', edit: (c) => (c.manure.ammonium_n = 52), path: 'manure.ammonium_n', says: 'larger than total_n 42' },
    { name: 'a negative value', edit: (c) => (c.manure.p2o5 = -3), path: 'manure.p2o5', says: 'cannot be negative' },
    { name: 'dry basis without dry matter', edit: (c) => Object.assign(c.manure, { units: 'pct', basis: 'dry' }), path: 'manure.dry_matter_pct', says: 'dry_matter_pct' },
    { name: 'dry matter above 100 %', edit: (c) => (c.manure.dry_matter_pct = 140), path: 'manure.dry_matter_pct', says: 'between 0 and 100' },
    { name: 'both P and P2O5', edit: (c) => (c.manure.p = 11), path: 'manure.p', says: 'not both' },
    { name: 'no P at all', edit: (c) => delete c.manure.p2o5, path: 'manure.p2o5', says: 'give p2o5' },
    { name: 'a missing ammonium-N', edit: (c) => delete c.manure.ammonium_n, path: 'manure.ammonium_n', says: '' },
    { name: 'an availability above 1', edit: (c) => (c.application.p2o5_availability = 1.5), path: 'application.p2o5_availability', says: '' },
    { name: 'incorporation hours with injection', edit: (c) => (c.application.method = 'injected'), path: 'application.incorporated_within_hours', says: 'broadcast_incorporated only' },
    { name: 'an irrigation depth with another method', edit: (c) => (c.application.irrigation_depth_in = 0.5), path: 'application.irrigation_depth_in', says: 'irrigated only' },
    { name: 'a zero irrigation depth', edit: (c) => Object.assign(c.application, { method: 'irrigated', incorporated_within_hours: undefined, irrigation_depth_in: 0 }), path: 'application.irrigation_depth_in', says: '' },
    { name: 'n_availability with its parts', edit: (c) => Object.assign(c.application, { n_availability: 0.5, ammonium_retention: 0.7 }), path: 'application.n_availability', says: 'replaces' },
    { name: 'neither need nor crop', edit: (c) => delete c.need, path: 'need', says: 'give need' },
    { name: 'a soil test without its method', edit: (c) => (c.crop = { name: 'corn_grain', yield_goal: 180, soil_test_p_ppm: 15 }), path: 'crop.soil_test_p_method', says: 'mehlich3' },
    { name: 'an unknown crop', edit: (c) => (c.crop = { name: 'rice', yield_goal: 180 }), path: 'crop.name', says: 'corn_grain' },
    { name: 'an unknown reference set', edit: (c) => (c.reference_set = 'nowhere'), path: 'reference_set', says: 'umn-pct-total-n' },
    { name: 'a fixed rate above the cap', edit: (c) => Object.assign(c, { fixed_rate: 9000, max_rate: 5000 }), path: 'fixed_rate', says: 'above max_rate' },
    { name: 'more than three following crops', edit: (c) => Object.assign(c, { crop: { name: 'corn_grain', yield_goal: 180 }, following_crops: Array(4).fill({ name: 'soybean', yield_goal: 50 }) }), path: 'following_crops', says: '' },
    { name: 'a zero applicator capacity', edit: (c) => (c.applicator_capacity = 0), path: 'applicator_capacity', says: '' },
    { name: 'a basis that does not exist', edit: (c) => (c.basis = 'sulfur'), path: 'basis', says: '"lowest"' },
  ]
  it.each(refused)('refuses $name, naming $path', ({ edit, path, says }) => {
    const c = clone()
    edit(c)
    const { value, problems } = parseRateCase(c)
    expect(value).toBeUndefined()
    const text = formatProblems(problems)
    expect(text).toContain(`${path}: `)
    expect(text).toContain(says)
  })

  it('accepts an irrigation depth with irrigated manure', () => {
    const c = clone()
    c.application = { method: 'irrigated', irrigation_depth_in: 0.5 }
    expect(parseRateCase(c).problems).toEqual([])
  })

  it('refuses text that is not JSON with the parser reason', () => {
    expect(parseRateCase('{"manure": ').problems[0]!.message).toMatch(/^not valid JSON/)
  })
})
