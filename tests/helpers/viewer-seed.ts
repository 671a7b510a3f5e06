import type { Kysely } from 'kysely'
import { hashPassword } from '../../shared/db/passwords.ts'
import type { Database } from '../../shared/db/schema.ts'
import { insertUser } from '../../shared/db/users.ts'
import { computeRate } from '../../shared/rate.ts'
import type { RateCase } from '../../shared/rate-case.ts'

// Invented data for the viewer's tests: two firms (the demo firm and an unrelated one), farms with
// storages, lab results over three seasons, fields and stored plans whose JSON has the shape that
// `pitside plan --json` prints. The numbers are made up but consistent (rate = need ÷ available).

export const seedPassword = 'pitside-demo'
let hashOnce: Promise<string> | null = null
/** One scrypt hash of the seed password, made once per test process (each hash takes a while). */
export const seedPasswordHash = () => (hashOnce ??= hashPassword(seedPassword))

interface StorageSeed {
  code: string
  name: string
  kind: Database['storages']['kind']
  species: string
  form: 'liquid' | 'solid'
  capacity: number
  inStorage: number
  /** as-is lb per 1000 gal or per ton: dry matter %, total N, ammonium-N, P2O5, K2O */
  base: [number, number, number, number, number]
}

interface FieldSeed {
  code: string
  name: string
  acres: number
  storage: string
  method: string
  crop: string
  yieldGoal: number
  need: [number, number, number]
}

interface FarmSeed {
  org: string
  code: string
  name: string
  operator: string
  storages: StorageSeed[]
  fields: FieldSeed[]
  planVersions: number
}

export const seedFarms: FarmSeed[] = [
  {
    org: 'loamridge',
    code: 'QBF',
    name: 'Quillback Finishing',
    operator: 'Ilse Varga',
    storages: [
      { code: 'PIT-N', name: 'North barn deep pit', kind: 'deep_pit', species: 'swine', form: 'liquid', capacity: 1_100_000, inStorage: 820_000, base: [5.8, 48, 34, 30, 27] },
      { code: 'PIT-S', name: 'South barn deep pit', kind: 'deep_pit', species: 'swine', form: 'liquid', capacity: 900_000, inStorage: 610_000, base: [6.4, 52, 36, 33, 29] },
    ],
    fields: [
      { code: 'N40', name: 'North forty', acres: 40, storage: 'PIT-N', method: 'injected', crop: 'corn_grain', yieldGoal: 190, need: [150, 55, 40] },
      { code: 'CREEK', name: 'Creek bottom', acres: 62.5, storage: 'PIT-N', method: 'broadcast_incorporated', crop: 'corn_grain', yieldGoal: 175, need: [140, 50, 60] },
      { code: 'HILL', name: 'Schoolhouse hill', acres: 35, storage: 'PIT-S', method: 'injected', crop: 'corn_silage', yieldGoal: 24, need: [170, 70, 150] },
    ],
    planVersions: 2,
  },
  {
    org: 'loamridge',
    code: 'FCD',
    name: 'Ferncastle Dairy',
    operator: 'Aurelio Penn',
    storages: [
      { code: 'BASIN', name: 'Earthen basin', kind: 'earthen_basin', species: 'dairy', form: 'liquid', capacity: 3_400_000, inStorage: 2_350_000, base: [4.9, 24, 11, 10, 21] },
    ],
    fields: [
      { code: 'E1', name: 'East meadow', acres: 55, storage: 'BASIN', method: 'broadcast', crop: 'grass_hay', yieldGoal: 4, need: [120, 40, 160] },
      { code: 'E2', name: 'Lane field', acres: 48, storage: 'BASIN', method: 'injected', crop: 'corn_silage', yieldGoal: 22, need: [160, 60, 140] },
    ],
    planVersions: 1,
  },
  {
    org: 'loamridge',
    code: 'RSF',
    name: 'Red Shale Feeders',
    operator: 'Dagny Ruelle',
    storages: [
      { code: 'SLAB', name: 'Stacking slab', kind: 'stack', species: 'beef', form: 'solid', capacity: 1400, inStorage: 960, base: [34, 13, 2.5, 9, 12] },
    ],
    fields: [{ code: 'W', name: 'West quarter', acres: 150, storage: 'SLAB', method: 'broadcast_incorporated', crop: 'corn_grain', yieldGoal: 160, need: [130, 60, 50] }],
    planVersions: 1,
  },
  {
    org: 'brightwater',
    code: 'BWD',
    name: 'Bramblegate Dairy',
    operator: 'Oren Castile',
    storages: [
      { code: 'LAG', name: 'Lagoon', kind: 'lagoon', species: 'dairy', form: 'liquid', capacity: 2_000_000, inStorage: 1_500_000, base: [1.9, 12, 7, 4, 12] },
    ],
    fields: [{ code: 'B1', name: 'Back field', acres: 30, storage: 'LAG', method: 'irrigated', crop: 'corn_silage', yieldGoal: 20, need: [150, 50, 120] }],
    planVersions: 1,
  },
]

