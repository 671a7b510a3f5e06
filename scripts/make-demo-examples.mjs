#!/usr/bin/env node
// Writes the invented demo scenario's files under examples/demo/ and the small documented example
// files examples/<format>.csv. Seeded: running it again writes the same bytes. The output is
// committed; `pitside demo` imports it through the real import commands.
//
//   node scripts/make-demo-examples.mjs
//
// Everything here is invented: the Tamarack Valley, its farms, people and the lab "Cobble Run
// Analytical". Manure analyses are drawn around typical values per storage (from memory, for an
// invented scenario) and kept inside the published ranges where Pitside's reference sets have them:
// swine finishing liquid 32–79 lb N, 17–54 lb P2O5, 23–48 lb K2O per 1000 gal (Iowa State PMR 1003);
// broiler litter 62 / 62 / 56 lb/ton ± 50 % (Univ. of Georgia C933). Ammonium shares follow Iowa
// State (1998): 60–70 % in slurry pits, 10–20 % in solid manure.
import { mkdirSync, rmSync, writeFileSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath } from 'node:url'

const root = join(dirname(fileURLToPath(import.meta.url)), '..')
const demoDir = join(root, 'examples', 'demo')
const labsDir = join(demoDir, 'labs')

// ── seeded randomness (mulberry32) ────────────────────────────────────────────────────────────
let seed = 20261115
function random() {
  seed = (seed + 0x6d2b79f5) | 0
  let t = seed
  t = Math.imul(t ^ (t >>> 15), t | 1)
  t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296
}
function normal(mean, sd) {
  const u = 1 - random()
  const v = random()
  return mean + sd * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v)
}
const between = (a, b) => a + (b - a) * random()
const pick = (list) => list[Math.floor(random() * list.length)]
const round = (x, d = 0) => (d < 0 ? Math.round(x / 10 ** -d) * 10 ** -d : Number(x.toFixed(d)))
const clamp = (x, lo, hi) => Math.min(hi, Math.max(lo, x))

