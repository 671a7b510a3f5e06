import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { PlanView } from '../../shared/api-types.ts'
import { findPlanView } from '../../shared/db/viewer-queries.ts'
import { computeRate } from '../../shared/rate.ts'
import { tryCase, whatIfCase } from '../../src/components/what-if-case.ts'
import { makeTempDatabase, type TempDir } from '../helpers/temp-db.ts'
import { seedViewerDatabase } from '../helpers/viewer-seed.ts'

// The what-if panel runs in the browser; its arithmetic is the engine's, checked here in Node.
let plan: PlanView
let tmp: TempDir
beforeAll(async () => {
  const t = await makeTempDatabase()
  const seed = await seedViewerDatabase(t.db)
  plan = (await findPlanView(t.db, seed.plans['QBF-v2']!))!
  tmp = t.tmp
  await t.close()
})
afterAll(() => tmp.cleanup())

describe('what-if cases', () => {
  it('reproduces every planned field from its stored case when nothing is changed', () => {
    for (const field of plan.result.fields!) {
      const { result, error } = tryCase(plan, field, field.method as 'injected', null)
      expect(error, field.field).toBeNull()
      expect(result!.rate).toBe(field.rate)
      expect(result!.supplied).toEqual(field.supplied)
      expect(result!.total_manure).toBe(field.total_manure)
    }
  })

  it('evaluates a fixed rate as given and says what it supplies', () => {
    const field = plan.result.fields![0]!
    const { result } = tryCase(plan, field, field.method as 'injected', 4000)
    expect(result!.rate).toBe(4000)
    expect(result!.limited_by).toBe('fixed_rate')
    const again = computeRate({ ...(plan.cases[field.field] as object), fixed_rate: 4000 } as Parameters<typeof computeRate>[0])
    expect(result!.supplied).toEqual(again.supplied)
  })

  it("drops the advisor's factor overrides when the method changes, and keeps them otherwise", () => {
    const field = plan.result.fields![0]!
    const withOverride = { ...plan, cases: { [field.field]: { ...(plan.cases[field.field] as object), application: { method: field.method, ammonium_retention: 0.5 } } } }
    expect(whatIfCase(withOverride, field, field.method as 'injected', null).value!.application).toEqual({ method: field.method, ammonium_retention: 0.5 })
    expect(whatIfCase(withOverride, field, 'broadcast', null).value!.application).toEqual({ method: 'broadcast' })
    expect(whatIfCase(withOverride, field, 'broadcast_incorporated', null).value!.application).toEqual({ method: 'broadcast_incorporated', incorporated_within_hours: 24 })
  })

  it('rebuilds a case from the plan numbers when the plan stores no inputs', () => {
    const bare = { ...plan, cases: {} }
    const field = plan.result.fields![0]!
    const { result, error } = tryCase(bare, field, field.method as 'injected', null)
    expect(error).toBeNull()
    expect(result!.rate).toBe(field.rate)
  })

  it('says so instead of guessing when a storage has no analysis', () => {
    const field = plan.result.fields![0]!
    const noAnalysis = { ...plan, cases: {}, result: { ...plan.result, storages: [] } }
    expect(tryCase(noAnalysis, field, 'injected', null).error).toMatch(/does not carry the analysis/)
  })
})
