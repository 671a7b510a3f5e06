import { describe, expect, it } from 'vitest'
import { isAppError } from '../errors.ts'
import { parseReferenceSet } from './reference-set.ts'
import { defaultReferenceSetName, findBookValues, findReferenceSet, listReferenceSets } from './registry.ts'

describe('built-in reference sets', () => {
  it.each(listReferenceSets().map((s) => [s.name, s] as const))('%s passes its own schema and cites a listed source on every row', (_name, set) => {
    const { value, problems } = parseReferenceSet(JSON.parse(JSON.stringify(set)))
    expect(problems).toEqual([])
    expect(value!.name).toBe(set.name)
    expect(set.version).toMatch(/\S/)
    expect(set.title).toMatch(/\S/)
  })

  it('ships at least two sets that model N differently', () => {
    const models = new Set(listReferenceSets().map((s) => s.nitrogen.model))
    expect(models).toEqual(new Set(['pct_of_total', 'retention_release']))
  })

  it('lists the default set first', () => {
    expect(listReferenceSets()[0]!.name).toBe(defaultReferenceSetName)
  })

  it('refuses an unknown set with the list of known names', () => {
    try {
      findReferenceSet('no-such-set')
      expect.unreachable()
    } catch (error) {
      expect(isAppError(error) && error.code).toBe('not_found')
      expect((error as Error).message).toContain('umn-pct-total-n')
      expect((error as Error).message).toContain('alberta-retention-release')
    }
  })

  it('finds an advisor set passed alongside the built-in ones', () => {
    const own = { ...findReferenceSet('umn-pct-total-n'), name: 'my-county' }
    expect(findReferenceSet('my-county', [own]).name).toBe('my-county')
  })
})

describe('parseReferenceSet', () => {
  const base = () => JSON.parse(JSON.stringify(findReferenceSet('umn-pct-total-n')))
  it('names the JSON path of a value out of range', () => {
    const bad = base()
    bad.nitrogen.rows[2].year1 = 1.4
    const { value, problems } = parseReferenceSet(bad)
    expect(value).toBeUndefined()
    expect(problems[0]!.path).toEqual(['nitrogen', 'rows', 2, 'year1'])
  })
  it('refuses unknown keys', () => {
    const bad = base()
    bad.colour = 'red'
    expect(parseReferenceSet(bad).problems[0]!.message).toContain('"colour"')
  })
  it('refuses a row citing a source that is not listed', () => {
    const bad = base()
    bad.crops[0].removal.source = 'nowhere'
    const { problems } = parseReferenceSet(bad)
    expect(problems[0]).toMatchObject({ path: ['crops', 0, 'removal', 'source'] })
    expect(problems[0]!.message).toContain('"nowhere"')
  })
  it('refuses text that is not JSON', () => {
    expect(parseReferenceSet('{ nope').problems[0]!.code).toBe('invalid_json')
  })
})

describe('findBookValues', () => {
  const rows = [
    // Iowa State PMR 1003: swine finishing liquid 32–79 lb N, 17–54 P2O5, 23–48 K2O per 1000 gal
    { species: 'swine', form: 'liquid', totalN: [32, 79], p2o5: [17, 54], k2o: [23, 48], source: 'Iowa State PMR 1003 (2016)' },
    // Univ. of Georgia C933: broiler litter 62 / 62 / 56 lb/ton
    { species: 'poultry', form: 'solid', totalN: [31, 93], p2o5: [31, 93], k2o: [28, 84], source: 'UGA C933, ± 50 % (Univ. of Tennessee)' },
  ] as const
  it.each(rows)('gives the range for $species $form ($source)', ({ species, form, totalN, p2o5, k2o }) => {
    const b = findBookValues(species, form)!
    expect([b.totalN.low, b.totalN.high]).toEqual(totalN)
    expect([b.p2o5.low, b.p2o5.high]).toEqual(p2o5)
    expect([b.k2o.low, b.k2o.high]).toEqual(k2o)
    expect(b.per).toBe(form === 'liquid' ? '1000gal' : 'ton')
    expect(b.source.title.length).toBeGreaterThan(10)
  })
  it('gives the UGA C933 broiler litter typical values 62 / 62 / 56 lb/ton', () => {
    const b = findBookValues('poultry', 'solid')!
    expect([b.totalN.typical, b.p2o5.typical, b.k2o.typical]).toEqual([62, 62, 56])
  })
  it('returns null where the set has no book values', () => {
    expect(findBookValues('other', 'liquid')).toBeNull()
  })
})