type SeedAnalysis = { total_n: number; ammonium_n: number; p2o5: number; k2o: number; dry_matter_pct: number }

/** The calculator case of one seeded field, as a plan stores it in `inputs.fields[].case`. */
export function seedFieldCase(field: FieldSeed, storage: StorageSeed, analysis: SeedAnalysis): RateCase {
  const liquid = storage.form === 'liquid'
  return {
    manure: {
      form: storage.form,
      species: storage.species as RateCase['manure']['species'],
      units: liquid ? 'lb_per_1000gal' : 'lb_per_ton',
      basis: 'as_is',
      dry_matter_pct: analysis.dry_matter_pct,
      total_n: analysis.total_n,
      ammonium_n: analysis.ammonium_n,
      p2o5: analysis.p2o5,
      k2o: analysis.k2o,
    },
    application: field.method === 'broadcast_incorporated' ? { method: 'broadcast_incorporated', incorporated_within_hours: 24 } : { method: field.method as 'injected' },
    need: { n: field.need[0], p2o5: field.need[1], k2o: field.need[2] },
    basis: 'lowest',
    units: 'us',
    acres: field.acres,
    applicator_capacity: liquid ? 6000 : 15,
  }
}

/** A stored-plan field result: the engine's own output for the field, plus the field's labels. */
export function seedFieldResult(field: FieldSeed, storage: StorageSeed, analysis: SeedAnalysis) {
  const r = computeRate(seedFieldCase(field, storage, analysis))
  return {
    field: field.code,
    acres: field.acres,
    crop: field.crop,
    storage: storage.code,
    method: field.method,
    incorporated_within_hours: field.method === 'broadcast_incorporated' ? 24 : null,
    rate: r.rate,
    rate_unit: r.rate_unit,
    limited_by: r.limited_by,
    need: r.need,
    applied: r.applied,
    supplied: r.supplied,
    balance: r.balance,
    supplemental: r.supplemental,
    total_manure: r.total_manure,
    loads: r.loads,
    warnings: r.warnings,
    factors: r.factors,
    sources: r.sources,
    residual_n: r.residual_n,
    reference_set: r.reference_set,
  }
}

const round = (x: number, digits = 0) => Math.round(x * 10 ** digits) / 10 ** digits

/** The id of what a lab result was reported as, added when new. */
async function kindId(db: Kysely<Database>, kind: { form: string; species: string; basis: string; units: string; per_unit: string }): Promise<number> {
  const found = await db
    .selectFrom('lab_result_kinds')
    .select('id')
    .where('form', '=', kind.form)
    .where('species', '=', kind.species)
    .where('basis', '=', kind.basis)
    .where('units', '=', kind.units)
    .where('per_unit', '=', kind.per_unit)
    .executeTakeFirst()
  if (found) return found.id
  return (await db.insertInto('lab_result_kinds').values(kind).returning('id').executeTakeFirstOrThrow()).id
}

export interface SeedResult {
  organizations: Record<string, number>
  farms: Record<string, number>
  /** plan ids by `<farm>-v<version>` */
  plans: Record<string, number>
}

