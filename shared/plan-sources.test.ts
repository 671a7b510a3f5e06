import { describe, expect, it } from 'vitest'
import { computePlanSources } from './plan-sources.ts'

// invented sources in the reference-set shape
const a = { id: 'a', title: 'Manure book', publisher: 'Tamarack Valley Extension', year: 2020, confidence: 'H' }
const b = { id: 'b', title: 'Crop removal tables', publisher: 'Tamarack Valley Extension', year: 2021, confidence: 'M' }
const c = { id: 'c', title: 'Soil-test classes', publisher: 'Tamarack Valley Extension', year: 2019, confidence: 'H' }

describe('computePlanSources', () => {
  it('reads plan-level sources and each field’s source ids', () => {
    const r = computePlanSources({ sources: [a, b, c], fields: [{ field: 'F1', source_ids: ['a', 'c'] }, { field: 'F2', source_ids: ['b'] }] })
    expect(r.sources).toEqual([a, b, c])
    expect(r.byField.get('F1')).toEqual([a, c])
    expect(r.byField.get('F2')).toEqual([b])
  })

  it('lists the sources that older plans repeat in every field once, in order of first citation', () => {
    const r = computePlanSources({ fields: [{ field: 'F1', sources: [b, a] }, { field: 'F2', sources: [a, b, c] }, { field: 'F3', sources: [b, a] }] })
    expect(r.sources).toEqual([b, a, c])
    expect(r.byField.get('F2')).toEqual([a, b, c])
    expect(r.byField.get('F3')).toEqual([b, a])
  })

  it('reads a plan that mixes both shapes, and keeps entries without an id (deduplicated by content)', () => {
    const r = computePlanSources({ sources: [a], fields: [{ field: 'F1', source_ids: ['a'] }, { field: 'F2', sources: [{ ...a }, 'a hand-written note', 'a hand-written note'] }] })
    expect(r.sources).toEqual([a, 'a hand-written note'])
    expect(r.byField.get('F2')).toEqual([a, 'a hand-written note', 'a hand-written note'])
  })

  it('gives an id that no listed source carries as the bare id', () => {
    const r = computePlanSources({ sources: [a], fields: [{ field: 'F1', source_ids: ['a', 'gone'] }] })
    expect(r.byField.get('F1')).toEqual([a, 'gone'])
  })

  it('gives empty lists for a plan without sources, missing fields or values of the wrong kind', () => {
    expect(computePlanSources(null)).toEqual({ sources: [], byField: new Map() })
    expect(computePlanSources({ sources: 'x', fields: 'y' })).toEqual({ sources: [], byField: new Map() })
    const r = computePlanSources({ fields: [null, 3, { field: 'F1' }, { field: 7, sources: [a] }] })
    expect(r.sources).toEqual([])
    expect(r.byField.get('F1')).toEqual([])
  })
})
