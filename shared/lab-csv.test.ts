import { describe, expect, it } from 'vitest'
import { parseCsv } from './csv.ts'
import { parseLabCsv, parseLabBasis, parseLabUnits, readLabCsv } from './lab-csv.ts'
import { parseLabProfile } from './lab-profile.ts'

const header = 'report_id,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o,notes'
const row = (i: number, notes = '') => `CRA-25-${String(i).padStart(5, '0')},S${i},2025-03-01,QBF,P1,liquid,swine,as_is,lb_per_1000gal,5.1,48.2,33.0,26.4,31.0,${notes}`

describe('parseLabCsv', () => {
  it('reads the documented columns into rows with their lines', () => {
    const r = parseLabCsv(`${header}\n${row(1)}\n${row(2, '"two\nlines"')}\n${row(3)}\n`, { today: '2026-01-01' })
    expect(r.problems).toEqual([])
    expect(r.rows.map((x) => [x.line, x.sampleId, x.totalN, x.notes])).toEqual([
      [2, 'S1', 48.2, null],
      [3, 'S2', 48.2, 'two\nlines'],
      [5, 'S3', 48.2, null],
    ])
    expect(JSON.parse(r.rows[0]!.reported)).toEqual({ dry_matter_pct: '5.1', total_n: '48.2', ammonium_n: '33.0', p2o5: '26.4', k2o: '31.0' })
  })

  it('gives every cell as written in reported, the odd ones in reportedOdd, while the row is passed and in a copy', () => {
    const cells = ['5.1', ' 48.2 ', '<0.5', '026.4', '31.0']
    const text = `${header}\n${row(1)}\n${row(2).replace('5.1,48.2,33.0,26.4,31.0', cells.join(','))}\n`
    const during: string[] = []
    const kept: { reported: string; reportedOdd: string }[] = []
    readLabCsv(text, { today: '2026-01-01' }, (r) => {
      during.push(r.reported, r.reported)
      kept.push({ ...r })
    })
    const second = { dry_matter_pct: '5.1', total_n: '48.2', ammonium_n: '<0.5', p2o5: '026.4', k2o: '31.0' }
    expect(during.map((x) => JSON.parse(x))).toEqual([
      { dry_matter_pct: '5.1', total_n: '48.2', ammonium_n: '33.0', p2o5: '26.4', k2o: '31.0' },
      { dry_matter_pct: '5.1', total_n: '48.2', ammonium_n: '33.0', p2o5: '26.4', k2o: '31.0' },
      second,
      second,
    ])
    expect(kept.map((r) => JSON.parse(r.reported))).toEqual([JSON.parse(during[0]!), second])
    // a cell that String(value) writes back ("5.1", "48.2" once trimmed) is left out of reportedOdd
    expect(kept.map((r) => JSON.parse(r.reportedOdd))).toEqual([{ ammonium_n: '33.0', k2o: '31.0' }, { ammonium_n: '<0.5', p2o5: '026.4', k2o: '31.0' }])
  })

  it('keeps line numbers right in a file read in several runs, across quoted newlines and CRLF', () => {
    // long enough for several runs of the reader (256 KiB each); every 97th row carries a quoted newline
    const lines: string[] = [header]
    let bad = 0
    for (let i = 1; i <= 9000; i++) {
      if (i === 8500) {
        bad = lines.reduce((n, l) => n + l.split('\n').length, 0) + 1
        lines.push(row(i).replace('33.0', '52.0').replace('48.2', '41.0'))
      } else lines.push(row(i, i % 97 === 0 ? '"pumped;\r\nagitated"' : 'ok'))
    }
    const text = lines.join('\r\n') + '\r\n'
    expect(text.length).toBeGreaterThan(3 * 256 * 1024)
    const seen: number[] = []
    const read = readLabCsv(text, { today: '2026-01-01' }, (r) => seen.push(r.line))
    expect(read.problems).toEqual([{ code: 'ammonium_above_total', line: bad, column: 'ammonium_n', message: '52 is larger than total_n 41 (ammonium-N is part of total N)' }])
    expect(read.rows).toBe(8999)
    // the same lines as the CSV reader gives for the whole text at once
    const whole = parseCsv(text).lines.slice(1).filter((l) => l !== bad)
    expect(seen).toEqual(whole)
  })

  it('names every bad cell with its line and column, and checks every row', () => {
    const text = [
      header,
      'CRA-1,S1,2025-02-30,QBF,P1,liquid,swine,as_is,lb_per_1000gal,5,abc,3,2,1,',
      'CRA-1,S2,2025-02-01,QBF,P1,gas,swine,moist,furlongs,105,40,-1,2,1,',
      'CRA-1,S1,2025-02-01,QBF,P1,liquid,swine,as_is,lb_per_1000gal,5,40,3,2,1,',
      'CRA-1,S3,2031-02-01,,P1,liquid,swine,dry,pct,,4,3,2,1,',
    ].join('\n')
    const r = parseLabCsv(text, { today: '2026-01-01' })
    expect(r.rows).toEqual([])
    expect(r.problems.map((p) => `${p.line}: ${p.column}: ${p.code}`)).toEqual([
      '2: sampled_on: invalid_date',
      '2: total_n: not_a_number',
      '3: form: unknown_form',
      '3: units: unknown_unit',
      '3: basis: unknown_basis',
      '3: dry_matter_pct: dry_matter_range',
      '3: ammonium_n: negative',
      '4: sample_id: duplicate_row',
      '5: farm: missing',
      '5: sampled_on: future_date',
      '5: dry_matter_pct: missing_dry_matter',
    ])
  })

  it('never reads a below-detection cell as 0', () => {
    const r = parseLabCsv(`${header}\n${row(1).replace('33.0', '<0.5')}\n`, { today: '2026-01-01' })
    expect(r.rows[0]).toMatchObject({ ammoniumN: 0.5, qualifiers: '{"ammonium_n":"<"}' })
    expect(r.rows[0]!.warnings).toEqual(["ammonium_n: <0.5 is below the lab's detection limit: stored as 0.5, an upper bound"])
  })

  it('refuses a file without the columns it needs, naming each', () => {
    const r = parseLabCsv('report_id,sample_id,farm,storage,total_n\nA,B,QBF,P1,4\n')
    expect(r.problems.filter((p) => p.code === 'missing_column').map((p) => p.column)).toEqual(['sampled_on'])
    const r2 = parseLabCsv('report_id,sample_id,sampled_on,farm,storage,total_n\nA,B,2025-01-01,QBF,P1,4\n')
    expect(r2.problems.map((p) => p.column)).toEqual(['units', 'basis', 'ammonium_n', 'p2o5', 'k2o', 'dry_matter_pct'])
  })

  it('reads a lab layout through a profile: letterhead lines skipped, columns renamed, defaults applied', () => {
    const { profile } = parseLabProfile(
      JSON.stringify({ skip_lines: 1, columns: { 'Lab No.': 'report_id', Bottle: 'sample_id' }, defaults: { units: 'lb/ton', basis: 'as is' } }),
    )
    const r = parseLabCsv('Some Lab Inc. report\nLab No.,Bottle,Date,Farm,Storage,DM,N,NH4-N,P2O5,K2O\nX1,B1,2025-01-02,LKP,S1,70,55,11,60,50\n', { profile: profile!, today: '2026-01-01' })
    expect(r.problems).toEqual([])
    expect(r.rows[0]).toMatchObject({ line: 3, reportId: 'X1', sampleId: 'B1', units: 'lb_per_ton', basis: 'as_is', dryMatterPct: 70 })
  })
})

