import { describe, expect, it } from 'vitest'
import { accessPointLabels, parseStorageCsv } from './storage-csv.ts'

const header = 'farm,storage,kind,species,form,shape,length_ft,width_ft,diameter_ft,depth_ft,side_slope,freeboard_ft,capacity,capacity_unit,current_amount,current_amount_on,access_points'

describe('parseStorageCsv', () => {
  it('reads rectangular, circular and basin storages and stacks with their geometry', () => {
    const text = [
      header,
      'QBF,P1,deep_pit,swine,liquid,rectangular,200,41,,8,,1,429400,gal,361900,2026-11-01,4',
      'TMF,TANK,tank,hogs,liquid,circular,,,90,14,,1,,,,,2',
      'FCD,BASIN,earthen_basin,dairy,liquid,basin,180,120,,14,3,2,,,,,3',
      'RSF,SLAB,stack,beef,solid,,,,,,,,1800,,1210,2026-11-01,4',
    ].join('\n')
    const { rows, problems } = parseStorageCsv(text)
    expect(problems).toEqual([])
    expect(rows.map((r) => [r.code, r.kind, r.species, r.shape, r.capacityUnit])).toEqual([
      ['P1', 'deep_pit', 'swine', 'rectangular', 'gal'],
      ['TANK', 'tank', 'swine', 'circular', null],
      ['BASIN', 'earthen_basin', 'dairy', 'basin', null],
      ['SLAB', 'stack', 'beef', null, 'ton'], // unit taken from the form when a capacity is given
    ])
    expect(rows[2]).toMatchObject({ lengthFt: 180, widthFt: 120, depthFt: 14, sideSlope: 3, freeboardFt: 2, accessPoints: 3 })
  })

  it.each([
    ['QBF,P1,pond,swine,liquid,,,,,,,,,,,,', 'kind', /expected one of deep_pit, earthen_basin, lagoon, tank, stack, other; found "pond"/],
    ['QBF,P1,stack,swine,liquid,,,,,,,,,,,,', 'form', /a stack holds solid manure/],
    ['QBF,P1,deep_pit,swine,liquid,rectangular,200,,,8,,,,,,,', 'width_ft', /a rectangular storage needs width_ft/],
    ['FCD,B,earthen_basin,dairy,liquid,basin,100,40,,14,3,,,,,,', 'side_slope', /slopes of 3:1 over 14 ft meet before the bottom/],
    ['QBF,P1,deep_pit,swine,liquid,rectangular,200,41,,8,,8,,,,,', 'freeboard_ft', /freeboard 8 ft is not less than the depth 8 ft/],
    ['QBF,P1,deep_pit,swine,liquid,,200,41,,8,,,,,,,', 'shape', /dimensions are given without a shape/],
    ['QBF,P1,deep_pit,swine,liquid,,,,,,,,,,,,27', 'access_points', /expected at most 26/],
  ])('refuses %s (%s)', (row, column, message) => {
    const { rows, problems } = parseStorageCsv(`${header}\n${row}\n`)
    expect(rows).toEqual([])
    expect(problems.find((p) => p.column === column && p.severity !== 'warning')?.message).toMatch(message)
  })

  it('warns, without refusing, about an amount above capacity and an undated amount', () => {
    const { rows, problems } = parseStorageCsv(`${header}\nLKP,SHED,stack,poultry,solid,,,,,,,,650,ton,700,,3\n`)
    expect(rows).toHaveLength(1)
    expect(problems.map((p) => [p.severity, p.column])).toEqual([
      ['warning', 'current_amount'],
      ['warning', 'current_amount_on'],
    ])
  })

  it('refuses a length column whose header says metres', () => {
    const { problems } = parseStorageCsv('farm,storage,kind,species,form,shape,length (m),width_ft,depth_ft\nQ,P,tank,swine,liquid,rectangular,10,5,3\n')
    expect(problems[0]).toMatchObject({ code: 'unit_not_supported', column: 'length_ft' })
  })

  it('labels access points A, B, C …', () => {
    expect(accessPointLabels(3)).toEqual(['A', 'B', 'C'])
  })
})
