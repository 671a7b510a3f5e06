// Display helpers: numbers, units and plain names for the codes stored in plans.

const formatters = new Map<number, Intl.NumberFormat>()
function formatter(digits: number) {
  let f = formatters.get(digits)
  if (!f) {
    f = new Intl.NumberFormat('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits })
    formatters.set(digits, f)
  }
  return f
}

export function num(value: unknown): number | null {
  return typeof value === 'number' && Number.isFinite(value) ? value : null
}

/** Adds one unit in the last place of a string of decimal digits ("0999" → "1000"). */
function incremented(digits: string): string {
  let i = digits.length - 1
  while (i >= 0 && digits[i] === '9') i--
  if (i < 0) return '1' + '0'.repeat(digits.length)
  return digits.slice(0, i) + String(Number(digits[i]) + 1) + '0'.repeat(digits.length - i - 1)
}

/**
 * A figure with grouping and fixed decimals, exactly as Intl.NumberFormat('en-US') writes it: the
 * shortest decimal that reads back as the number, rounded half away from zero (1,234.5; 1.005 →
 * 1.01; -0 for a negative that rounds to zero); a dash when missing. A plan page writes some 3,000
 * figures, and Intl's first use and each call cost more than doing this on the digits.
 */
export function fmt(value: unknown, digits = 0): string {
  const n = num(value)
  if (n === null) return '—'
  const abs = Math.abs(n)
  if (abs >= 1e21 || (abs < 1e-6 && abs !== 0) || !Number.isInteger(digits) || digits < 0 || digits > 20) return formatter(digits).format(n)
  const text = String(abs)
  const dot = text.indexOf('.')
  const whole = dot < 0 ? text : text.slice(0, dot)
  const fraction = dot < 0 ? '' : text.slice(dot + 1)
  let kept = whole + fraction.slice(0, digits).padEnd(digits, '0')
  if (fraction.length > digits && fraction.charCodeAt(digits) >= 53) kept = incremented(kept)
  const intLength = kept.length - digits
  let grouped = kept.slice(0, intLength % 3 || 3)
  for (let k = intLength % 3 || 3; k < intLength; k += 3) grouped += ',' + kept.slice(k, k + 3)
  return (n < 0 || Object.is(n, -0) ? '-' : '') + grouped + (digits > 0 ? '.' + kept.slice(intLength) : '')
}

/** Decimals that suit a rate unit: whole gallons, tenths of tons. */
export function rateDigits(unit: string | null | undefined): number {
  return unit && /ton|t\/ha/.test(unit) ? 1 : 0
}

export function amountDigits(unit: string | null | undefined): number {
  return unit && /ton|^t$/.test(unit) ? 0 : 0
}

/** The unit of a whole amount (gallons or tons) from a rate unit such as gal/ac. */
export function amountUnit(rateUnit: string | null | undefined, fallback = ''): string {
  if (!rateUnit) return fallback
  return rateUnit.split('/')[0] ?? fallback
}

const names: Record<string, string> = {
  corn_grain: 'Corn, grain',
  corn_silage: 'Corn, silage',
  soybean: 'Soybean',
  wheat: 'Wheat',
  alfalfa: 'Alfalfa',
  grass_hay: 'Grass hay',
  injected: 'Injected',
  broadcast: 'Broadcast',
  broadcast_incorporated: 'Broadcast, incorporated',
  irrigated: 'Irrigated',
  deep_pit: 'Deep pit',
  earthen_basin: 'Earthen basin',
  lagoon: 'Lagoon',
  tank: 'Tank',
  stack: 'Stack',
  other: 'Other',
  n: 'N',
  p2o5: 'P₂O₅',
  k2o: 'K₂O',
  lowest: 'lowest rate',
  max_rate: 'rate cap',
  fixed_rate: 'fixed rate',
  n_model: 'N model',
  n_first_year_fraction: 'N available this season (share of total N)',
  ammonium_retention: 'Ammonium-N kept',
  organic_n_release: 'Organic N released this season',
  n_year2: 'N released in year 2',
  n_year3: 'N released in year 3',
  residual_base: 'Residual N counted from',
  p2o5_availability: 'P₂O₅ available',
  k2o_availability: 'K₂O available',
  overridden: 'Set by the advisor',
  n_need: 'N need',
  gross: 'gross',
  legume_credit: 'legume credit',
  manure_credit: 'manure credit',
  other_credit: 'other credit',
  soil_test_p_class: 'Soil-test P class',
  soil_test_k_class: 'Soil-test K class',
  total_n: 'total N',
  organic_n: 'organic N',
}

/** A plain name for a stored code (crop, method, storage kind, nutrient); the code itself when unknown. */
export function label(code: string | null | undefined): string {
  if (!code) return '—'
  return names[code] ?? code.replace(/_/g, ' ')
}

export const nutrients = ['n', 'p2o5', 'k2o'] as const
export type Nutrient = (typeof nutrients)[number]

export const nutrientColours: Record<Nutrient, string> = {
  n: 'var(--color-nitrogen)',
  p2o5: 'var(--color-phosphate)',
  k2o: 'var(--color-potash)',
}

export function date(iso: string | null | undefined): string {
  if (!iso) return '—'
  return iso.slice(0, 10)
}

export function dateTime(iso: string | null | undefined): string {
  if (!iso) return '—'
  const d = new Date(iso.includes('T') ? iso : iso.replace(' ', 'T') + 'Z')
  if (Number.isNaN(d.getTime())) return iso
  return `${d.toISOString().slice(0, 10)} ${d.toISOString().slice(11, 16)} UTC`
}

/** Warnings in stored plans may be strings or `{ code, message }` objects. */
export function warningText(w: unknown): string {
  if (typeof w === 'string') return w
  if (w && typeof w === 'object' && 'message' in w) return String((w as { message: unknown }).message)
  return JSON.stringify(w)
}

/** Loads for a whole field: a number in older plans, `{ capacity, per_area, field }` in the engine's result. */
export function loadsOf(loads: unknown): number | null {
  if (typeof loads === 'number') return loads
  if (loads && typeof loads === 'object') return num((loads as { field?: unknown }).field)
  return null
}