// ── CSV writing ───────────────────────────────────────────────────────────────────────────────
function cell(v, decimalComma = false) {
  if (v === null || v === undefined) return ''
  let s = typeof v === 'number' ? String(v) : v
  if (decimalComma && typeof v === 'number') s = s.replace('.', ',')
  return /[",;\n\r]/.test(s) ? `"${s.replaceAll('"', '""')}"` : s
}
function csv(header, rows, { delimiter = ',', decimalComma = false, bom = false, crlf = false, trailingEmpty = 0 } = {}) {
  const eol = crlf ? '\r\n' : '\n'
  const lines = [header.join(delimiter), ...rows.map((r) => header.map((h) => cell(r[h], decimalComma)).join(delimiter))]
  for (let i = 0; i < trailingEmpty; i++) lines.push(header.map(() => '').join(delimiter))
  return (bom ? '\ufeff' : '') + lines.join(eol) + eol
}
function write(path, text) {
  mkdirSync(dirname(path), { recursive: true })
  writeFileSync(path, text)
}

// ── farms and people ──────────────────────────────────────────────────────────────────────────
const region = 'Tamarack Valley'
const advisors = { maren: 'Maren Castellano', teodor: 'Teodor Brandvik' }
const farms = [
  { farm: 'QBF', name: 'Quillback Finishing', operator_name: 'Perrin Ashdown', contact_phone: '555-0141', address: '2140 Quillback Road, Tamarack Valley', notes: 'Swine finishing, two barns over deep pits under slats.', advisor: 'maren', visitDay: 8 },
  { farm: 'FCD', name: 'Ferncastle Dairy', operator_name: 'Oona Ferrand', contact_phone: '555-0152', address: '88 Ferncastle Lane, Tamarack Valley', notes: 'Dairy; earthen basin with a small reception pit at the barn.', advisor: 'maren', visitDay: 9 },
  { farm: 'RSF', name: 'Red Shale Feeders', operator_name: 'Calder Voss', contact_phone: '555-0163', address: '4100 Red Shale Road, Tamarack Valley', notes: 'Beef feedlot; pen manure scraped to a concrete stacking slab.', advisor: 'teodor', visitDay: 15 },
  { farm: 'LKP', name: 'Larkspur Poultry', operator_name: 'Mirela Stanek', contact_phone: '555-0174', address: '15 Larkspur Hollow, Tamarack Valley', notes: 'Broilers; litter stacked under roof between clean-outs.', advisor: 'teodor', visitDay: 16 },
  { farm: 'TMF', name: 'Tenmile Mixed Farm', operator_name: 'Hollis Tenbroek', contact_phone: '555-0185', address: '10 Tenmile Crossing, Tamarack Valley', notes: 'Swine in an above-ground tank; beef cows on a bedded pack.', advisor: 'teodor', visitDay: 22 },
  { farm: 'WBD', name: 'Whitlow Bend Dairy', operator_name: 'Sabine Whitlow', contact_phone: '555-0196', address: '700 Whitlow Bend Road, Tamarack Valley', notes: 'Dairy; lagoon, irrigated onto hay ground and injected for corn.', advisor: 'maren', visitDay: 23 },
].map((f) => ({ ...f, contact_email: `${f.farm.toLowerCase()}@farm.example`, region }))

// ── storages ──────────────────────────────────────────────────────────────────────────────────
const galPerFt3 = 7.4805 // 231 in³ per US gallon
function volumeFt3(s, h) {
  if (s.shape === 'rectangular') return s.length_ft * s.width_ft * h
  if (s.shape === 'circular') return (Math.PI * s.diameter_ft ** 2) / 4 * h
  // basin measured at the top; prismoidal formula V = h/6 (A0 + 4 Amid + Ah), exact for straight slopes
  const bl = s.length_ft - 2 * s.side_slope * s.depth_ft
  const bw = s.width_ft - 2 * s.side_slope * s.depth_ft
  const area = (y) => (bl + 2 * s.side_slope * y) * (bw + 2 * s.side_slope * y)
  return (h / 6) * (area(0) + 4 * area(h / 2) + area(h))
}
// profile: typical as-is analysis (lb per 1000 gal or per ton), ammonium share, within-round CV
const storages = [
  { farm: 'QBF', storage: 'P1', name: 'North barn pit', kind: 'deep_pit', species: 'swine', form: 'liquid', shape: 'rectangular', length_ft: 400, width_ft: 51, depth_ft: 8, freeboard_ft: 1, fill: 0.84, access_points: 4, notes: 'Pump-out ports along the east wall.', profile: { dm: 6.0, n: 56, nh4: 0.7, p: 38, k: 34, s: 4.2, ph: 7.6, cv: 0.15 }, bounds: { n: [33, 78], p: [18, 53], k: [24, 47] } },
  { farm: 'QBF', storage: 'P2', name: 'South barn pit', kind: 'deep_pit', species: 'swine', form: 'liquid', shape: 'rectangular', length_ft: 400, width_ft: 51, depth_ft: 8, freeboard_ft: 1, fill: 0.78, access_points: 4, notes: 'Pump-out ports along the east wall.', profile: { dm: 5.4, n: 51, nh4: 0.72, p: 33, k: 33, s: 4.0, ph: 7.7, cv: 0.14 }, bounds: { n: [33, 78], p: [18, 53], k: [24, 47] } },
  { farm: 'FCD', storage: 'BASIN', name: 'Main earthen basin', kind: 'earthen_basin', species: 'dairy', form: 'liquid', shape: 'basin', length_ft: 320, width_ft: 240, depth_ft: 14, side_slope: 3, freeboard_ft: 2, fill: 0.64, access_points: 3, notes: 'Agitation and pump-out from the ramp (A) and two bank stations (B, C).', profile: { dm: 6.8, n: 26, nh4: 0.46, p: 12.5, k: 24, s: 2.6, ph: 7.3, cv: 0.16 } },
  { farm: 'FCD', storage: 'RECV', name: 'Reception pit', kind: 'tank', species: 'dairy', form: 'liquid', shape: 'rectangular', length_ft: 20, width_ft: 12, depth_ft: 10, freeboard_ft: 1, fill: 0.6, access_points: 2, notes: 'Concrete pit at the barn; mostly transferred to the basin.', profile: { dm: 9.5, n: 31, nh4: 0.42, p: 15.5, k: 27, s: 3.1, ph: 7.1, cv: 0.12 } },
  { farm: 'RSF', storage: 'SLAB', name: 'Stacking slab', kind: 'stack', species: 'beef', form: 'solid', capacity: 4000, capacity_unit: 'ton', current_amount: 3100, access_points: 4, notes: 'Concrete slab with push walls; pile faces A to D.', profile: { dm: 52, n: 22, nh4: 0.18, p: 15, k: 21, s: 4.5, ph: 8.1, cv: 0.2 } },
  { farm: 'LKP', storage: 'SHED', name: 'Litter shed', kind: 'stack', species: 'poultry', form: 'solid', capacity: 1000, capacity_unit: 'ton', current_amount: 780, access_points: 3, notes: 'Roofed stacking shed; litter from four broiler houses.', profile: { dm: 74, n: 60, nh4: 0.17, p: 58, k: 50, s: 12, ph: 8.2, cv: 0.17 }, bounds: { n: [32, 92], p: [32, 92], k: [29, 83] } },
  { farm: 'TMF', storage: 'TANK', name: 'Slurry tank', kind: 'tank', species: 'swine', form: 'liquid', shape: 'circular', diameter_ft: 120, depth_ft: 16, freeboard_ft: 1, fill: 0.78, access_points: 2, notes: 'Above-ground steel tank, open top; takes rain.', profile: { dm: 3.6, n: 38, nh4: 0.7, p: 22, k: 29, s: 3.0, ph: 7.6, cv: 0.14 }, bounds: { n: [33, 78], p: [18, 53], k: [24, 47] } },
  { farm: 'TMF', storage: 'PACK', name: 'Bedded pack barn', kind: 'other', species: 'beef', form: 'solid', capacity: 900, capacity_unit: 'ton', current_amount: 640, access_points: 3, notes: 'Straw-bedded pack, cleaned out spring and fall.', profile: { dm: 31, n: 14, nh4: 0.16, p: 9.5, k: 15, s: 2.8, ph: 8.0, cv: 0.22 } },
  { farm: 'WBD', storage: 'LAGOON', name: 'Lagoon', kind: 'lagoon', species: 'dairy', form: 'liquid', shape: 'basin', length_ft: 400, width_ft: 300, depth_ft: 16, side_slope: 2.5, freeboard_ft: 2, fill: 0.78, access_points: 3, notes: 'Irrigation intake (A), agitation ramp (B), south bank (C).', profile: { dm: 1.9, n: 13, nh4: 0.55, p: 5.2, k: 16, s: 1.1, ph: 7.8, cv: 0.13 } },
]
const amountOn = '2026-11-01'
for (const s of storages) {
  if (s.form === 'liquid') {
    const usableDepth = s.depth_ft - s.freeboard_ft
    s.capacity = round(volumeFt3(s, usableDepth) * galPerFt3, -2)
    s.capacity_unit = 'gal'
    // fill is a share of the usable depth; the amount follows from the measured depth
    s.current_depth_ft = round(usableDepth * s.fill, 1)
    s.current_amount = round(volumeFt3(s, s.current_depth_ft) * galPerFt3, -2)
  }
  s.current_amount_on = amountOn
}

// ── fields, rotations and soil tests ──────────────────────────────────────────────────────────
const fieldNames = ['Home 40', 'Creek bottom', 'Schoolhouse', 'Cemetery hill', 'North quarter', 'Pine row', 'Tamarack flats', 'Old orchard', 'Railroad', 'Gravel pit', 'Willow bend', 'Ridge', 'East 80', 'West 80', 'Spring run', 'Mill pond', 'Fox hollow']
const seasons = [2025, 2026, 2027]
const yieldGoal = { corn_grain: [175, 215, 0], corn_silage: [21, 26, 1], soybean: [52, 64, 0], wheat: [72, 90, 0], alfalfa: [4.2, 6, 1], grass_hay: [2.6, 4, 1] }
const previousOf = (crop) => {
  if (crop === 'corn_grain' || crop === 'corn_silage') return 'corn'
  if (crop === 'alfalfa') return 'alfalfa'
  return crop
}

// Each farm's fields: a rotation (crops of 2024–2027), the storage and method for the 2027 crop.
function farmFields(farm) {
  const list = []
  const add = (rotation, storage, method, extra = {}) => list.push({ rotation, storage, method, ...extra })
  switch (farm) {
    case 'QBF':
      for (let i = 0; i < 9; i++) {
        const a = i % 2 === 0
        // a: corn after soybean in 2027 (legume credit); b: corn on corn (credit from 2026 manure)
        add(a ? ['soybean', 'corn_grain', 'soybean', 'corn_grain'] : ['corn_grain', 'soybean', 'corn_grain', 'corn_grain'], i < 5 ? 'P1' : 'P2', i === 3 ? 'broadcast_incorporated' : 'injected', { hours: i === 3 ? 24 : null, capacity: 6000 })
      }
      break
    case 'FCD': {
      const cycle = ['alfalfa', 'alfalfa', 'alfalfa', 'corn_silage', 'corn_silage']
      for (let i = 0; i < 12; i++) {
        const rotation = [0, 1, 2, 3].map((y) => cycle[(i + y) % cycle.length])
        const c2027 = rotation[3]
        add(rotation, i === 0 ? 'RECV' : 'BASIN', c2027 === 'alfalfa' ? 'broadcast' : 'injected', { capacity: 7300 })
      }
      add(['grass_hay', 'grass_hay', 'grass_hay', 'grass_hay'], 'BASIN', 'broadcast', { capacity: 7300 })
      add(['grass_hay', 'grass_hay', 'grass_hay', 'grass_hay'], 'BASIN', 'broadcast', { capacity: 7300 })
      break
    }
    case 'RSF': {
      const cycle = ['corn_grain', 'soybean', 'wheat']
      for (let i = 0; i < 7; i++) {
        const rotation = [0, 1, 2, 3].map((y) => cycle[(i + y) % cycle.length])
        const c2027 = rotation[3]
        if (c2027 === 'soybean') add(rotation, null, null)
        else add(rotation, 'SLAB', c2027 === 'wheat' ? 'broadcast' : 'broadcast_incorporated', { hours: c2027 === 'wheat' ? null : 48, capacity: 14 })
      }
      add(['corn_silage', 'corn_silage', 'corn_silage', 'corn_silage'], 'SLAB', 'broadcast_incorporated', { hours: 48, capacity: 14 })
      break
    }
    case 'LKP': {
      const cycle = ['corn_grain', 'soybean', 'wheat']
      for (let i = 0; i < 6; i++) {
        const rotation = [0, 1, 2, 3].map((y) => cycle[(i + 2 * y) % cycle.length])
        const c2027 = rotation[3]
        if (c2027 === 'soybean') add(rotation, null, null)
        else add(rotation, 'SHED', 'broadcast_incorporated', { hours: 24, capacity: 9 })
      }
      break
    }
    case 'TMF':
      for (let i = 0; i < 7; i++) {
        const a = i % 2 === 1
        add(a ? ['soybean', 'corn_grain', 'soybean', 'corn_grain'] : ['corn_grain', 'soybean', 'corn_grain', 'corn_grain'], 'TANK', 'injected', { capacity: 4200 })
      }
      add(['corn_grain', 'soybean', 'corn_grain', 'wheat'], 'PACK', 'broadcast_incorporated', { hours: 72, capacity: 12 })
      add(['soybean', 'corn_grain', 'soybean', 'wheat'], 'PACK', 'broadcast_incorporated', { hours: 72, capacity: 12 })
      add(['grass_hay', 'grass_hay', 'grass_hay', 'grass_hay'], 'PACK', 'broadcast', { capacity: 12 })
      add(['grass_hay', 'grass_hay', 'grass_hay', 'grass_hay'], 'PACK', 'broadcast', { capacity: 12 })
      break
    case 'WBD': {
      const cycle = ['corn_silage', 'corn_silage', 'alfalfa', 'alfalfa', 'alfalfa']
      for (let i = 0; i < 9; i++) {
        const rotation = [0, 1, 2, 3].map((y) => cycle[(i + y) % cycle.length])
        const c2027 = rotation[3]
        add(rotation, 'LAGOON', c2027 === 'alfalfa' ? 'irrigated' : 'injected', { capacity: c2027 === 'alfalfa' ? null : 7300 })
      }
      for (let i = 0; i < 3; i++) add(['grass_hay', 'grass_hay', 'grass_hay', 'grass_hay'], 'LAGOON', 'irrigated', { capacity: null })
      break
    }
  }
  return list
}

function previousCrop(rotation, y) {
  // rotation[y] is the crop of 2024 + y; the previous crop of season 2024 + y is rotation[y - 1]
  const before = rotation[y - 1]
  if (before === 'alfalfa' && rotation[y] !== 'alfalfa') return 'alfalfa'
  if (y >= 2 && rotation[y - 2] === 'alfalfa' && before !== 'alfalfa' && rotation[y] !== 'alfalfa') return 'alfalfa_second_year'
  return previousOf(before)
}

const soilP = { QBF: [18, 70], FCD: [22, 125], RSF: [14, 55], LKP: [30, 95], TMF: [12, 60], WBD: [25, 110] }

// Manure covers only part of a farm: fields draw from a storage (in field order) while the rough
// per-acre rate below times their acres stays within 92 % of what is in storage; the others get
// commercial fertilizer only (no storage in the fields file). Rates per acre are rough figures
// for balancing the invented scenario (gal or ton per acre), not agronomic advice.
const roughRate = { P1: 5000, P2: 6500, BASIN: 5000, SLAB: 23, SHED: 10, TANK: 6300, PACK: 20, LAGOON: 7000 }
const roughRateHay = { BASIN: 12000, LAGOON: 9000 }
const noManureIn2027 = new Set(['soybean', 'alfalfa'])
// per-field overrides, on the first field of a farm that draws manure and fits `when`
const overrideRules = {
  QBF: { when: (f, n) => n === 1, values: { max_rate: 5000 }, notes: 'Sandy knoll; well 200 ft from the north edge (setback marked).' },
  FCD: { when: (f) => f.rotation[3] === 'corn_silage', values: { basis: 'p2o5' }, notes: 'Drains to Ferncastle Creek: keep to a P-based rate.' },
  WBD: { when: (f) => f.rotation[3] === 'corn_silage', values: { n_need: 90 }, notes: 'N need set by the advisor after a stalk nitrate test.' },
  LKP: { when: () => true, values: { ammonium_retention: 0.9 }, notes: 'Litter worked in the same day.' },
}

const fieldRows = []
const fieldsByFarm = {}
for (const f of farms) {
  const defs = farmFields(f.farm)
  const names = [...fieldNames]
  for (let i = names.length - 1; i > 0; i--) {
    const j = Math.floor(random() * (i + 1))
    ;[names[i], names[j]] = [names[j], names[i]]
  }
  const used = new Map()
  const fields = defs.map((d, i) => {
    const [pl, ph] = soilP[f.farm]
    // the reception pit is normally transferred to the basin: fields draw from the basin
    const source = d.storage === 'RECV' ? 'BASIN' : d.storage
    const field = {
      farm: f.farm,
      code: `F${String(i + 1).padStart(2, '0')}`,
      name: names[i % names.length],
      acres: round(between(14, 118), 1),
      rotation: d.rotation,
      source,
      storage: null,
      method: d.method,
      hours: d.hours ?? null,
      capacity: d.capacity ?? null,
      overrides: {},
      notes: '',
      soil: {
        soil_test_p_ppm: Math.round(between(pl, ph)),
        soil_test_p_method: 'mehlich3',
        soil_test_k_ppm: Math.round(between(105, 240)),
        soil_test_date: `2025-10-${String(2 + Math.floor(random() * 20)).padStart(2, '0')}`,
        soil_test_om_pct: round(between(2.2, 4.6), 1),
        soil_test_ph: round(between(6.0, 7.3), 1),
      },
    }
    if (source && !noManureIn2027.has(d.rotation[3])) {
      const s = storages.find((x) => x.farm === f.farm && x.storage === source)
      const perAcre = d.rotation[3] === 'grass_hay' ? (roughRateHay[source] ?? roughRate[source]) : roughRate[source]
      const need = perAcre * field.acres
      if ((used.get(source) ?? 0) + need <= 0.92 * s.current_amount) {
        used.set(source, (used.get(source) ?? 0) + need)
        field.storage = source
      }
    }
    return field
  })
  const rule = overrideRules[f.farm]
  if (rule) {
    const manured = fields.filter((x) => x.storage)
    const target = manured.find((x, n) => rule.when(x, n))
    if (target) {
      target.overrides = rule.values
      target.notes = rule.notes
    }
  }
  fieldsByFarm[f.farm] = fields
  fields.forEach((field, i) => {
    const o = field.overrides
    seasons.forEach((season) => {
      const y = season - 2024
      const crop = field.rotation[y]
      const [lo, hi, digits] = yieldGoal[crop]
      fieldRows.push({
        farm: f.farm,
        field: field.code,
        acres: field.acres,
        season,
        crop,
        yield_goal: round(lo + ((hi - lo) * ((i * 7 + 3) % 10)) / 10, digits),
        previous_crop: previousCrop(field.rotation, y),
        ...field.soil,
        storage: field.storage ?? '',
        method: field.storage ? field.method : '',
        incorporated_within_hours: field.storage ? (field.hours ?? '') : '',
        basis: o.basis ?? '',
        n_need: o.n_need ?? '',
        p2o5_need: '',
        k2o_need: '',
        ammonium_retention: o.ammonium_retention ?? '',
        organic_n_release: '',
        n_availability: '',
        p2o5_availability: '',
        k2o_availability: '',
        max_rate: o.max_rate ?? '',
        applicator_capacity: field.storage ? (field.capacity ?? '') : '',
        name: field.name,
        notes: field.notes,
      })
    })
  })
}

// ── sampling events and lab reports, spring and fall 2024–2026 ────────────────────────────────
const rounds = []
for (const year of [2024, 2025, 2026]) rounds.push({ year, month: 4, label: 'spring' }, { year, month: 10, label: 'fall' })
function visitDate(year, month, day) {
  const d = new Date(Date.UTC(year, month - 1, day + Math.floor(between(-2, 3))))
  while (d.getUTCDay() === 0 || d.getUTCDay() === 6) d.setUTCDate(d.getUTCDate() + 1)
  return d.toISOString().slice(0, 10)
}
const labels = (n) => Array.from({ length: n }, (_, i) => String.fromCharCode(65 + i))

const samplesByYear = { 2024: [], 2025: [], 2026: [] }
const reports = []
const reportCounter = { 2024: 117, 2025: 104, 2026: 96 }
const storageDrift = new Map(storages.map((s) => [`${s.farm}/${s.storage}`, 1]))
for (const r of rounds) {
  for (const f of farms) {
    const date = visitDate(r.year, r.month, f.visitDay)
    reportCounter[r.year] += 3 + Math.floor(random() * 9) // the lab has other clients
    const report = { report_id: `CRA-${String(r.year).slice(2)}-${String(reportCounter[r.year]).padStart(4, '0')}`, farm: f.farm, date, year: r.year, label: r.label, rows: [] }
    for (const s of storages.filter((x) => x.farm === f.farm)) {
      const key = `${s.farm}/${s.storage}`
      // slow drift of the storage's manure from round to round, plus a seasonal step
      const drift = clamp(storageDrift.get(key) * normal(1, 0.03), 0.9, 1.1)
      storageDrift.set(key, drift)
      const roundFactor = drift * (r.label === 'spring' ? 1.02 : 0.98)
      const agitated = s.form === 'liquid' ? r.label === 'fall' : null
      const cv = s.profile.cv * (agitated === false ? 1.35 : 1)
      for (const point of labels(s.access_points)) {
        const sampleId = `${f.farm}-${s.storage}-${date.replaceAll('-', '')}-${point}`
        const k = clamp(normal(1, cv), 0.72, 1.32) * roundFactor // one draw for the sample's overall strength
        const jitter = () => normal(1, 0.05)
        const p = s.profile
        const b = s.bounds ?? {}
        const liquid = s.form === 'liquid'
        const dm = round(p.dm * Math.max(0.5, k * jitter()), liquid ? 2 : 1)
        const totalN = round(clamp(p.n * k * jitter(), ...(b.n ?? [0, Infinity])), 1)
        const nh4 = round(Math.min(totalN * 0.92, totalN * p.nh4 * normal(1, 0.06)), 1)
        const p2o5 = round(clamp(p.p * k * normal(1, 0.08), ...(b.p ?? [0, Infinity])), 1)
        const k2o = round(clamp(p.k * k ** 0.7 * normal(1, 0.06), ...(b.k ?? [0, Infinity])), 1)
        report.rows.push({
          report_id: report.report_id,
          sample_id: sampleId,
          sampled_on: date,
          farm: f.farm,
          storage: s.storage,
          form: s.form,
          species: s.species,
          dry_matter_pct: dm,
          total_n: totalN,
          ammonium_n: nh4,
          p2o5,
          k2o,
          sulfur: round(p.s * k * jitter(), 1),
          ph: round(normal(p.ph, 0.12), 1),
          notes: '',
        })
        samplesByYear[r.year].push({
          farm: f.farm,
          storage: s.storage,
          sample_id: sampleId,
          sampled_on: date,
          agitated: agitated === null ? '' : agitated ? 'yes' : 'no',
          sampler_kind: liquid ? (agitated ? 'bucket_at_pump' : 'tube_core') : 'fork_grab',
          cores: liquid ? (agitated ? 15 + Math.floor(random() * 9) : 10 + Math.floor(random() * 7)) : 15 + Math.floor(random() * 11),
          access_points: point,
          sampled_by: advisors[f.advisor],
          notes: liquid ? (agitated ? 'Agitated 2 h before pump-out; subsamples over the first loads.' : 'Full-depth cores; bottom sludge left out.') : 'Subsamples from the face and inside the pile.',
        })
      }
    }
    reports.push(report)
  }
}
// a dilute lagoon sample whose sulfur fell below the lab's reporting limit
const lagoonReport = reports.find((r) => r.farm === 'WBD' && r.year === 2024 && r.label === 'fall')
lagoonReport.rows[0].sulfur = '<0.1'
lagoonReport.rows[0].notes = 'Sulfur below the reporting limit.'
reports.find((r) => r.farm === 'RSF' && r.year === 2025 && r.label === 'spring').rows[1].notes = 'Sample arrived warm; analysed on receipt.'

// ── lab files: several layouts, as labs and spreadsheets write them ───────────────────────────
const lab = 'Cobble Run Analytical'
const canonical = ['report_id', 'sample_id', 'sampled_on', 'farm', 'storage', 'form', 'species', 'basis', 'units', 'dry_matter_pct', 'total_n', 'ammonium_n', 'p2o5', 'k2o', 'lab', 'sulfur', 'ph', 'notes']
const titleCase = {
  report_id: 'Report ID', sample_id: 'Sample ID', sampled_on: 'Sampled on', farm: 'Farm', storage: 'Storage', form: 'Form', species: 'Species', basis: 'Basis', units: 'Units',
  dry_matter_pct: 'Dry matter %', total_n: 'Total N', ammonium_n: 'Ammonium N', p2o5: 'P2O5', k2o: 'K2O', lab: 'Lab', sulfur: 'Sulfur', ph: 'pH', notes: 'Notes',
}
rmSync(labsDir, { recursive: true, force: true })
const labFiles = []
for (const r of reports) {
  // spreadsheet flavour: 2025 reports of TMF and WBD were re-saved from a spreadsheet with a
  // European locale (semicolons, decimal commas, BOM, CRLF, trailing empty rows)
  const spreadsheet = r.year === 2025 && (r.farm === 'TMF' || r.farm === 'WBD')
  // older layout without the optional columns, US dates
  const short = r.year === 2024 && (r.farm === 'RSF' || r.farm === 'LKP')
  const rows = r.rows.map((row) => ({
    ...row,
    sampled_on: short ? `${Number(row.sampled_on.slice(5, 7))}/${Number(row.sampled_on.slice(8, 10))}/${row.sampled_on.slice(0, 4)}` : row.sampled_on,
    basis: spreadsheet ? 'as is' : 'as_is',
    units: row.form === 'liquid' ? (r.year === 2024 ? 'lb/1000 gal' : 'lb_per_1000gal') : r.year === 2024 ? 'lb/ton' : 'lb_per_ton',
    lab,
  }))
  let text
  if (spreadsheet) {
    const header = canonical.map((c) => titleCase[c])
    const named = rows.map((row) => Object.fromEntries(canonical.map((c) => [titleCase[c], row[c]])))
    text = csv(header, named, { delimiter: ';', decimalComma: true, bom: true, crlf: true, trailingEmpty: 2 })
  } else if (short) {
    text = csv(canonical.filter((c) => !['lab', 'sulfur', 'ph', 'notes'].includes(c)), rows)
  } else {
    text = csv(canonical, rows)
  }
  const file = `${r.report_id}.csv`
  write(join(labsDir, file), text)
  labFiles.push(file)
}

// ── application records: what was spread in 2025 and in the first half of 2026 ───────────────
// Per-acre amounts are typical for each kind of manure and method (common practice).
const ratePerAcre = { P1: 4500, P2: 4500, BASIN: 8000, RECV: 6000, SLAB: 16, SHED: 2.5, TANK: 5500, PACK: 12, LAGOON: 13500 }
const applicatorOf = { QBF: 'Tamarack Custom Pumping', FCD: 'farm crew', RSF: 'farm crew', LKP: 'Tamarack Custom Pumping', TMF: 'farm crew', WBD: 'farm crew' }
function applicationDate(year, months, offset) {
  const [m0, m1] = months
  const month = m0 + Math.floor(random() * (m1 - m0 + 1))
  return `${year}-${String(month).padStart(2, '0')}-${String(1 + ((offset * 5 + Math.floor(random() * 20)) % 27)).padStart(2, '0')}`
}
const applications = { 2025: [], 2026: [] }
for (const f of farms) {
  fieldsByFarm[f.farm].forEach((field, i) => {
    for (const season of [2025, 2026]) {
      const crop = field.rotation[season - 2024]
      const storage = field.source ?? (f.farm === 'RSF' ? 'SLAB' : f.farm === 'LKP' ? 'SHED' : null)
      if (!storage || crop === 'soybean') continue
      const s = storages.find((x) => x.farm === f.farm && x.storage === storage)
      const liquid = s.form === 'liquid'
      let date
      let method
      let hours = null
      if (crop === 'alfalfa' || crop === 'grass_hay') {
        date = applicationDate(season, [5, 6], i) // after first cutting
        method = liquid ? (storage === 'LAGOON' ? 'irrigated' : 'broadcast') : 'broadcast'
      } else if (crop === 'wheat') {
        if (season === 2025) continue // seeded fall 2024: before the records kept here
        date = applicationDate(2025, [9, 9], i) // before seeding the 2026 wheat
        method = liquid ? 'broadcast' : 'broadcast_incorporated'
        hours = liquid ? null : 72
      } else {
        // corn: fall before (from October 2025) for 2026, spring for 2025 and part of 2026
        const fall = season === 2026 && i % 3 === 0
        date = fall ? applicationDate(2025, [10, 11], i) : applicationDate(season, [4, 5], i)
        method = liquid ? 'injected' : 'broadcast_incorporated'
        hours = liquid ? null : storage === 'SHED' ? 24 : 48
      }
      const amount = ratePerAcre[storage] * field.acres * normal(1, 0.08)
      const total = liquid ? round(amount, -2) : round(amount, 1)
      const capacity = field.capacity ?? (liquid ? 6000 : 12)
      const yearOf = Number(date.slice(0, 4))
      applications[yearOf].push({
        farm: f.farm,
        field: field.code,
        applied_on: date,
        storage,
        amount: total,
        amount_unit: liquid ? 'gal' : 'ton',
        method,
        incorporated_within_hours: hours ?? '',
        loads: method === 'irrigated' ? '' : Math.ceil(total / capacity),
        applicator: applicatorOf[f.farm],
        notes: method === 'irrigated' ? 'Travelling gun, about 0.5 in per pass.' : '',
      })
    }
  })
}
for (const y of [2025, 2026]) applications[y].sort((a, b) => a.applied_on.localeCompare(b.applied_on) || a.farm.localeCompare(b.farm) || a.field.localeCompare(b.field))

// ── write ──────────────────────────────────────────────────────────────────────────────────────
const farmHeader = ['farm', 'name', 'operator_name', 'contact_email', 'contact_phone', 'address', 'region', 'notes']
const storageHeader = ['farm', 'storage', 'kind', 'species', 'form', 'name', 'shape', 'length_ft', 'width_ft', 'diameter_ft', 'depth_ft', 'side_slope', 'freeboard_ft', 'capacity', 'capacity_unit', 'current_amount', 'current_amount_on', 'current_depth_ft', 'access_points', 'notes']
const fieldHeader = ['farm', 'field', 'acres', 'season', 'crop', 'yield_goal', 'previous_crop', 'soil_test_p_ppm', 'soil_test_p_method', 'soil_test_k_ppm', 'storage', 'method', 'incorporated_within_hours', 'basis', 'n_need', 'p2o5_need', 'k2o_need', 'ammonium_retention', 'organic_n_release', 'n_availability', 'p2o5_availability', 'k2o_availability', 'max_rate', 'applicator_capacity', 'soil_test_date', 'soil_test_om_pct', 'soil_test_ph', 'name', 'notes']
const sampleHeader = ['farm', 'storage', 'sample_id', 'sampled_on', 'agitated', 'sampler_kind', 'cores', 'access_points', 'sampled_by', 'notes']
const applicationHeader = ['farm', 'field', 'applied_on', 'storage', 'amount', 'amount_unit', 'method', 'incorporated_within_hours', 'loads', 'applicator', 'notes']

write(join(demoDir, 'farms.csv'), csv(farmHeader, farms))
write(join(demoDir, 'storages.csv'), csv(storageHeader, storages))
write(join(demoDir, 'fields.csv'), csv(fieldHeader, fieldRows))
for (const y of [2024, 2025, 2026]) write(join(demoDir, `samples-${y}.csv`), csv(sampleHeader, samplesByYear[y]))
for (const y of [2025, 2026]) write(join(demoDir, `applications-${y}.csv`), csv(applicationHeader, applications[y]))

// the documented example of each format: one farm of the demo, all columns
const qbf = (rows) => rows.filter((r) => r.farm === 'QBF')
write(join(root, 'examples', 'farms.csv'), csv(farmHeader, qbf(farms)))
write(join(root, 'examples', 'storages.csv'), csv(storageHeader, qbf(storages)))
write(join(root, 'examples', 'fields.csv'), csv(fieldHeader, qbf(fieldRows).filter((r) => r.season === 2027)))
write(join(root, 'examples', 'samples.csv'), csv(sampleHeader, qbf(samplesByYear[2026])))
write(join(root, 'examples', 'applications.csv'), csv(applicationHeader, qbf(applications[2026])))

const count = (o) => Object.values(o).reduce((n, l) => n + l.length, 0)
process.stderr.write(
  `wrote examples/demo: ${farms.length} farms, ${storages.length} storages, ${Object.values(fieldsByFarm).flat().length} fields (${fieldRows.length} field-season rows), ` +
    `${count(samplesByYear)} samples, ${labFiles.length} lab files (${reports.reduce((n, r) => n + r.rows.length, 0)} results), ${count(applications)} applications\n`,
)
