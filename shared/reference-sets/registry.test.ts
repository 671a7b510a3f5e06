import { describe, expect, it } from 'vitest'
import { isAppError } from '../errors.ts'
import { storageKinds } from '../storage-csv.ts'
import { parseReferenceSet, storageKindValues } from './reference-set.ts'
import { defaultReferenceSetName, findBookValues, findReferenceSet, listBookValues, listReferenceSets } from './registry.ts'

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
  /** Typical-only rows: analyses ranged from 25 to 300 % of book values (Univ. of Minnesota, as reported). */
  const band = (typical: number) => [typical * 0.25, typical, typical * 3]
  type Row = { species: 'swine' | 'dairy' | 'beef' | 'poultry'; form: 'liquid' | 'solid'; totalN: number[]; p2o5: number[]; k2o: number[]; source: string }
  const rows: Row[] = [
    // Iowa State PMR 1003 (2016): swine finishing liquid 32–79 lb N, 17–54 P2O5, 23–48 K2O per 1000 gal
    { species: 'swine', form: 'liquid', totalN: [32, 55.5, 79], p2o5: [17, 35.5, 54], k2o: [23, 35.5, 48], source: 'Iowa State PMR 1003 (2016), range across finishing facilities' },
    // Univ. of Georgia C933: broiler litter 62 / 62 / 56 lb/ton
    { species: 'poultry', form: 'solid', totalN: band(62), p2o5: band(62), k2o: band(56), source: 'UGA C933: broiler litter 62 / 62 / 56 lb/ton' },
    // SARE, Building Soils for Better Crops 3rd ed. (2010), Table 12.1 Typical Manure Characteristics
    { species: 'dairy', form: 'liquid', totalN: band(25), p2o5: band(9), k2o: band(20), source: 'SARE 2010 Table 12.1: dairy liquid 25 / 9 / 20 lb per 1,000 gal' },
    { species: 'dairy', form: 'solid', totalN: band(10), p2o5: band(6), k2o: band(7), source: 'SARE 2010 Table 12.1: dairy solid 10 / 6 / 7 lb/ton' },
    { species: 'beef', form: 'liquid', totalN: band(39), p2o5: band(25), k2o: band(31), source: 'SARE 2010 Table 12.1: beef liquid 39 / 25 / 31 lb per 1,000 gal' },
    // total N range measured across North Dakota: NDSU NM1259 (2021), 4 to 32 lb N/ton
    { species: 'beef', form: 'solid', totalN: [4, 14, 32], p2o5: band(9), k2o: band(11), source: 'SARE 2010 Table 12.1: beef solid 14 / 9 / 11 lb/ton; N range NDSU NM1259' },
    { species: 'swine', form: 'solid', totalN: band(10), p2o5: band(6), k2o: band(9), source: 'SARE 2010 Table 12.1: hog solid 10 / 6 / 9 lb/ton' },
    { species: 'poultry', form: 'liquid', totalN: band(70), p2o5: band(70), k2o: band(33), source: 'SARE 2010 Table 12.1: chicken liquid 70 / 70 / 33 lb per 1,000 gal' },
  ]
  it.each(rows)('gives low, typical and high for $species $form ($source)', ({ species, form, totalN, p2o5, k2o }) => {
    const b = findBookValues(species, form)!
    expect([b.totalN.low, b.totalN.typical, b.totalN.high]).toEqual(totalN)
    expect([b.p2o5.low, b.p2o5.typical, b.p2o5.high]).toEqual(p2o5)
    expect([b.k2o.low, b.k2o.typical, b.k2o.high]).toEqual(k2o)
    expect(b.per).toBe(form === 'liquid' ? '1000gal' : 'ton')
    expect(b.source.title.length).toBeGreaterThan(10)
  })

  it('takes in published analyses that differ from the typical values (Montana State CNMP Step 5: bedded solid beef 21 / 18 / 26 lb/ton)', () => {
    const b = findBookValues('beef', 'solid')!
    for (const [range, x] of [[b.totalN, 21], [b.p2o5, 18], [b.k2o, 26]] as const) {
      expect(x).toBeGreaterThanOrEqual(range.low)
      expect(x).toBeLessThanOrEqual(range.high)
    }
  })

  const dryMatter = [
    // SARE 2010 Table 12.1 dry matter: dairy 26 % solid, 7 % liquid; beef 23 / 8; chicken 17 liquid; hog 9 solid
    { species: 'dairy', form: 'solid', dm: 26, source: 'SARE 2010 Table 12.1' },
    { species: 'dairy', form: 'liquid', dm: 7, source: 'SARE 2010 Table 12.1' },
    { species: 'beef', form: 'solid', dm: 23, source: 'SARE 2010 Table 12.1' },
    { species: 'beef', form: 'liquid', dm: 8, source: 'SARE 2010 Table 12.1' },
    { species: 'poultry', form: 'liquid', dm: 17, source: 'SARE 2010 Table 12.1' },
  ] as const
  it.each(dryMatter)('gives $dm % dry matter for $species $form ($source)', ({ species, form, dm }) => {
    expect(findBookValues(species, form)!.dryMatterPct).toEqual({ typical: dm, low: dm * 0.25, high: dm * 3 })
  })

  it('gives the UGA C933 broiler litter typical values 62 / 62 / 56 lb/ton for poultry solid, with layer manure listed after it', () => {
    const b = findBookValues('poultry', 'solid')!
    expect([b.totalN.typical, b.p2o5.typical, b.k2o.typical]).toEqual([62, 62, 56])
    const all = listBookValues({ species: 'poultry', form: 'solid' })
    expect(all.map((x) => x.storage)).toEqual(['broiler litter', 'layer manure'])
    // Mid-Atlantic Nutrient Management Handbook, ch. 9: layer manure 35 lb N, 42 P2O5, 28 K2O per ton
    expect([all[1]!.totalN.typical, all[1]!.p2o5.typical, all[1]!.k2o.typical]).toEqual([35, 42, 28])
  })

  it('keeps pit and basin book values away from lagoons, whose liquid is far thinner', () => {
    expect(findBookValues('swine', 'liquid', undefined, 'deep_pit')!.source.id).toBe('iowa-pmr1003')
    expect(findBookValues('dairy', 'liquid', undefined, 'earthen_basin')!.source.id).toBe('sare-bsbc-2010')
    expect(findBookValues('swine', 'liquid', undefined, 'lagoon')).toBeNull()
    expect(findBookValues('dairy', 'liquid', undefined, 'lagoon')).toBeNull()
    expect(findBookValues('beef', 'solid', undefined, 'stack')!.storageKinds).toBeNull()
  })

  it('lists every row of a set when no filter is given', () => {
    const all = listBookValues()
    expect(all.length).toBe(findReferenceSet(defaultReferenceSetName).book_values.length)
    expect(new Set(all.map((b) => `${b.species} ${b.form}`)).size).toBe(8)
  })

  it('names the storage kinds with the words of the storages file', () => {
    expect([...storageKindValues]).toEqual([...storageKinds])
  })

  it('returns null where the set has no book values (no source gives a fallback for other livestock)', () => {
    expect(findBookValues('other', 'liquid')).toBeNull()
    expect(findBookValues('other', 'solid')).toBeNull()
  })
})

describe('reference-set rows for irrigation', () => {
  it('refuses a depth class on a row that is not irrigated, naming its path', () => {
    const bad = JSON.parse(JSON.stringify(findReferenceSet('alberta-retention-release')))
    bad.nitrogen.ammonium_retention[0].up_to_depth_in = 0.4
    const { problems } = parseReferenceSet(bad)
    expect(problems[0]).toMatchObject({ path: ['nitrogen', 'ammonium_retention', 0, 'up_to_depth_in'] })
    expect(problems[0]!.message).toContain('irrigated rows only')
  })
})
