import { writeFileSync } from 'node:fs'
import { afterEach, describe, expect, it } from 'vitest'
import { runCli } from '../helpers/cli.ts'
import { makeTempDir, type TempDir } from '../helpers/temp-db.ts'

// These spawn the BUILT binary: run `npm run build:node` first (npm test builds).
const fixture = (name: string) => `tests/fixtures/calc/${name}`
const example = (name: string) => `examples/calc/${name}`
const json = (r: { stdout: unknown }) => JSON.parse(String(r.stdout))

let tmp: TempDir | undefined
afterEach(() => {
  tmp?.cleanup()
  tmp = undefined
})

describe('pitside calc rate', () => {
  it('reproduces Montana State CNMP Step 5 with --json: 8.53 lb/ton; 18.8, 2.8, 2.9 t/ac', async () => {
    const r = await runCli(['calc', 'rate', '--input', fixture('montana-cnmp-step5.json'), '--json'])
    expect(r.exitCode).toBe(0)
    const out = json(r)
    expect(out.available.n).toBeCloseTo(8.53, 2)
    expect(out.rates.n).toBeCloseTo(18.8, 1)
    expect(out.rates.p2o5).toBeCloseTo(2.8, 1)
    expect(out.rates.k2o).toBeCloseTo(2.9, 1)
    expect(out).toMatchObject({ rate_unit: 'ton/ac', limited_by: 'n' })
  })

  it('reproduces OMAFRA Pub. 811 in metric: 45,000 L/ha supplying 285 kg/ha total N credits 57 kg/ha', async () => {
    const out = json(await runCli(['--json', 'calc', 'rate', '--input', fixture('omafra-pub811-metric.json')]))
    expect(out.applied.n).toBeCloseTo(285, 0)
    expect(out.supplied.n).toBeCloseTo(57, 0)
    expect(out.rate_unit).toBe('L/ha')
  })

  it('reproduces Cornell CSS 412: 17.5 lb N this season, 6 and 2.5 in the next two', async () => {
    const out = json(await runCli(['calc', 'rate', '--json', '--input', fixture('cornell-css412.json')]))
    expect(out.supplied.n).toBeCloseTo(17.5, 2)
    expect(out.residual_n).toEqual({ year2: 6, year3: 2.5 })
  })

  it('reproduces Clemson: 10 lb PAN/ton for 150 lb N is 15 t/ac', async () => {
    const out = json(await runCli(['calc', 'rate', '--json', '--input', fixture('clemson-solid-10-150.json')]))
    expect(out.rate).toBe(15)
  })

  it('reads the case from standard input with --input -', async () => {
    const { readFileSync } = await import('node:fs')
    const r = await runCli(['calc', 'rate', '--input', '-', '--json'], { input: readFileSync(fixture('montana-cnmp-step5.json'), 'utf8') })
    expect(r.exitCode).toBe(0)
    expect(json(r).rate).toBeCloseTo(18.76, 2)
  })

  it('prints a readable summary with the rate, the nutrient table, sources and cautions', async () => {
    const r = await runCli(['calc', 'rate', '--input', example('swine-finishing-corn.json')])
    expect(r.exitCode).toBe(0)
    const out = String(r.stdout)
    expect(out).toMatch(/Rate: [\d,]+ gal\/ac \(limited by N\)/)
    expect(out).toContain('fertilizer still needed, lb/ac')
    expect(out).toContain('Sources:')
    expect(out).toContain('hydrogen sulfide')
  })

  it('refuses a bad case with exit 65, naming each field and the reason, and no stack trace', async () => {
    const r = await runCli(['calc', 'rate', '--input', fixture('bad-ammonium.json')])
    expect(r.exitCode).toBe(65)
    const err = String(r.stderr)
    expect(err).toContain('bad-ammonium.json: application: unknown key "spread_width"')
    expect(err).toContain('bad-ammonium.json: manure.ammonium_n: 52 is larger than total_n 41 (ammonium-N is part of total N)')
    expect(err).not.toMatch(/\bat .*\.js:\d+/)
    expect(String(r.stdout)).toBe('')
  })

  it('says when the case file does not exist (exit 66)', async () => {
    const r = await runCli(['calc', 'rate', '--input', 'no-such-case.json'])
    expect(r.exitCode).toBe(66)
    expect(String(r.stderr)).toContain('no-such-case.json: file not found')
  })

  it('uses an advisor reference set from a JSON file, and refuses a broken one with its JSON path', async () => {
    tmp = makeTempDir()
    const sets = json(await runCli(['--json', 'calc', 'sets']))
    expect(sets.map((s: { name: string }) => s.name)).toEqual(['alberta-retention-release', 'umn-pct-total-n'])
    // start from a built-in set, as the README says
    const exported = json(await runCli(['calc', 'sets', '--export', 'umn-pct-total-n']))
    const own = { ...exported, name: 'county-2027', p2o5_availability: [{ species: 'any', form: 'any', value: 1, source: 'umn-guidelines' }] }
    writeFileSync(tmp.path('own.json'), JSON.stringify(own))
    const c = JSON.parse((await import('node:fs')).readFileSync(fixture('montana-cnmp-step5.json'), 'utf8'))
    c.reference_set = 'county-2027'
    delete c.application.p2o5_availability
    writeFileSync(tmp.path('case.json'), JSON.stringify(c))
    const r = await runCli(['--json', 'calc', 'rate', '--input', tmp.path('case.json'), '--reference-file', tmp.path('own.json')])
    expect(r.exitCode).toBe(0)
    expect(json(r)).toMatchObject({ reference_set: { name: 'county-2027' }, factors: { p2o5_availability: 1 } })

    own.p2o5_availability = [{ species: 'any', form: 'any', value: 3, source: 'umn-guidelines' }]
    writeFileSync(tmp.path('own.json'), JSON.stringify(own))
    const bad = await runCli(['calc', 'rate', '--input', tmp.path('case.json'), '--reference-file', tmp.path('own.json')])
    expect(bad.exitCode).toBe(65)
    expect(String(bad.stderr)).toContain('own.json: p2o5_availability.0.value:')
  })
})

