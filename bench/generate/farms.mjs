// Invented farms and storages for the benchmarks, in the files `pitside farms import` and
// `pitside storages import` read. Everything here is made up (region: the invented Tamarack Valley).
import { pad } from '../lib/prng.mjs'

const first = ['Ansel', 'Brisa', 'Corin', 'Delphine', 'Emrik', 'Fenna', 'Galen', 'Hester', 'Ivo', 'Jorunn', 'Kasimir', 'Liesl', 'Mattis', 'Nella', 'Osric', 'Perpetua']
const last = ['Quarry', 'Rushmere', 'Sallowby', 'Thorncombe', 'Underhay', 'Vellacott', 'Wendover', 'Yarrowby', 'Ashgrove', 'Birchall', 'Coldharbour', 'Dunmore']
const place = ['Tamarack', 'Heron Flats', 'Sorrel Creek', 'Millrace', 'Cinder Hill', 'Otterbrook', 'Juniper Bend', 'Kestrel Ridge', 'Lantern Hollow', 'Marlpit']
const what = ['Dairy', 'Finishing', 'Feeders', 'Poultry', 'Mixed Farm', 'Acres', 'Homestead']

/**
 * The kinds of storage the benchmarks spread over, with as-is analysis values typical of each
 * (invented, but inside common published ranges so the plausibility checks pass quietly).
 * Liquid: lb per 1000 gal; solid: lb per ton. dm: dry matter %; nh4: ammonium-N as a share of total N.
 */
export const storageKinds = [
  { kind: 'deep_pit', species: 'swine', form: 'liquid', code: 'PIT', dm: [4, 8], tn: [40, 70], nh4: [0.65, 0.8], p: [25, 48], k: [26, 44], s: [3, 6], ph: [7.2, 8.1], capacity: [600_000, 1_400_000] },
  { kind: 'earthen_basin', species: 'dairy', form: 'liquid', code: 'BASIN', dm: [4, 9], tn: [20, 34], nh4: [0.4, 0.55], p: [9, 17], k: [18, 30], s: [2, 4], ph: [7.0, 7.8], capacity: [1_500_000, 4_000_000] },
  { kind: 'lagoon', species: 'dairy', form: 'liquid', code: 'LAG', dm: [1.8, 3.2], tn: [8, 15], nh4: [0.55, 0.75], p: [3, 7], k: [9, 16], s: [0.8, 2], ph: [7.4, 8.2], capacity: [1_000_000, 3_000_000] },
  { kind: 'tank', species: 'swine', form: 'liquid', code: 'TANK', dm: [3, 6], tn: [33, 55], nh4: [0.6, 0.78], p: [18, 36], k: [24, 40], s: [2, 5], ph: [7.1, 8.0], capacity: [300_000, 900_000] },
  { kind: 'stack', species: 'beef', form: 'solid', code: 'SLAB', dm: [30, 60], tn: [10, 24], nh4: [0.12, 0.3], p: [7, 15], k: [10, 20], s: [1.5, 3], ph: [7.5, 8.6], capacity: [500, 2000] },
  { kind: 'stack', species: 'poultry', form: 'solid', code: 'LITTER', dm: [65, 80], tn: [45, 75], nh4: [0.12, 0.22], p: [45, 70], k: [40, 60], s: [8, 14], ph: [7.6, 8.8], capacity: [200, 900] },
]

export function farmCode(i) {
  return `F${pad(i + 1, 4)}`
}

/** `count` farms with 1–3 storages each; deterministic for a given random source. */
export function makeFarms(random, count) {
  const farms = []
  for (let i = 0; i < count; i++) {
    const code = farmCode(i)
    const storages = []
    const n = random.int(1, 3)
    const used = new Set()
    for (let s = 0; s < n; s++) {
      const type = random.pick(storageKinds)
      let storageCode = type.code
      for (let k = 2; used.has(storageCode); k++) storageCode = `${type.code}-${k}`
      used.add(storageCode)
      storages.push({ code: storageCode, type, capacity: Math.round(random.between(...type.capacity)) })
    }
    farms.push({
      code,
      name: `${random.pick(place)} ${random.pick(what)} ${i + 1}`,
      operator: `${random.pick(first)} ${random.pick(last)}`,
      storages,
    })
  }
  return farms
}

export function farmsCsv(farms) {
  const lines = ['farm,name,operator_name,region']
  for (const f of farms) lines.push(`${f.code},${f.name},${f.operator},Tamarack Valley`)
  return lines.join('\n') + '\n'
}

export function storagesCsv(farms) {
  const lines = ['farm,storage,kind,species,form,name,capacity,capacity_unit,current_amount,current_amount_on']
  for (const f of farms) {
    for (const s of f.storages) {
      const unit = s.type.form === 'liquid' ? 'gal' : 'ton'
      lines.push(`${f.code},${s.code},${s.type.kind},${s.type.species},${s.type.form},${s.type.species} ${s.type.kind.replace('_', ' ')},${s.capacity},${unit},${Math.round(s.capacity * 0.7)},2026-11-01`)
    }
  }
  return lines.join('\n') + '\n'
}
