import type { Kysely } from 'kysely'
import { migrateToLatest } from '../../shared/db/migrations.ts'
import { openWriter } from '../../shared/db/open-database.ts'
import type { Database } from '../../shared/db/schema.ts'

/**
 * Test fixtures for the lab, plan and export tests, written straight into the tables through
 * Kysely (the farms/storages/fields importers are tested on their own). Invented data only.
 */
export interface SeedStorage {
  code: string
  kind: Database['storages']['kind']
  species: string
  form: 'liquid' | 'solid'
  shape?: string
  lengthFt?: number
  widthFt?: number
  diameterFt?: number
  depthFt?: number
  sideSlope?: number
  freeboardFt?: number
  capacity?: number
  capacityUnit?: 'gal' | 'ton'
  currentAmount?: number
  currentDepthFt?: number
}

export interface SeedField {
  code: string
  name?: string
  acres: number
  storage?: string
  method?: string
  incorporatedWithinHours?: number
  overrides?: Record<string, unknown>
  seasons?: { season: number; crop: string; yieldGoal?: number; previousCrop?: string }[]
  soil?: { pPpm?: number; pMethod?: string; kPpm?: number; sampledOn?: string }
  applications?: {
    storage?: string
    appliedOn: string
    amount: number
    amountUnit: 'gal' | 'ton'
    method?: string
    incorporatedWithinHours?: number
    applicator?: string
    notes?: string
  }[]
}

export interface SeedFarm {
  code: string
  name?: string
  storages?: SeedStorage[]
  fields?: SeedField[]
}

export async function seedFarms(db: Kysely<Database>, farms: readonly SeedFarm[], organization = 'loamridge'): Promise<void> {
  let org = await db.selectFrom('organizations').select('id').where('code', '=', organization).executeTakeFirst()
  if (!org) {
    org = await db.insertInto('organizations').values({ code: organization, name: 'Loamridge Nutrient Advisors' }).returning('id').executeTakeFirstOrThrow()
  }
  for (const f of farms) {
    const farm = await db
      .insertInto('farms')
      .values({ organization_id: org.id, code: f.code, name: f.name ?? `${f.code} farm` })
      .returning('id')
      .executeTakeFirstOrThrow()
    const storageIds = new Map<string, number>()
    for (const s of f.storages ?? []) {
      const row = await db
        .insertInto('storages')
        .values({
          farm_id: farm.id,
          code: s.code,
          kind: s.kind,
          species: s.species,
          form: s.form,
          shape: s.shape ?? null,
          length_ft: s.lengthFt ?? null,
          width_ft: s.widthFt ?? null,
          diameter_ft: s.diameterFt ?? null,
          depth_ft: s.depthFt ?? null,
          side_slope: s.sideSlope ?? null,
          freeboard_ft: s.freeboardFt ?? null,
          capacity: s.capacity ?? null,
          capacity_unit: s.capacityUnit ?? null,
          current_amount: s.currentAmount ?? null,
          current_depth_ft: s.currentDepthFt ?? null,
        })
        .returning('id')
        .executeTakeFirstOrThrow()
      storageIds.set(s.code, row.id)
    }
    for (const fl of f.fields ?? []) {
      const field = await db
        .insertInto('fields')
        .values({
          farm_id: farm.id,
          code: fl.code,
          name: fl.name ?? null,
          acres: fl.acres,
          storage_id: fl.storage ? storageIds.get(fl.storage)! : null,
          method: fl.method ?? null,
          incorporated_within_hours: fl.incorporatedWithinHours ?? null,
          overrides: fl.overrides ? JSON.stringify(fl.overrides) : null,
        })
        .returning('id')
        .executeTakeFirstOrThrow()
      for (const cs of fl.seasons ?? []) {
        await db
          .insertInto('crop_seasons')
          .values({ field_id: field.id, season: cs.season, crop: cs.crop, yield_goal: cs.yieldGoal ?? null, previous_crop: cs.previousCrop ?? null })
          .execute()
      }
      if (fl.soil) {
        await db
          .insertInto('soil_tests')
          .values({ field_id: field.id, p_ppm: fl.soil.pPpm ?? null, p_method: fl.soil.pMethod ?? null, k_ppm: fl.soil.kPpm ?? null, sampled_on: fl.soil.sampledOn ?? null })
          .execute()
      }
      for (const a of fl.applications ?? []) {
        await db
          .insertInto('applications')
          .values({
            field_id: field.id,
            storage_id: a.storage ? storageIds.get(a.storage)! : null,
            applied_on: a.appliedOn,
            amount: a.amount,
            amount_unit: a.amountUnit,
            method: a.method ?? null,
            incorporated_within_hours: a.incorporatedWithinHours ?? null,
            applicator: a.applicator ?? null,
            notes: a.notes ?? null,
          })
          .execute()
      }
    }
  }
}

/** Creates a migrated database file and seeds it; closes it again so that the CLI can open it. */
export async function seedDatabaseFile(file: string, farms: readonly SeedFarm[]): Promise<void> {
  const opened = openWriter(file)
  try {
    await migrateToLatest(opened.db)
    await seedFarms(opened.db, farms)
  } finally {
    await opened.close()
  }
}

/** Two farms of the lab tests: a swine finisher with two deep pits, a broiler farm with a litter stack. */
export const labTestFarms: SeedFarm[] = [
  {
    code: 'QBF',
    name: 'Quillback Finishing',
    storages: [
      { code: 'P1', kind: 'deep_pit', species: 'swine', form: 'liquid' },
      { code: 'P2', kind: 'deep_pit', species: 'swine', form: 'liquid' },
    ],
  },
  {
    code: 'LKP',
    name: 'Larkspur Poultry',
    storages: [{ code: 'S1', kind: 'stack', species: 'poultry', form: 'solid' }],
  },
]