describe('pitside calc storage, calibrate, samples', () => {
  it('gives basin volume in ft³ and gallons with --json', async () => {
    const out = json(await runCli(['--json', 'calc', 'storage', '--input', example('storage-basin.json')]))
    expect(out.total.ft3).toBeGreaterThan(out.usable.ft3)
    expect(out.usable.ft3).toBeGreaterThan(out.contents.ft3)
    expect(out.total.gal).toBeCloseTo(out.total.ft3 * 7.4805, -2)
  })

  it('refuses a basin whose slopes close its bottom (exit 65)', async () => {
    tmp = makeTempDir()
    writeFileSync(tmp.path('b.json'), JSON.stringify({ shape: 'basin', units: 'us', top_length: 40, top_width: 30, depth: 10, side_slope: 3 }))
    const r = await runCli(['calc', 'storage', '--input', tmp.path('b.json')])
    expect(r.exitCode).toBe(65)
    expect(String(r.stderr)).toContain('side_slope')
  })

  it('calibrates by the sheet method: pounds on a 56 × 56 in sheet read as tons per acre (Iowa State, 2001)', async () => {
    tmp = makeTempDir()
    writeFileSync(tmp.path('s.json'), JSON.stringify({ method: 'sheet', units: 'us', caught: [8.2], sheet_area: (56 * 56) / 144 }))
    const out = json(await runCli(['--json', 'calc', 'calibrate', '--input', tmp.path('s.json')]))
    expect(out.rate).toBeCloseTo(8.2, 1)
  })

  it('summarises samples from --values with a 90 % Student-t interval (t 2.132 for 5 values, NIST/SEMATECH)', async () => {
    const out = json(await runCli(['--json', 'calc', 'samples', '--values', '38,42,45,41,44']))
    expect(out.mean).toBe(42)
    expect(out.interval.t).toBeCloseTo(2.132, 3)
  })

  it('refuses values that are not numbers as a usage error (exit 64)', async () => {
    const r = await runCli(['calc', 'samples', '--values', '41,x'])
    expect(r.exitCode).toBe(64)
    expect(String(r.stderr)).toContain('--values: item 2 "x" is not a number')
  })
})
