import { describe, expect, it } from 'vitest'
import { cellOf, parseCsvTable, type TableSpec } from './csv-table.ts'

const spec: TableSpec = {
  columns: [
    { key: 'farm', required: true },
    { key: 'field', aliases: ['field id', 'field_code'], required: true },
    { key: 'acres', required: true },
    { key: 'notes' },
  ],
}

describe('parseCsvTable', () => {
  it('matches headers forgiving case, spacing, aliases and units, and skips blank trailing rows', () => {
    const t = parseCsvTable('\ufeffFARM;Field ID;Acres (ac)\r\nQBF;N-12;40,5\r\n;;\r\n;;\r\n', spec)
    expect(t.problems).toEqual([])
    expect(t.decimal).toBe(',')
    expect(t.rows).toHaveLength(1)
    expect(cellOf(t, t.rows[0]!, 'field')).toBe('N-12')
    expect(cellOf(t, t.rows[0]!, 'notes')).toBe('')
    expect(t.headerUnits.acres).toBe('ac')
    expect(t.lines).toEqual([2])
  })

  it('reports missing and duplicate columns on the header line', () => {
    const t = parseCsvTable('farm,farm,notes\nA,B,C\n', spec)
    const codes = t.problems.map((p) => `${p.code}:${p.line}:${p.column}`)
    expect(codes).toContain('duplicate_column:1:farm')
    expect(codes).toContain('missing_column:1:field')
    expect(codes).toContain('missing_column:1:acres')
  })

  it('refuses a row with more cells than the header and names its line', () => {
    const t = parseCsvTable('farm,field,acres\nA,B,1\nA,B,1,2\n', spec)
    expect(t.problems).toEqual([expect.objectContaining({ code: 'too_many_cells', line: 3 })])
  })

  it('warns about unknown columns without refusing the file', () => {
    const t = parseCsvTable('farm,field,acres,colour\nA,B,1,red\n', spec)
    expect(t.problems).toEqual([expect.objectContaining({ code: 'unknown_column', severity: 'warning' })])
  })

  it('refuses an empty file with no header row', () => {
    expect(parseCsvTable('', spec).problems[0]).toMatchObject({ code: 'no_header', line: 1 })
  })
})