/** Fills a migrated, empty database with the viewer's test data and accounts (password `pitside-demo`). */
export async function seedViewerDatabase(db: Kysely<Database>): Promise<SeedResult> {
  const out: SeedResult = { organizations: {}, farms: {}, plans: {} }
  const passwordHash = await seedPasswordHash()
  for (const [code, name] of [
    ['loamridge', 'Loamridge Nutrient Advisors'],
    ['brightwater', 'Brightwater Agronomy'],
  ] as const) {
    const { id } = await db.insertInto('organizations').values({ code, name }).returning('id').executeTakeFirstOrThrow()
    out.organizations[code] = id
  }
  let sampleNo = 0
  for (const farm of seedFarms) {
    const { id: farmId } = await db
      .insertInto('farms')
      .values({ organization_id: out.organizations[farm.org]!, code: farm.code, name: farm.name, operator_name: farm.operator, region: 'Tamarack Valley' })
      .returning('id')
      .executeTakeFirstOrThrow()
    out.farms[farm.code] = farmId
    const storageIds: Record<string, number> = {}
    const latest: Record<string, { total_n: number; ammonium_n: number; p2o5: number; k2o: number; dm: number; n: number }> = {}
    for (const s of farm.storages) {
      const { id } = await db
        .insertInto('storages')
        .values({
          farm_id: farmId,
          code: s.code,
          name: s.name,
          kind: s.kind,
          species: s.species,
          form: s.form,
          capacity: s.capacity,
          capacity_unit: s.form === 'liquid' ? 'gal' : 'ton',
          current_amount: s.inStorage,
          current_amount_on: '2026-11-01',
        })
        .returning('id')
        .executeTakeFirstOrThrow()
      storageIds[s.code] = id
      // three seasons, two sampling rounds a season, two or three samples a round, a slow drift
      for (const [season, drift] of [[2024, 0.92], [2025, 1.0], [2026, 1.06]] as const) {
        for (const [month, count] of [['04', 2], ['10', 3]] as const) {
          for (let k = 0; k < count; k++) {
            sampleNo++
            const wobble = 1 + ((sampleNo * 37) % 11 - 5) / 50
            const [dm, tn, nh4, p, kk] = s.base.map((v) => round(v * drift * wobble, 1)) as [number, number, number, number, number]
            // one lab report per result, numbered as the lab numbers them
            const report = await db
              .insertInto('lab_reports')
              .values({ lab: 'Cobble Run Analytical', report_number: `CRA-${String(season).slice(2)}-${String(100 + sampleNo).padStart(4, '0')}` })
              .returning('id')
              .executeTakeFirstOrThrow()
            await db
              .insertInto('lab_results')
              .values({
                lab_report_id: report.id,
                storage_id: id,
                sample_code: `${farm.code}-${s.code}-${season}${month}-${k + 1}`,
                sampled_on: `${season}-${month}-${String(10 + k * 3).padStart(2, '0')}`,
                kind_id: await kindId(db, {
                  form: s.form,
                  species: s.species,
                  basis: 'as_is',
                  units: s.form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton',
                  per_unit: s.form === 'liquid' ? '1000gal' : 'ton',
                }),
                reported: '{}',
                dry_matter_pct: dm,
                total_n: tn,
                ammonium_n: nh4,
                organic_n: round(tn - nh4, 1),
                p2o5: p,
                k2o: kk,
              })
              .execute()
            if (season === 2026 && month === '10') {
              const l = (latest[s.code] ??= { total_n: 0, ammonium_n: 0, p2o5: 0, k2o: 0, dm: 0, n: 0 })
              l.total_n += tn
              l.ammonium_n += nh4
              l.p2o5 += p
              l.k2o += kk
              l.dm += dm
              l.n++
            }
          }
        }
      }
    }
    const fieldIds: Record<string, number> = {}
    for (const f of farm.fields) {
      const { id } = await db
        .insertInto('fields')
        .values({ farm_id: farmId, code: f.code, name: f.name, acres: f.acres, storage_id: storageIds[f.storage]!, method: f.method })
        .returning('id')
        .executeTakeFirstOrThrow()
      fieldIds[f.code] = id
      await db.insertInto('crop_seasons').values({ field_id: id, season: 2027, crop: f.crop, yield_goal: f.yieldGoal, previous_crop: 'soybean' }).execute()
      await db.insertInto('soil_tests').values({ field_id: id, sampled_on: '2026-09-20', p_ppm: 18, p_method: 'bray1', k_ppm: 130 }).execute()
    }

    for (let version = 1; version <= farm.planVersions; version++) {
      const storages = farm.storages.map((s) => {
        const l = latest[s.code]!
        const analysis = { per: s.form === 'liquid' ? '1000gal' : 'ton', dry_matter_pct: round(l.dm / l.n, 2), total_n: round(l.total_n / l.n, 2), ammonium_n: round(l.ammonium_n / l.n, 2), organic_n: round((l.total_n - l.ammonium_n) / l.n, 2), p2o5: round(l.p2o5 / l.n, 2), k2o: round(l.k2o / l.n, 2) }
        return { seed: s, analysis }
      })
      const cases: { code: string; case: RateCase }[] = []
      const fields = farm.fields.map((f) => {
        const st = storages.find((s) => s.seed.code === f.storage)!
        // version 2 plans with a slightly lower N need, so versions differ
        const planned = { ...f, need: version === 1 ? f.need : ([f.need[0] - 10, f.need[1], f.need[2]] as [number, number, number]) }
        cases.push({ code: f.code, case: seedFieldCase(planned, st.seed, st.analysis) })
        return seedFieldResult(planned, st.seed, st.analysis)
      })
      const result = {
        farm: farm.code,
        season: 2027,
        version,
        reference_set: fields[0]!.reference_set.name,
        created_at: `2026-11-1${version}T09:00:00.000Z`,
        storages: storages.map(({ seed, analysis }) => ({
          storage: seed.code,
          unit: seed.form === 'liquid' ? 'gal' : 'ton',
          in_storage: seed.inStorage,
          planned: fields.filter((f) => f.storage === seed.code).reduce((a, f) => a + (f.total_manure ?? 0), 0),
          samples: 3,
          analysis,
          cv: { total_n: 6.1, ammonium_n: 5.2, p2o5: 9.8, k2o: 4.4 },
        })),
        fields,
      }
      const { id: planId } = await db
        .insertInto('plans')
        .values({
          farm_id: farmId,
          season: 2027,
          version,
          reference_set: result.reference_set,
          reference_set_version: fields[0]!.reference_set.version,
          basis: 'lowest',
          as_of: '2026-11-15',
          inputs: JSON.stringify({ farm: farm.code, season: 2027, as_of: '2026-11-15', fields: cases }),
          result: JSON.stringify(result),
          created_by: 'maren@loamridge.example',
          created_at: result.created_at,
        })
        .returning('id')
        .executeTakeFirstOrThrow()
      out.plans[`${farm.code}-v${version}`] = planId
      for (const f of fields) {
        await db
          .insertInto('plan_fields')
          .values({
            plan_id: planId,
            field_id: fieldIds[f.field]!,
            field_code: f.field,
            acres: f.acres,
            crop: f.crop,
            storage_id: storageIds[f.storage]!,
            method: f.method,
            rate: f.rate,
            rate_unit: f.rate_unit,
            limited_by: f.limited_by,
            need_n: f.need.n,
            need_p2o5: f.need.p2o5,
            need_k2o: f.need.k2o,
            supplied_n: f.supplied.n,
            supplied_p2o5: f.supplied.p2o5,
            supplied_k2o: f.supplied.k2o,
            total_manure: f.total_manure,
            loads: f.loads?.field ?? null,
            detail: JSON.stringify(f),
            warnings: JSON.stringify(f.warnings),
            applied_n: f.applied.n,
            applied_p2o5: f.applied.p2o5,
            applied_k2o: f.applied.k2o,
            supplemental_n: f.supplemental.n,
            supplemental_p2o5: f.supplemental.p2o5,
            supplemental_k2o: f.supplemental.k2o,
          })
          .execute()
      }
    }
  }

  const accounts = [
    { org: 'loamridge', email: 'maren@loamridge.example', name: 'Maren Castellano', role: 'advisor' as const, farms: [] },
    { org: 'loamridge', email: 'teodor@loamridge.example', name: 'Teodor Brandvik', role: 'advisor' as const, farms: [] },
    { org: 'loamridge', email: 'qbf@farm.example', name: 'Ilse Varga', role: 'client' as const, farms: ['QBF'] },
    { org: 'loamridge', email: 'fcd@farm.example', name: 'Aurelio Penn', role: 'client' as const, farms: ['FCD'] },
    { org: 'brightwater', email: 'ada@brightwater.example', name: 'Ada Quennell', role: 'advisor' as const, farms: [] },
  ]
  for (const a of accounts) {
    await insertUser(db, { organizationCode: a.org, email: a.email, name: a.name, role: a.role, passwordHash, farmCodes: a.farms })
  }
  return out
}
