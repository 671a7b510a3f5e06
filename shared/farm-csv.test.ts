import { describe, expect, it } from 'vitest'
import { parseFarmCsv } from './farm-csv.ts'

describe('parseFarmCsv', () => {
  it('reads farms with optional contact columns, forgiving header case and aliases', () => {
    const { rows, problems } = parseFarmCsv('Farm,Farm Name,Operator,Email,Region\nQBF,Quillback Finishing,Perrin Ashdown,qbf@farm.example,Tamarack Valley\n')
    expect(problems).toEqual([])
    expect(rows).toEqual([
      {
        line: 2,
        code: 'QBF',
        name: 'Quillback Finishing',
        operatorName: 'Perrin Ashdown',
        contactEmail: 'qbf@farm.example',
        contactPhone: undefined,
        address: undefined,
        region: 'Tamarack Valley',
        notes: undefined,
      },
    ])
  })

  it('tells a column left out of the file (keep what is stored) from a blank cell (clear it)', () => {
    const { rows } = parseFarmCsv('farm,name,notes\nQBF,Quillback,\n')
    expect(rows[0]!.notes).toBeNull()
    expect(rows[0]!.region).toBeUndefined()
  })

  it('names the line and column of every bad cell', () => {
    const { rows, problems } = parseFarmCsv('farm,name,contact_email\nQBF,Quillback,qbf@farm.example\nBAD CODE,X,\nFCD,,nobody\n')
    expect(rows.map((r) => r.code)).toEqual(['QBF'])
    expect(problems.map((p) => `${p.line}:${p.column}:${p.code}`)).toEqual([
      '3:farm:invalid_value',
      '4:name:missing_value',
      '4:contact_email:invalid_value',
    ])
    expect(problems[0]!.message).toMatch(/expected a code of letters, digits.*found "BAD CODE"/)
  })

  it('refuses a farm given twice and points to the first row', () => {
    const { problems } = parseFarmCsv('farm,name\nQBF,A\nQBF,B\n')
    expect(problems).toEqual([expect.objectContaining({ code: 'duplicate_row', line: 3, message: 'farm QBF is already on line 2; give each one row' })])
  })

  it('refuses a file without the required columns', () => {
    const { rows, problems } = parseFarmCsv('code_of_farm,title\nQBF,A\n')
    expect(rows).toEqual([])
    expect(problems.filter((p) => p.code === 'missing_column').map((p) => p.column)).toEqual(['farm', 'name'])
  })
})
