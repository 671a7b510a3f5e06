// Invented fields (one row per field and season, the layout `pitside fields import` reads) and a
// few lab results per storage, so that every field has what a plan needs.
import { decimal, pad } from '../lib/prng.mjs'
import { labColumns } from './labs.mjs'

const crops = [
  { crop: 'corn_grain', yieldGoal: [150, 220] },
  { crop: 'corn_silage', yieldGoal: [18, 28] },
  { crop: 'wheat', yieldGoal: [60, 100] },
  { crop: 'grass_hay', yieldGoal: [2.5, 5] },
  { crop: 'soybean', yieldGoal: [40, 65] },
]
const previous = ['corn', 'soybean', 'wheat', 'grass_hay', 'none']
const liquidMethods = ['injected', 'broadcast', 'broadcast_incorporated', 'irrigated']
const solidMethods = ['broadcast', 'broadcast_incorporated']

export const fieldColumns = [
  'farm', 'field', 'name', 'acres', 'season', 'crop', 'yield_goal', 'previous_crop', 'soil_test_p_ppm', 'soil_test_p_method',
  'soil_test_k_ppm', 'soil_test_date', 'storage', 'method', 'incorporated_within_hours',
]

export function fieldCode(i) {
  return `FLD-${pad(i + 1, 3)}`
}

/** `perFarm` fields for each farm for `season`, each spread with one of the farm's storages. */
export function fieldsCsv(random, farms, perFarm, season) {
  const lines = [fieldColumns.join(',')]
  for (const f of farms) {
    for (let i = 0; i < perFarm; i++) {
      const storage = f.storages[i % f.storages.length]
      const c = random.pick(crops)
      const method = random.pick(storage.type.form === 'liquid' ? liquidMethods : solidMethods)
      lines.push(
        [
          f.code, fieldCode(i), `Field ${i + 1}`, decimal(random.between(8, 160), 1), season, c.crop, decimal(random.between(...c.yieldGoal), 1),
          random.pick(previous), Math.round(random.between(8, 60)), 'bray1', Math.round(random.between(90, 220)), '2026-09-15',
          storage.code, method, method === 'broadcast_incorporated' ? random.pick([4, 12, 24, 72]) : '',
        ].join(','),
      )
    }
  }
  return lines.join('\n') + '\n'
}

/** `perStorage` recent lab results for every storage of the farms (2026 samples). */
export function recentLabsCsv(random, farms, perStorage) {
  const lines = [labColumns.join(',')]
  let report = 1
  let sample = 1
  for (const f of farms) {
    const reportId = `CRA-26-${pad(report++, 5)}`
    for (const s of f.storages) {
      const t = s.type
      for (let k = 0; k < perStorage; k++) {
        const tn = random.between(...t.tn)
        lines.push(
          [
            reportId, `P26-${pad(sample++, 7)}`, `2026-${pad(4 + k * 3, 2)}-1${k}`, 'Cobble Run Analytical', f.code, s.code, t.form, t.species, 'as_is',
            t.form === 'liquid' ? 'lb_per_1000gal' : 'lb_per_ton', decimal(random.between(...t.dm), 2), decimal(tn, 2),
            decimal(tn * random.between(...t.nh4), 2), decimal(random.between(...t.p), 2), decimal(random.between(...t.k), 2),
            decimal(random.between(...t.s), 2), decimal(random.between(...t.ph), 1), '',
          ].join(','),
        )
      }
    }
  }
  return lines.join('\n') + '\n'
}