describe('readLabCsv on bytes', () => {
  it('reads a file\'s UTF-8 bytes (BOM, CRLF, letterhead lines, text other than ASCII, quoted cells) as it reads the decoded text', () => {
    const { profile } = parseLabProfile(JSON.stringify({ skip_lines: 2, columns: { 'Lab No.': 'report_id' } }))
    const lines = [
      'Laboratoire « Été » — rapport',
      '"a letterhead ""line"", with a quote',
      'Lab No.,sample_id,sampled_on,farm,storage,form,species,basis,units,dry_matter_pct,total_n,ammonium_n,p2o5,k2o,notes',
      'CRA-É1,S1,2025-03-01,QBF,P1,liquid,swine,as_is,lb_per_1000gal,5.1,48.2,33.0,26.4,31.0,agitée 2 h',
      'CRA-É1,S2,2025-03-01,QBF,P1,liquid,swine,as_is,lb_per_1000gal, 5.1 ,48.2,<0.5,26.4,31.0,"crust; ""thick""\r\nbroken"',
      'CRA-É1,S3,2025-03-01,QBF,P1,liquid,swine,as_is,lb_per_1000gal,\u00a05.10,48.2,33.0,26.4,31.0,\u00a0',
      'CRA-É1,S1,2025-03-01,QBF,P1,liquid,swine,as_is,lb_per_1000gal,5.1,48.2,33.0,26.4,31.0,repeat',
    ]
    const text = lines.join('\r\n') + '\r\n'
    const read = (input: string | Uint8Array) => {
      const rows: unknown[] = []
      const r = readLabCsv(input, { profile: profile!, today: '2026-01-01' }, (row) => rows.push({ ...row }))
      return { rows, problems: r.problems }
    }
    const fromText = read(text)
    expect(fromText.rows.map((r: any) => [r.line, r.reportId, r.sampleId, r.notes])).toEqual([
      [4, 'CRA-É1', 'S1', 'agitée 2 h'],
      [5, 'CRA-É1', 'S2', 'crust; "thick"\r\nbroken'],
      [7, 'CRA-É1', 'S3', null],
    ])
    expect(fromText.problems.map((p) => `${p.line}: ${p.code}`)).toEqual(['8: duplicate_row'])
    const bytes = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(text)])
    expect(read(new Uint8Array(bytes))).toEqual(read('\ufeff' + text))
    expect(read(bytes.subarray(3))).toEqual(fromText)
  })
})

describe('lab units and basis', () => {
  it.each([
    ['lb/1000 gal', 'lb_per_1000gal'],
    ['lbs/1,000 gal', 'lb_per_1000gal'],
    ['LB_PER_TON', 'lb_per_ton'],
    ['%', 'pct'],
    ['mg/kg', 'ppm'],
    ['kg/m³', 'kg_per_m3'],
  ])('reads the unit %s', (text, units) => expect(parseLabUnits(text)).toBe(units))
  it.each([
    ['as is', 'as_is'],
    ['As-Received', 'as_is'],
    ['dry basis', 'dry'],
    ['DM', 'dry'],
  ])('reads the basis %s', (text, basis) => expect(parseLabBasis(text)).toBe(basis))
})

describe('parseLabProfile', () => {
  it('names the path of each mistake and refuses unknown keys', () => {
    const r = parseLabProfile(JSON.stringify({ columns: { X: 'nitrogen' }, skip_line: 2 }))
    expect(r.profile).toBeUndefined()
    expect(r.problems.map((p) => p.path?.join('.'))).toEqual(['columns.X', ''])
    expect(parseLabProfile('{not json').problems[0]!.message).toMatch(/is not valid JSON/)
  })
})
