import { describe, expect, it } from 'vitest'
import { makeSampleCode, parseAccessPoints, parseSampleCsv, parseSampleValues } from './sample-csv.ts'

const header = 'farm,storage,sample_id,sampled_on,agitated,sampler_kind,cores,access_points,sampled_by,notes'

describe('parseSampleCsv', () => {
  it('reads sampling events: date, agitation, sampler, cores and access points', () => {
    const { rows, problems } = parseSampleCsv(
      `${header}\nQBF,P1,QBF-P1-20261012-A,10/12/2026,yes,bucket,16,"a, c",Maren Castellano,\n`,
      { today: '2026-11-15' },
    )
    expect(problems).toEqual([])
    expect(rows[0]).toMatchObject({
      sampleCode: 'QBF-P1-20261012-A',
      sampledOn: '2026-10-12',
      agitated: true,
      samplerKind: 'bucket_at_pump',
      cores: 16,
      accessPoints: ['A', 'C'],
      notes: null,
    })
  })

  it.each([
    ['QBF,P1,S1,2026-12-24,,,,,,', 'sampled_on', /2026-12-24 is in the future \(today is 2026-11-15\)/],
    ['QBF,P1,S1,2026-02-30,,,,,,', 'sampled_on', /not a real date/],
    ['QBF,P1,S1,2026-10-01,maybe,,,,,', 'agitated', /expected yes or no, found "maybe"/],
    ['QBF,P1,S1,2026-10-01,,,12.5,,,', 'cores', /expected a whole number/],
    ['QBF,P1,S1,2026-10-01,,,,north pit,,', 'access_points', /"NORTH" is not an access point label|"PIT"/],
    ['QBF,P1,S 1,2026-10-01,,,,,,', 'sample_id', /no spaces/],
  ])('refuses %s (%s)', (row, column, message) => {
    const { rows, problems } = parseSampleCsv(`${header}\n${row}\n`, { today: '2026-11-15' })
    expect(rows).toEqual([])
    expect(problems.find((p) => p.column === column)?.message).toMatch(message)
  })

  it('refuses a sample id used twice in one file', () => {
    const { problems } = parseSampleCsv(`${header}\nA,P,S1,2026-10-01,,,,,,\nA,P,S1,2026-10-02,,,,,,\n`)
    expect(problems[0]).toMatchObject({ code: 'duplicate_row', line: 3, column: 'sample_id' })
  })
})

describe('sample ids and flags', () => {
  it('proposes <farm>-<storage>-<YYYYMMDD>-<points> and gives up beyond 40 characters', () => {
    expect(makeSampleCode('QBF', 'P1', '2026-10-12', ['A'])).toBe('QBF-P1-20261012-A')
    expect(makeSampleCode('QBF', 'P1', '2026-10-12')).toBe('QBF-P1-20261012')
    expect(makeSampleCode('A'.repeat(20), 'B'.repeat(20), '2026-10-12')).toBeNull()
  })

  it('reads access point lists with any common separator', () => {
    expect(parseAccessPoints('A+b / C;a')).toEqual({ ok: true, value: ['A', 'B', 'C'] })
  })

  it('checks values given as flags like file cells, naming the column', () => {
    const { row, problems } = parseSampleValues({ farm: 'QBF', storage: 'P1', sample_id: 'X1', sampled_on: 'yesterday', cores: '0' })
    expect(row).toBeNull()
    expect(problems.map((p) => [p.column, p.line])).toEqual([
      ['sampled_on', undefined],
      ['cores', undefined],
    ])
  })
})
